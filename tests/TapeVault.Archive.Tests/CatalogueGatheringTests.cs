using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Export;
using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Catalogue;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;
using Xunit;
using PulseHistogram = TapeVault.Core.Catalogue.PulseHistogram;

namespace TapeVault.Archive.Tests;

/// <summary>
/// The catalogue of a collection is gathered in a few queries for all its tapes; what it publishes must be the same,
/// byte for byte, as the catalogue gathered tape by tape from each tape's dossier (the archive's per-item view that
/// bags are made from), which is how it was gathered before.
/// </summary>
[Collection(SharedArchiveGroup.Name)]
public sealed class CatalogueGatheringTests(SharedArchive shared)
{
    [Fact]
    public async Task CatalogueGatheredInBatchesIsByteForByteTheOneGatheredTapeByTape()
    {
        var archive = shared.Archive;
        using var scope = archive.Services.CreateScope();
        var batched = await scope.ServiceProvider.GetRequiredService<CataloguePublisher>().SiteAsync(archive.CollectionId);

        // Published twice: the second time the histograms' surveys are kept ones, which must change nothing either.
        var again = await scope.ServiceProvider.GetRequiredService<CataloguePublisher>().SiteAsync(archive.CollectionId);
        var byTape = batched with { Items = await TapeByTapeAsync(archive) };
        Assert.NotEmpty(byTape.Items);
        Assert.Contains(byTape.Items, i => i.Image is not null && i.Histogram is not null);

        var expected = Write(byTape);
        Assert.Equal(expected, Write(batched));
        Assert.Equal(expected, Write(again with { PublishedUtc = batched.PublishedUtc }));
    }

    [Fact]
    public async Task PublishingReadsTheSurveysTheDecodeJobKeptAndMakesNoneOfItsOwn()
    {
        var archive = shared.Archive;
        using var scope = archive.Services.CreateScope();
        var site = await scope.ServiceProvider.GetRequiredService<CataloguePublisher>().SiteAsync(archive.CollectionId);
        Assert.Contains(site.Items, i => i.Histogram is not null);

        // The decode job keeps one survey per setting of its run; a histogram chosen by rules of the catalogue's own
        // (another setting, speed or bin count) would have added files beside them.
        await using var db = archive.NewContext();
        var runs = await db.Runs.AsNoTracking().Where(r => r.Capture!.Item!.CollectionId == archive.CollectionId).Select(r => r.SettingsJson).ToListAsync();
        int made = runs.Sum(r => Runs.SettingsJson.Read(r).Count);
        var folder = Path.Combine(archive.Store.Root, "derived", "surveys");
        Assert.Equal(made, Directory.EnumerateFiles(folder, "*.json", SearchOption.AllDirectories).Count());
    }

