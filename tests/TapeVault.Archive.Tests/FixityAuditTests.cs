using System.Security.Cryptography;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Export;
using TapeVault.Archive.Fixity;
using TapeVault.Cli;
using Xunit;

namespace TapeVault.Archive.Tests;

public sealed class FixityAuditTests
{
    [Fact]
    public async Task UntouchedStoreAuditsCleanAndRecordsOneEventPerObject()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        FixityReport report;
        using (var scope = archive.Services.CreateScope())
        {
            report = await scope.ServiceProvider.GetRequiredService<FixityAudit>().RunAsync(null, "tester");
        }

        await using var db = archive.NewContext();
        int objects = await db.Objects.CountAsync();
        Assert.True(report.AllGood);
        Assert.Equal(objects, report.Checked);
        Assert.Equal(objects, await db.Events.CountAsync(e => e.EventType == EventTypes.FixityCheck && e.ObjectType == "object" && e.Outcome == FixityAudit.Ok));
    }

    [Fact]
    public async Task TamperedOriginalDeletedImageAndTruncatedExportAreReportedExactlyAndLeftAsFound()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        int exportId;
        using (var scope = archive.Services.CreateScope())
        {
            exportId = (await scope.ServiceProvider.GetRequiredService<ExportStore>().StoreBagAsync(BagScope.Item(archive.ItemId), "tester")).Id;
        }

        string original, image, export;
        await using (var db = archive.NewContext())
        {
            original = (await db.Captures.OrderBy(c => c.Id).FirstAsync()).Sha256;
            image = (await db.Images.FirstAsync()).Sha256;
            export = (await db.Exports.FirstAsync(e => e.Id == exportId)).Sha256;
        }

        // Damage as it happens on disks: one flipped byte, a lost file, a cut-off copy.
        var originalPath = archive.Store.PathOf(original);
        MakeWritable(originalPath);
        var bytes = File.ReadAllBytes(originalPath);
        bytes[bytes.Length / 2] ^= 0x01;
        File.WriteAllBytes(originalPath, bytes);
        File.Delete(archive.Store.PathOf(image));
        var exportPath = archive.Store.PathOf(export);
        MakeWritable(exportPath);
        using (var stream = new FileStream(exportPath, FileMode.Open))
        {
            stream.SetLength(stream.Length / 2);
        }

        var before = Snapshot(archive);
        await using var rowsBefore = archive.NewContext();
        var objectsBefore = await rowsBefore.Objects.AsNoTracking().OrderBy(o => o.Sha256).Select(o => $"{o.Sha256}:{o.Size}").ToListAsync();

        FixityReport report;
        using (var scope = archive.Services.CreateScope())
        {
            report = await scope.ServiceProvider.GetRequiredService<FixityAudit>().RunAsync(null, "tester");
        }

        Assert.Equal(
            new[] { (original, FixityAudit.Mismatch, "original"), (image, FixityAudit.Missing, "image"), (export, FixityAudit.Mismatch, "bag") }.OrderBy(x => x.Item1),
            report.Problems.Select(p => (p.Sha256, p.Problem, p.Kind)).OrderBy(x => x.Sha256));
        Assert.All(report.Problems, p => Assert.Equal(ArchiveFixture.Accession, p.Item));
        Assert.All(report.Problems, p => Assert.Equal("Test shelf", p.Collection));

        // Nothing repaired, restored or removed: the files and rows are as the damage left them.
        Assert.Equal(before, Snapshot(archive));
        await using var rowsAfter = archive.NewContext();
        Assert.Equal(objectsBefore, await rowsAfter.Objects.AsNoTracking().OrderBy(o => o.Sha256).Select(o => $"{o.Sha256}:{o.Size}").ToListAsync());

        // The CLI reports the same three and exits 1.
        var output = new StringWriter();
        var error = new StringWriter();
        int exit = Entry.Run(["verify", .. archive.CliArchiveArguments()], output, error);
        Assert.Equal(1, exit);
        var lines = output.ToString().Split('\n').Where(l => l.StartsWith("MISMATCH", StringComparison.Ordinal) || l.StartsWith("MISSING", StringComparison.Ordinal)).ToList();
        Assert.Equal(3, lines.Count);
        Assert.Contains(lines, l => l.StartsWith("MISSING", StringComparison.Ordinal) && l.Contains("tape image version 1", StringComparison.Ordinal));
        Assert.Contains("3 problem(s)", error.ToString(), StringComparison.Ordinal);
        Assert.Equal(before, Snapshot(archive));
    }

    [Fact]
    public async Task CliVerifyOfAnUntouchedArchiveExitsZero()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var output = new StringWriter();
        int exit = Entry.Run(["verify", "--collection", archive.CollectionId.ToString(System.Globalization.CultureInfo.InvariantCulture), .. archive.CliArchiveArguments()], output, new StringWriter());
        Assert.Equal(0, exit);
        Assert.Contains("match their recorded SHA-256", output.ToString(), StringComparison.Ordinal);
    }

    private static void MakeWritable(string path)
    {
        File.SetAttributes(path, FileAttributes.Normal);
        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(path, UnixFileMode.UserRead | UnixFileMode.UserWrite);
        }
    }

    private static Dictionary<string, string> Snapshot(ArchiveFixture archive) =>
        Directory.EnumerateFiles(Path.Combine(archive.Options.FullStorePath, "objects"), "*", SearchOption.AllDirectories)
            .ToDictionary(f => f, f => Convert.ToHexStringLower(SHA256.HashData(File.ReadAllBytes(f))));
}
