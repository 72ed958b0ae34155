using TapeVault.Core.Blocks;
using System.Globalization;
using System.IO.Compression;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Events;
using TapeVault.Archive.Storage;
using TapeVault.Core.Audio;
using TapeVault.Core.Catalogue;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;
using PulseHistogram = TapeVault.Core.Catalogue.PulseHistogram;

namespace TapeVault.Archive.Export;

/// <summary>Gathers a collection's items from the archive into the catalogue model and writes the static site.</summary>
public sealed class CataloguePublisher(ArchiveDbContext db, ContentStore store, ArchiveOptions options, ProfileCatalog profiles)
{
    public async Task<CatalogueSite> SiteAsync(int collectionId, CancellationToken cancellation = default)
    {
        var collection = await db.Collections.AsNoTracking().FirstOrDefaultAsync(c => c.Id == collectionId, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no collection {collectionId}.");
        var ids = await db.Items.AsNoTracking().Where(i => i.CollectionId == collectionId).OrderBy(i => i.AccessionNumber).Select(i => i.Id)
            .ToListAsync(cancellation).ConfigureAwait(false);
        var items = new List<CatalogueItem>();
        foreach (var id in ids)
        {
            var d = await ItemDossier.LoadAsync(db, store, id, cancellation).ConfigureAwait(false);
            var description = string.Join("\n\n", new[]
            {
                d.Item.ConditionNotes.Length > 0 ? $"**Condition when received:** {d.Item.ConditionNotes}" : null,
            }.Concat(d.Captures.Where(c => c.Notes.Length > 0).Select(c => $"**Capture {c.Id}:** {c.Notes}")).Where(s => s is not null));
            var record = d.LatestImageRecord;
            CatalogueImage? image = record is not null && d.LatestImage is { } latest
                ? new CatalogueImage(record.Version, record.Sha256, await SizeAsync(record.Sha256, cancellation).ConfigureAwait(false), latest)
                : null;
            items.Add(new CatalogueItem(
                d.Item.AccessionNumber,
                d.Item.Title,
                d.Item.Side,
                d.Item.LabelText,
                description,
                [.. d.Captures.Select(c => new CatalogueCapture(c.OriginalFileName, c.Sha256, c.Size, c.SampleRate, c.Channels, c.BitsPerSample, c.DurationSeconds, c.Deck, c.Operator, c.CapturedOn))],
                image,
                await HistogramAsync(d, cancellation).ConfigureAwait(false)));
        }

        var head = await EventChain.HeadAsync(db, cancellation).ConfigureAwait(false);
        var organisation = await OrganisationSettings.CurrentAsync(db, options, cancellation).ConfigureAwait(false);
        return new CatalogueSite(collection.Name, collection.Description, organisation.DisplayName, db.Clock.GetUtcNow(), items, head?.ToString());
    }

    /// <summary>Writes the catalogue into an empty folder; records nothing (see <see cref="RecordPublishedAsync"/>).</summary>
    public async Task<IReadOnlyList<string>> WriteAsync(int collectionId, string folder, CancellationToken cancellation = default)
    {
        var site = await SiteAsync(collectionId, cancellation).ConfigureAwait(false);
        try
        {
            return CatalogueWriter.Write(site, folder);
        }
        catch (IOException e)
        {
            throw new ArchiveInputException(e.Message);
        }
    }

    /// <summary>Writes the catalogue as a zip (its single top folder is the site) to <paramref name="output"/>; records nothing.</summary>
    public async Task<int> PublishZipAsync(int collectionId, Stream output, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(output);
        var site = await SiteAsync(collectionId, cancellation).ConfigureAwait(false);
        var temp = Path.Combine(store.TempFolder, $"catalogue-{Guid.NewGuid():N}");
        try
        {
            var files = CatalogueWriter.Write(site, temp);
            using (var zip = new ZipArchive(output, ZipArchiveMode.Create, leaveOpen: true))
            {
                foreach (var file in files)
                {
                    var entry = zip.CreateEntry($"catalogue/{file}", CompressionLevel.Optimal);
                    entry.LastWriteTime = new DateTimeOffset(2000, 1, 1, 0, 0, 0, TimeSpan.Zero);
                    await using var target = entry.Open();
                    await using var source = File.OpenRead(Path.Combine(temp, file));
                    await source.CopyToAsync(target, cancellation).ConfigureAwait(false);
                }
            }

            return files.Count;
        }
        finally
        {
            if (Directory.Exists(temp))
            {
                Directory.Delete(temp, recursive: true);
            }
        }
    }

    /// <summary>The ids of a collection's items (whose histories a publication is recorded in).</summary>
    public Task<List<int>> ItemIdsAsync(int collectionId, CancellationToken cancellation = default) =>
        db.Items.Where(i => i.CollectionId == collectionId).Select(i => i.Id).ToListAsync(cancellation);

    /// <summary>Records a finished publication on the collection and every item, and saves.</summary>
    public async Task RecordPublishedAsync(int collectionId, string detail, string agent, CancellationToken cancellation = default)
    {
        RecordPublished(collectionId, await ItemIdsAsync(collectionId, cancellation).ConfigureAwait(false), detail, agent);
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
    }

    /// <summary>Adds a publication's events to the context, unsaved, for the caller to commit with what it records.</summary>
    public void RecordPublished(int collectionId, IReadOnlyList<int> itemIds, string detail, string agent)
    {
        ArgumentNullException.ThrowIfNull(itemIds);
        EventLog.Add(db, EventTypes.Export, agent, "collection", collectionId.ToString(CultureInfo.InvariantCulture), "success", detail);
        foreach (var itemId in itemIds)
        {
            EventLog.Add(db, EventTypes.Export, agent, "item", itemId.ToString(CultureInfo.InvariantCulture), "success", detail, itemId);
        }
    }

    /// <summary>
    /// The pulse lengths of the capture the image took most from (or the first decoded one), read by the setting that
    /// found most clean blocks there, with the profile's marks placed at that capture's measured speed.
    /// </summary>
    private async Task<PulseHistogram?> HistogramAsync(ItemDossier d, CancellationToken cancellation)
    {
        string? preferred = d.LatestImage?.Blocks.Where(b => !b.Sources.IsDefaultOrEmpty).GroupBy(b => b.Sources[0].CaptureSha256)
            .OrderByDescending(g => g.Count()).Select(g => g.Key).FirstOrDefault();
        var capture = d.Captures.Where(c => d.Runs.Any(r => r.CaptureId == c.Id)).OrderByDescending(c => c.Sha256 == preferred).ThenBy(c => c.Id).FirstOrDefault();
        if (capture is null || !store.Exists(capture.Sha256))
        {
            return null;
        }

        var run = d.Runs.Where(r => r.CaptureId == capture.Id).OrderByDescending(r => r.Id).First();
        if (!profiles.TryGet(run.ProfileId, out var profile))
        {
            return null;
        }

        var clean = await db.Candidates.AsNoTracking().Where(c => c.RunId == run.Id && c.Status == BlockStatus.Clean)
            .Select(c => new { c.SettingName, c.Speed }).ToListAsync(cancellation).ConfigureAwait(false);
        var settings = Runs.SettingsJson.Read(run.SettingsJson);
        var best = clean.GroupBy(c => c.SettingName).OrderByDescending(g => g.Count()).FirstOrDefault();
        var setting = settings.FirstOrDefault(s => s.Name == best?.Key) ?? (settings.Count > 0 ? settings[0] : null);
        if (setting is null)
        {
            return null;
        }

        double speed = best is null ? 1 : best.Select(c => c.Speed).Order().ElementAt(best.Count() / 2);
        var marks = PulseMarks.For(profile, setting, speed);
        var result = await Task.Run(() =>
        {
            using var reader = CaptureReader.Open(store.PathOf(capture.Sha256));
            return PulseSurvey.Measure(reader, setting, new Core.Pulses.PulseHistogram(marks.LowestSeconds, marks.HighestSeconds, 120), cancellation);
        }, cancellation).ConfigureAwait(false);
        return new PulseHistogram(
            [.. result.BinEdgesSeconds.Select(e => e * 1e6)],
            [.. result.Counts],
            [.. marks.Marks.Where(m => m.Kind != PulseMarkKind.Limit).Select(m => new HistogramMark(m.Label, m.Seconds * 1e6, m.Kind == PulseMarkKind.Boundary))],
            $"capture '{capture.OriginalFileName}', detector setting {setting.Name}; {marks.Measures.TrimEnd('.')}");
    }

    private async Task<long> SizeAsync(string sha256, CancellationToken cancellation) =>
        (await db.Objects.AsNoTracking().FirstOrDefaultAsync(o => o.Sha256 == sha256, cancellation).ConfigureAwait(false))?.Size ?? 0;
}