    private static SortedDictionary<string, string> Write(CatalogueSite site)
    {
        var folder = Directory.CreateTempSubdirectory("tapevault-catalogue-").FullName;
        try
        {
            var files = new SortedDictionary<string, string>(StringComparer.Ordinal);
            foreach (var file in CatalogueWriter.Write(site, folder))
            {
                files[file] = Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(File.ReadAllBytes(Path.Combine(folder, file))));
            }

            return files;
        }
        finally
        {
            Directory.Delete(folder, recursive: true);
        }
    }

    /// <summary>
    /// The catalogue's items as gathered one tape at a time: a dossier per tape, its image's size, its histogram
    /// surveyed. A frozen copy of how the publisher gathered them before it worked in batches (its code at commit
    /// c1bf7d1): the reference the batched gathering is held to, so it is kept as it was, not kept in step, except
    /// where the histogram's choice of setting and speed became the capture page's: there it calls the same rule
    /// (WholeCaptureSurveys.ShownSetting and SpeedOf), so this test does not check that choice independently.
    /// </summary>
    private static async Task<List<CatalogueItem>> TapeByTapeAsync(ArchiveFixture archive)
    {
        await using var db = archive.NewContext();
        var ids = await db.Items.AsNoTracking().Where(i => i.CollectionId == archive.CollectionId).OrderBy(i => i.AccessionNumber).Select(i => i.Id).ToListAsync();
        var items = new List<CatalogueItem>();
        foreach (var id in ids)
        {
            var d = await ItemDossier.LoadAsync(db, archive.Store, id);
            var description = string.Join("\n\n", new[]
            {
                d.Item.ConditionNotes.Length > 0 ? $"**Condition when received:** {d.Item.ConditionNotes}" : null,
            }.Concat(d.Captures.Where(c => c.Notes.Length > 0).Select(c => $"**Capture {c.Id}:** {c.Notes}")).Where(s => s is not null));
            var record = d.LatestImageRecord;
            CatalogueImage? image = record is not null && d.LatestImage is { } latest
                ? new CatalogueImage(record.Version, record.Sha256, (await db.Objects.AsNoTracking().FirstOrDefaultAsync(o => o.Sha256 == record.Sha256))?.Size ?? 0, latest)
                : null;
            items.Add(new CatalogueItem(
                d.Item.AccessionNumber, d.Item.Title, d.Item.Side, d.Item.LabelText, description,
                [.. d.Captures.Select(c => new CatalogueCapture(c.OriginalFileName, c.Sha256, c.Size, c.SampleRate, c.Channels, c.BitsPerSample, c.DurationSeconds, c.Deck, c.Operator, c.CapturedOn))],
                image,
                await HistogramAsync(db, archive, d)));
        }

        return items;
    }

    private static async Task<PulseHistogram?> HistogramAsync(ArchiveDbContext db, ArchiveFixture archive, ItemDossier d)
    {
        string? preferred = d.LatestImage?.Blocks.Where(b => !b.Sources.IsDefaultOrEmpty).GroupBy(b => b.Sources[0].CaptureSha256)
            .OrderByDescending(g => g.Count()).Select(g => g.Key).FirstOrDefault();
        var capture = d.Captures.Where(c => d.Runs.Any(r => r.CaptureId == c.Id)).OrderByDescending(c => c.Sha256 == preferred).ThenBy(c => c.Id).FirstOrDefault();
        if (capture is null || !archive.Store.Exists(capture.Sha256))
        {
            return null;
        }

        var run = d.Runs.Where(r => r.CaptureId == capture.Id).OrderByDescending(r => r.Id).First();
        if (!ProfileCatalog.BuiltIn.TryGet(run.ProfileId, out var profile))
        {
            return null;
        }

        // The histogram is the capture page's: its setting and speed by the rules the page shares (the one deliberate
        // change to this copy), surveyed here from the audio itself rather than from any kept survey.
        var readings = await db.Candidates.AsNoTracking().Where(c => c.RunId == run.Id)
            .Select(c => new { c.Position, c.SettingName, c.Status, c.Confidence, c.Speed, c.StartSeconds }).ToListAsync();
        var settings = Runs.SettingsJson.Read(run.SettingsJson);
        if (settings.Count == 0)
        {
            return null;
        }

        var setting = Runs.WholeCaptureSurveys.ShownSetting(settings, readings.Select(r => (r.SettingName, r.Status == BlockStatus.Clean)));
        double speed = Runs.WholeCaptureSurveys.SpeedOf(readings.Select(r => (r.Position, r.SettingName, r.Status == BlockStatus.Clean, r.Confidence, r.Speed, r.StartSeconds)), setting.Name);
        var marks = PulseMarks.For(profile, setting, speed);
        using var reader = CaptureReader.Open(archive.Store.PathOf(capture.Sha256), Runs.WholeCaptureSurveys.Channel);
        var result = PulseSurvey.Measure(reader, setting, new Core.Pulses.PulseHistogram(marks.LowestSeconds, marks.HighestSeconds, Runs.WholeCaptureSurveys.Bins));
        return new PulseHistogram(
            [.. result.BinEdgesSeconds.Select(e => e * 1e6)],
            [.. result.Counts],
            [.. marks.Marks.Where(m => m.Kind != PulseMarkKind.Limit).Select(m => new HistogramMark(m.Label, m.Seconds * 1e6, m.Kind == PulseMarkKind.Boundary))],
            $"capture '{capture.OriginalFileName}', detector setting {setting.Name}; {marks.Measures.TrimEnd('.')}");
    }
}
