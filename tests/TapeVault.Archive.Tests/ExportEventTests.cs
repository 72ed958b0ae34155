using System.Globalization;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Events;
using TapeVault.Archive.Export;
using Xunit;

namespace TapeVault.Archive.Tests;

public sealed class ExportEventTests
{
    [Fact]
    public async Task BagWhoseExportRowIsNeverCommittedLeavesNoExportEventAndNoStoredFile()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        int eventsBefore;
        await using (var db = archive.NewContext())
        {
            eventsBefore = await db.Events.CountAsync();
        }

        var objectsBefore = archive.Store.EnumerateHashes().Order(StringComparer.Ordinal).ToList();

        // The step that records the finished bag fails, as a crash at that moment would leave it.
        bool postgreSql = archive.Options.Provider == DatabaseProvider.PostgreSql;
        TamperTests.Tamper(archive, postgreSql
            ? """
              CREATE FUNCTION "Test_CutOff"() RETURNS trigger LANGUAGE plpgsql AS $$ BEGIN RAISE EXCEPTION 'cut off'; END $$;
              CREATE TRIGGER "Test_NoExport" BEFORE INSERT ON "Exports" FOR EACH ROW EXECUTE FUNCTION "Test_CutOff"();
              """
            : "CREATE TRIGGER \"Test_NoExport\" BEFORE INSERT ON \"Exports\" BEGIN SELECT RAISE(ABORT, 'cut off'); END;");
        using (var scope = archive.Services.CreateScope())
        {
            await Assert.ThrowsAsync<DbUpdateException>(() => scope.ServiceProvider.GetRequiredService<ExportStore>().StoreBagAsync(BagScope.Item(archive.ItemId), "tester"));
        }

        await using (var db = archive.NewContext())
        {
            Assert.Equal(0, await db.Events.CountAsync(e => e.EventType == EventTypes.Export));
            Assert.Equal(eventsBefore, await db.Events.CountAsync());
            Assert.Equal(0, await db.Exports.CountAsync());
        }

        Assert.Equal(objectsBefore, archive.Store.EnumerateHashes().Order(StringComparer.Ordinal).ToList());

        // Once recording works again, the bag and its events are committed together.
        TamperTests.Tamper(archive, postgreSql ? "DROP TRIGGER \"Test_NoExport\" ON \"Exports\";" : "DROP TRIGGER \"Test_NoExport\";");
        using (var scope = archive.Services.CreateScope())
        {
            var record = await scope.ServiceProvider.GetRequiredService<ExportStore>().StoreBagAsync(BagScope.Item(archive.ItemId), "tester");
            await using var db = archive.NewContext();
            var exported = await db.Events.SingleAsync(e => e.EventType == EventTypes.Export);
            Assert.Contains($"'{Path.GetFileNameWithoutExtension(record.FileName)}'", exported.Detail, StringComparison.Ordinal);
            Assert.True((await EventChain.VerifyAsync(db)).Intact);
        }
    }

    [Fact]
    public async Task CliBagIsRecordedUnderItsFinalNameOnlyOnceItIsInPlace()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var target = Path.Combine(archive.Root, "kept-bag");
        int exit = TapeVault.Cli.Entry.Run(["export", "bag", "--item", ArchiveFixture.Accession, "--out", target, .. archive.CliArchiveArguments()], new StringWriter(), new StringWriter());
        Assert.Equal(0, exit);
        Assert.True(File.Exists(Path.Combine(target, "bag-info.txt")));
        await using var db = archive.NewContext();
        var exported = await db.Events.SingleAsync(e => e.EventType == EventTypes.Export);
        Assert.Contains("'kept-bag'", exported.Detail, StringComparison.Ordinal);
        Assert.DoesNotContain(".part", exported.Detail, StringComparison.Ordinal);
        Assert.DoesNotContain(archive.Root, exported.Detail, StringComparison.Ordinal);
        Assert.Equal(archive.ItemId.ToString(CultureInfo.InvariantCulture), exported.ObjectId);
    }
}
