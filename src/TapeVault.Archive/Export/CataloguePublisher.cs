using TapeVault.Core.Blocks;
using System.Globalization;
using System.IO.Compression;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Storage;
using TapeVault.Core.Audio;
using TapeVault.Core.Catalogue;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Pulses;
using PulseHistogram = TapeVault.Core.Catalogue.PulseHistogram;

using Reading = (int Position, string SettingName, bool Clean, double Confidence, double Speed, double StartSeconds);

namespace TapeVault.Archive.Export;

/// <summary>Gathers a collection's items from the archive into the catalogue model and writes the static site.</summary>
public sealed class CataloguePublisher(ArchiveDbContext db, ContentStore store, ArchiveOptions options, ProfileCatalog profiles)
{
    /// <summary>How many runs' readings one query asks for (the histograms' readings), so that a query's list stays small.</summary>
    private const int RunsPerQuery = 500;

    /// <summary>
    /// The catalogue model of a collection. A collection of ten thousand tapes is gathered in a handful of queries (its
    /// items, captures, runs and image records each in one, the histograms' readings a few hundred runs at a time),
    /// not a round trip per tape; the tape images are read from the store and the histograms' pulse surveys run on
    /// every core, each tape's on its own.
    /// </summary>
    public async Task<CatalogueSite> SiteAsync(int collectionId, CancellationToken cancellation = default)
    {
        var collection = await db.Collections.AsNoTracking().FirstOrDefaultAsync(c => c.Id == collectionId, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no collection {collectionId}.");
        var items = await db.Items.AsNoTracking().Where(i => i.CollectionId == collectionId).OrderBy(i => i.AccessionNumber)
            .ToListAsync(cancellation).ConfigureAwait(false);
        var captures = (await db.Captures.AsNoTracking().Where(c => c.Item!.CollectionId == collectionId).OrderBy(c => c.Id)
            .ToListAsync(cancellation).ConfigureAwait(false)).ToLookup(c => c.ItemId);
        var runs = (await db.Runs.AsNoTracking().Where(r => r.Capture!.Item!.CollectionId == collectionId).OrderBy(r => r.Id)
            .ToListAsync(cancellation).ConfigureAwait(false)).ToLookup(r => r.CaptureId);

        // The newest image version of each item, with its stored file's size (0 when the store has no record of it).
        var newest = (await db.Images.AsNoTracking().Where(i => i.Item!.CollectionId == collectionId)
            .Select(i => new { i.ItemId, i.Version, i.Sha256, Size = i.StoredFile == null ? 0 : i.StoredFile.Size })
            .ToListAsync(cancellation).ConfigureAwait(false))
            .GroupBy(i => i.ItemId).ToDictionary(g => g.Key, g => g.MaxBy(i => i.Version)!);

        var tapes = new Tape[items.Count];
        await Parallel.ForEachAsync(Enumerable.Range(0, items.Count), new ParallelOptions { CancellationToken = cancellation }, (i, _) =>
        {
            var item = items[i];
            var record = newest.GetValueOrDefault(item.Id);
            var image = record is not null ? ReadImage(item, record.Version, record.Sha256) : null;
            var own = captures[item.Id].ToList();
            tapes[i] = new Tape(item, own, [.. own.SelectMany(c => runs[c.Id]).OrderBy(r => r.Id)], image is null ? null : new CatalogueImage(record!.Version, record.Sha256, record.Size, image));
            return ValueTask.CompletedTask;
        }).ConfigureAwait(false);

        // The histogram of each tape: which run it is read from, then those runs' readings in a few queries.
        var sources = tapes.Select(HistogramSource).ToArray();
        var chosen = sources.Where(s => s is not null).Select(s => s!.Value.Run.Id).Distinct().ToList();
        var readings = new Dictionary<int, List<Reading>>();
        for (int start = 0; start < chosen.Count; start += RunsPerQuery)
        {
            var batch = chosen.GetRange(start, Math.Min(RunsPerQuery, chosen.Count - start));
            var rows = await db.Candidates.AsNoTracking().Where(c => batch.Contains(c.RunId))
                .Select(c => new { c.RunId, c.Position, c.SettingName, c.Status, c.Confidence, c.Speed, c.StartSeconds }).ToListAsync(cancellation).ConfigureAwait(false);
            foreach (var row in rows)
            {
                (readings.TryGetValue(row.RunId, out var list) ? list : readings[row.RunId] = [])
                    .Add((row.Position, row.SettingName, row.Status == BlockStatus.Clean, row.Confidence, row.Speed, row.StartSeconds));
            }
        }

        var histograms = new PulseHistogram?[tapes.Length];
        await Parallel.ForEachAsync(Enumerable.Range(0, tapes.Length), new ParallelOptions { CancellationToken = cancellation }, (i, token) =>
        {
            if (sources[i] is { } source)
            {
                histograms[i] = Histogram(source.Capture, source.Run, readings.GetValueOrDefault(source.Run.Id) ?? [], token);
            }

            return ValueTask.CompletedTask;
        }).ConfigureAwait(false);

        var catalogued = new List<CatalogueItem>(tapes.Length);
        for (int i = 0; i < tapes.Length; i++)
        {
            var (item, own, _, image) = tapes[i];
            var description = string.Join("\n\n", new[]
            {
                item.ConditionNotes.Length > 0 ? $"**Condition when received:** {item.ConditionNotes}" : null,
            }.Concat(own.Where(c => c.Notes.Length > 0).Select(c => $"**Capture {c.Id}:** {c.Notes}")).Where(s => s is not null));
            catalogued.Add(new CatalogueItem(
                item.AccessionNumber,
                item.Title,
                item.Side,
                item.LabelText,
                description,
                [.. own.Select(c => new CatalogueCapture(c.OriginalFileName, c.Sha256, c.Size, c.SampleRate, c.Channels, c.BitsPerSample, c.DurationSeconds, c.Deck, c.Operator, c.CapturedOn))],
                image,
                histograms[i]));
        }

        var head = await EventChain.HeadAsync(db, cancellation).ConfigureAwait(false);
        var organisation = await OrganisationSettings.CurrentAsync(db, options, cancellation).ConfigureAwait(false);
        return new CatalogueSite(collection.Name, collection.Description, organisation.DisplayName, db.Clock.GetUtcNow(), catalogued, head?.ToString());
    }

    /// <summary>One tape as the catalogue gathers it: the item, its captures and runs in id order, its newest image.</summary>
    private sealed record Tape(TapeItem Item, List<Capture> Captures, List<DecodeRun> Runs, CatalogueImage? Image);

    /// <summary>The newest image version of an item, read from the store; null when its file is not there.</summary>
    private TapeImage? ReadImage(TapeItem item, int version, string sha256)
    {
        if (!store.Exists(sha256))
        {
            return null;
        }

        using var stream = store.OpenRead(sha256);
        try
        {
            return TapeImageContainer.Read(stream);
        }
        catch (ImageFormatException e)
        {
            throw new ArchiveConflictException($"Item {item.AccessionNumber}: the stored tape image version {version} is damaged ({e.Message}) Run a fixity audit.");
        }
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

    /// <summary>
    /// Writes the catalogue as a zip (its single top folder is the site) to <paramref name="output"/>; records nothing.
    /// Returns how many files it holds and the SHA-256 of its <c>SHA256SUMS</c> (see <see cref="ManifestSha256"/>).
    /// </summary>
    public async Task<(int Files, string ManifestSha256)> PublishZipAsync(int collectionId, Stream output, CancellationToken cancellation = default)
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

            return (files.Count, ManifestSha256(temp));
        }
        finally
        {
            if (Directory.Exists(temp))
            {
                Directory.Delete(temp, recursive: true);
            }
        }
    }

