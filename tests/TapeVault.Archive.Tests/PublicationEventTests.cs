using System.Globalization;
using System.IO.Compression;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Events;
using TapeVault.Archive.Export;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// A catalogue publication is one event on its collection, however many tapes it has, and the event names the SHA-256
/// of the published SHA256SUMS, so the chain proves what the publication held and an edit of that hash breaks it.
/// </summary>
public sealed class PublicationEventTests
{
    [Fact]
    public async Task APublicationOfThreeTapesIsOneEventNamingItsChecksumFile_AndAnEditOfThatNameBreaksTheChain()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        using (var scope = archive.Services.CreateScope())
        {
            var curator = scope.ServiceProvider.GetRequiredService<CuratorActions>();
            await curator.CreateItemAsync(archive.CollectionId, "TEST-0002", "Second tape", null, null, null, "tester");
            await curator.CreateItemAsync(archive.CollectionId, "TEST-0003", "Third tape", null, null, null, "tester");
        }

        // Published by the command line into a folder, then by the archive into a kept zip (the publish job's path).
        long before = await LastEventAsync(archive);
        var site = Path.Combine(archive.Root, "site");
        Assert.Equal(0, TapeVault.Cli.Entry.Run(["publish", archive.CollectionId.ToString(CultureInfo.InvariantCulture), site, .. archive.CliArchiveArguments()], new StringWriter(), new StringWriter()));
        var byCommand = await EventsAfterAsync(archive, before);

        before = await LastEventAsync(archive);
        TapeVault.Archive.Entities.ExportRecord zip;
        using (var scope = archive.Services.CreateScope())
        {
            zip = await scope.ServiceProvider.GetRequiredService<ExportStore>().StoreCatalogueAsync(archive.CollectionId, "tester");
        }

        var byArchive = await EventsAfterAsync(archive, before);
        var unzipped = Path.Combine(archive.Root, "unzipped");
        using (var stream = archive.Store.OpenRead(zip.Sha256))
        {
            ZipFile.ExtractToDirectory(stream, unzipped);
        }

        foreach (var (events, folder) in new[] { (byCommand, site), (byArchive, Path.Combine(unzipped, "catalogue")) })
        {
            // One event, on the collection, for all three tapes; the hash it names is the one GNU sha256sum gives the
            // published SHA256SUMS, whose own lines GNU sha256sum -c checks against every other file.
            var published = Assert.Single(events);
            Assert.Equal(EventTypes.Export, published.EventType);
            Assert.Equal(("collection", archive.CollectionId.ToString(CultureInfo.InvariantCulture), (int?)null), (published.ObjectType, published.ObjectId, published.ItemId));
            Assert.Contains($"SHA256SUMS has SHA-256 {ArchiveFixture.Sha256Sum(Path.Combine(folder, "SHA256SUMS"))}.", published.Detail, StringComparison.Ordinal);
            Assert.Equal(0, ArchiveFixture.Sha256SumCheck(folder, "SHA256SUMS").ExitCode);
        }

        Assert.Equal(0, TamperTests.Verify(archive).Exit);

        // The named hash rewritten (as if another catalogue had been published) behind the log's triggers: the audit
        // finds the chain broken at that very event.
        long edited = byArchive[0].Id;
        TamperTests.TamperBehindTriggers(archive, $"UPDATE \"Events\" SET \"Detail\" = REPLACE(\"Detail\", 'SHA-256 ', 'SHA-256 0') WHERE \"Id\" = {edited};");
        var (exit, output, _) = TamperTests.Verify(archive);
        Assert.Equal(1, exit);
        Assert.Contains($"Event chain BROKEN at event {edited}:", output, StringComparison.Ordinal);
    }

    private static async Task<long> LastEventAsync(ArchiveFixture archive)
    {
        await using var db = archive.NewContext();
        return await db.Events.MaxAsync(e => e.Id);
    }

    private static async Task<List<TapeVault.Archive.Entities.ArchiveEvent>> EventsAfterAsync(ArchiveFixture archive, long id)
    {
        await using var db = archive.NewContext();
        return await db.Events.AsNoTracking().Where(e => e.Id > id).OrderBy(e => e.Id).ToListAsync();
    }
}