    /// <summary>
    /// The SHA-256 of a written catalogue's <c>SHA256SUMS</c>, which lists the SHA-256 of every other file of the site:
    /// recorded in the event chain, it proves what one publication held, file by file (check a copy with
    /// <c>sha256sum SHA256SUMS</c>, then <c>sha256sum -c SHA256SUMS</c>).
    /// </summary>
    public static string ManifestSha256(string folder)
    {
        ArgumentNullException.ThrowIfNull(folder);
        using var manifest = File.OpenRead(Path.Combine(folder, CatalogueWriter.ChecksumFile));
        return Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(manifest));
    }

    /// <summary>Records a finished publication on the collection, and saves.</summary>
    public async Task RecordPublishedAsync(int collectionId, string detail, string manifestSha256, string agent, CancellationToken cancellation = default)
    {
        RecordPublished(collectionId, detail, manifestSha256, agent);
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
    }

    /// <summary>
    /// Adds a publication's event to the context, unsaved, for the caller to commit with what it records: one event on
    /// the collection, however many tapes it has, naming the SHA-256 of the site's <c>SHA256SUMS</c>, so the chain
    /// holds what was published without an event per tape (each lengthened every later whole-chain audit).
    /// </summary>
    public void RecordPublished(int collectionId, string detail, string manifestSha256, string agent)
    {
        ArgumentNullException.ThrowIfNull(detail);
        ArgumentException.ThrowIfNullOrWhiteSpace(manifestSha256);
        EventLog.Add(db, EventTypes.Export, agent, "collection", collectionId.ToString(CultureInfo.InvariantCulture), "success",
            $"{detail} Its {CatalogueWriter.ChecksumFile} has SHA-256 {manifestSha256}.");
    }

    /// <summary>
    /// The capture a tape's histogram is drawn from: the one the image took most from (or the first decoded one), with
    /// its newest run; null when there is none or its original is not in the store.
    /// </summary>
    private (Capture Capture, DecodeRun Run)? HistogramSource(Tape tape)
    {
        string? preferred = tape.Image?.Image.Blocks.Where(b => !b.Sources.IsDefaultOrEmpty).GroupBy(b => b.Sources[0].CaptureSha256)
            .OrderByDescending(g => g.Count()).Select(g => g.Key).FirstOrDefault();
        var capture = tape.Captures.Where(c => tape.Runs.Any(r => r.CaptureId == c.Id)).OrderByDescending(c => c.Sha256 == preferred).ThenBy(c => c.Id).FirstOrDefault();
        if (capture is null || !store.Exists(capture.Sha256))
        {
            return null;
        }

        return (capture, tape.Runs.Where(r => r.CaptureId == capture.Id).OrderByDescending(r => r.Id).First());
    }

    /// <summary>
    /// The pulse lengths of a capture as its capture page shows them: the setting and speed chosen by the rules the
    /// page and the decode job share (<see cref="Runs.WholeCaptureSurveys"/>), so the survey the decode job kept is the
    /// one published and a first publish reads no audio for captures decoded since surveys were kept.
    /// </summary>
    private PulseHistogram? Histogram(Capture capture, DecodeRun run, List<Reading> readings, CancellationToken cancellation)
    {
        if (!profiles.TryGet(run.ProfileId, out var profile))
        {
            return null;
        }

        var settings = Runs.SettingsJson.Read(run.SettingsJson);
        if (settings.Count == 0)
        {
            return null;
        }

        var setting = Runs.WholeCaptureSurveys.ShownSetting(settings, readings.Select(r => (r.SettingName, r.Clean)));
        var marks = PulseMarks.For(profile, setting, Runs.WholeCaptureSurveys.SpeedOf(readings, setting.Name));
        string kept = Runs.WholeCaptureSurveys.CachePath(store, capture.Sha256, setting, marks);
        var result = Runs.WholeCaptureSurveys.TryRead(kept);
        if (result is null)
        {
            // A run decoded before surveys were kept: read once, then kept for the page and the next publish.
            result = Runs.WholeCaptureSurveys.MeasureAndKeep(store, store.PathOf(capture.Sha256), kept, setting, marks, cancellation);
        }

        return new PulseHistogram(
            [.. result.BinEdgesSeconds.Select(e => e * 1e6)],
            [.. result.Counts],
            [.. marks.Marks.Where(m => m.Kind != PulseMarkKind.Limit).Select(m => new HistogramMark(m.Label, m.Seconds * 1e6, m.Kind == PulseMarkKind.Boundary))],
            $"capture '{capture.OriginalFileName}', detector setting {setting.Name}; {marks.Measures.TrimEnd('.')}");
    }
}
