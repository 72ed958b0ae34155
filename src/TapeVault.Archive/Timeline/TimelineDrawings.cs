using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Runs;
using TapeVault.Archive.Storage;
using TapeVault.Core.Blocks;
using TapeVault.Core.Image;
using TapeVault.Core.Text;
using TapeVault.Core.Timeline;

namespace TapeVault.Archive.Timeline;

/// <summary>A tape page's timeline as drawn: how many captures and folded lanes it has, the image lane's size, and the SVG.</summary>
public sealed record TimelineDrawing(int Captures, int FoldedLanes, int? ImagePositions, string Drawing, string? FoldedDrawing);

/// <summary>
/// The tape timelines kept under the store's <c>derived/timelines/{item}</c> folder, one drawing per tape. A drawing
/// depends only on the runs the merge takes (a run and its readings are written in one save and never changed), the
/// newest image (content-addressed), the title, the links and the code that builds and draws it (the core's and this
/// archive layer's builds); all of them are in the file's name, so a new decode, a new merge, a renamed tape or a new
/// build of the app draws anew, and a long tape's thousands of readings are read from the database once, not per view.
/// Keeping a tape's new drawing removes its older ones. The decode and merge jobs draw the page's timeline from what
/// they hold in memory before they open their write transaction, and put it in place just before they commit, so a
/// curator's first view reads a finished drawing; the page draws it itself when the kept one is missing or stale.
/// </summary>
public static class TimelineDrawings
{
    /// <summary>The title the tape page gives its timeline.</summary>
    public static string PageTitle(string accessionNumber) => $"Tape timeline of {accessionNumber}";

    /// <summary>Where the tape page's timeline links an image position to (the position's number follows).</summary>
    public static string PagePositionLinks(int itemId) => $"/items/{itemId}/positions/";

    /// <summary>The folder of one tape's kept drawings.</summary>
    public static string FolderOf(ContentStore store, int itemId)
    {
        ArgumentNullException.ThrowIfNull(store);
        return Path.Combine(store.Root, "derived", "timelines", itemId.ToString(System.Globalization.CultureInfo.InvariantCulture));
    }

    /// <summary>Reads a stored tape image container, telling a missing or damaged one as the archive's errors.</summary>
    public static async Task<TapeImage> ReadStoredImageAsync(ContentStore store, string sha256, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(store);
        if (!store.Exists(sha256))
        {
            throw new ArchiveNotFoundException("The tape image's file is missing from the content store; run a fixity audit.");
        }

        await using var stream = store.OpenRead(sha256);
        try
        {
            return TapeImageContainer.Read(stream);
        }
        catch (ImageFormatException e)
        {
            throw new ArchiveConflictException($"The stored tape image is damaged: {e.Message}");
        }
    }

    /// <summary>
    /// The tape timeline of an item: the newest decode of each capture (as the merge takes them), one lane per
    /// setting, and the newest image on top when there is one.
    /// </summary>
    public static async Task<TapeTimeline> TimelineAsync(ArchiveDbContext db, ContentStore store, int itemId, Func<string, CancellationToken, Task<TapeImage>> readImage, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(readImage);
        if (!await db.Items.AnyAsync(i => i.Id == itemId, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveNotFoundException($"There is no item {itemId}.");
        }

        var runs = await MergeJob.RunsToMergeAsync(db, itemId, cancellation).ConfigureAwait(false);
        var newest = await NewestImageAsync(db, store, itemId, cancellation).ConfigureAwait(false);
        return await TimelineOfRunsAsync(db, runs, newest is null ? null : await readImage(newest, cancellation).ConfigureAwait(false), cancellation).ConfigureAwait(false);
    }

    /// <summary>
    /// The tape timeline of an item, drawn, and whether it came from the kept drawings; one drawn anew is kept (and
    /// the tape's older drawings removed).
    /// </summary>
    public static async Task<(TimelineDrawing Drawing, bool Kept)> DrawingAsync(
        ArchiveDbContext db, ContentStore store, int itemId, string title, string? positionLinkPrefix,
        Func<string, CancellationToken, Task<TapeImage>> readImage, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(title);
        ArgumentNullException.ThrowIfNull(readImage);
        var runs = await MergeJob.RunsToMergeAsync(db, itemId, cancellation).ConfigureAwait(false);
        var newest = await NewestImageAsync(db, store, itemId, cancellation).ConfigureAwait(false);
        string kept = PathOf(store, itemId, KeyOf(itemId, runs, newest, positionLinkPrefix, title));
        if (File.Exists(kept))
        {
            try
            {
                await using var read = File.OpenRead(kept);
                if (await JsonSerializer.DeserializeAsync<TimelineDrawing>(read, cancellationToken: cancellation).ConfigureAwait(false) is { Drawing: not null } drawn)
                {
                    return (drawn, true);
                }
            }
            catch (Exception e) when (e is JsonException or IOException or UnauthorizedAccessException)
            {
                // A damaged, unreadable or just removed kept drawing is drawn anew (and replaced below, if the store lets us).
            }
        }

        if (!await db.Items.AnyAsync(i => i.Id == itemId, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveNotFoundException($"There is no item {itemId}.");
        }

        var image = newest is null ? null : await readImage(newest, cancellation).ConfigureAwait(false);
        var drawing = Draw(await TimelineOfRunsAsync(db, runs, image, cancellation).ConfigureAwait(false), title, positionLinkPrefix);
        string temporary = await StageAsync(store, drawing, cancellation).ConfigureAwait(false);
        if (temporary.Length > 0)
        {
            Place(store, itemId, temporary, kept);
        }

        return (drawing, false);
    }

    /// <summary>
    /// Draws the tape page's timeline as it will be once a job commits what it made, from what the job holds in memory
    /// (no database lock is needed: <paramref name="runs"/> are the runs the merge will take, the new one among them
    /// possibly not stored yet, whose id is read when the drawing is put in place), and stages it in the store's
    /// temporary folder. Returns null when it cannot be drawn (say, a run's settings no longer read) or the store cannot
    /// take it: the drawing is a cache, and the job's result stands whatever happens to it; the page draws the
    /// timeline, or tells what is wrong, when asked.
    /// </summary>
    public static async Task<StagedTimeline?> StageForPageAsync(
        ContentStore store, int itemId, string accessionNumber, IReadOnlyList<DecodeRun> runs, IReadOnlyDictionary<int, Capture> captures,
        IReadOnlyList<TimelineReading> readings, TapeImage? image, string? imageSha256, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(runs);
        ArgumentNullException.ThrowIfNull(captures);
        ArgumentNullException.ThrowIfNull(readings);
        string title = PageTitle(accessionNumber);
        string links = PagePositionLinks(itemId);
        TimelineDrawing drawing;
        try
        {
            drawing = Draw(Build(runs, captures, readings, image), title, links);
        }
        catch (Exception e) when (e is not OperationCanceledException)
        {
            return null;
        }

        string temporary = await StageAsync(store, drawing, cancellation).ConfigureAwait(false);
        return temporary.Length == 0 ? null : new StagedTimeline(store, itemId, [.. runs], image is null ? null : imageSha256, links, title, temporary);
    }

    /// <summary>A reading of the timeline from one stored or just made block candidate.</summary>
    public static TimelineReading ReadingOf(string captureSha256, CandidateRecord candidate)
    {
        ArgumentNullException.ThrowIfNull(candidate);
        return ReadingOf(captureSha256, candidate.SettingName, candidate.IdentityKey, candidate.Status, candidate.Confidence, candidate.StartSeconds, candidate.EndSeconds, candidate.Speed);
    }

    /// <summary>A reading of the timeline from the fields of a block candidate.</summary>
    public static TimelineReading ReadingOf(string captureSha256, string setting, string identity, BlockStatus status, double confidence, double start, double end, double speed) =>
        new(captureSha256, setting, identity, Vocabulary.Of(status).Name, confidence, start, end, speed);

    /// <summary>
    /// The name of a drawing: a SHA-256 of everything it depends on. A run is named by its id, its capture's, its
    /// profile, settings and code version, so a run id used again after a rolled-back run (SQLite may reuse one) names
    /// a drawing of that decode only if it is the same decode of the same capture, which reads the same blocks.
    /// </summary>
    public static string KeyOf(int itemId, IEnumerable<DecodeRun> runs, string? storedImageSha256, string? positionLinkPrefix, string title)
    {
        ArgumentNullException.ThrowIfNull(runs);
        ArgumentNullException.ThrowIfNull(title);
        var identity = new StringBuilder()
            .Append(typeof(TimelineSvg).Assembly.ManifestModule.ModuleVersionId).Append('\n')
            .Append(typeof(TimelineDrawings).Assembly.ManifestModule.ModuleVersionId).Append('\n')
            .Append(itemId).Append('\n')
            .AppendJoin(',', runs.Select(r => $"{r.Id}:{r.CaptureId}:{r.ProfileId}:{r.CodeVersion}:{Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(r.SettingsJson)))}")).Append('\n')
            .Append(storedImageSha256 ?? "-").Append('\n')
            .Append(positionLinkPrefix ?? "-").Append('\n')
            .Append(title);
        return Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(identity.ToString())));
    }

    internal static string PathOf(ContentStore store, int itemId, string key) => Path.Combine(FolderOf(store, itemId), $"{key}.json");

    /// <summary>
    /// Moves a staged drawing into place and removes the tape's other drawings (of older runs, images, titles or
    /// builds). A reader sees the old file, none, or the whole new one; one that finds none draws anew.
    /// </summary>
    internal static bool Place(ContentStore store, int itemId, string temporary, string kept)
    {
        try
        {
            Directory.CreateDirectory(Path.GetDirectoryName(kept)!);
            File.Move(temporary, kept, overwrite: true);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            Forget(temporary);
            return false;
        }

        foreach (var older in Directory.EnumerateFiles(FolderOf(store, itemId), "*.json"))
        {
            if (!string.Equals(older, kept, StringComparison.Ordinal))
            {
                Forget(older);
            }
        }

        return true;
    }

    internal static void Forget(string path)
    {
        try
        {
            File.Delete(path);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            // Left for the store's sweep (a temporary file) or the tape's next drawing (a kept one).
        }
    }

    /// <summary>The SHA-256 of the tape's newest image, when the store has its file.</summary>
    internal static async Task<string?> NewestImageAsync(ArchiveDbContext db, ContentStore store, int itemId, CancellationToken cancellation)
    {
        var newest = await db.Images.AsNoTracking().Where(i => i.ItemId == itemId).OrderByDescending(i => i.Version)
            .Select(i => i.Sha256).FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
        return newest is not null && store.Exists(newest) ? newest : null;
    }

    private static async Task<TapeTimeline> TimelineOfRunsAsync(ArchiveDbContext db, List<DecodeRun> runs, TapeImage? image, CancellationToken cancellation)
    {
        var readings = await StoredReadingsAsync(db, runs.ToDictionary(r => r.Id, r => r.Capture!.Sha256), cancellation).ConfigureAwait(false);
        return Build(runs, runs.ToDictionary(r => r.CaptureId, r => r.Capture!), readings, image);
    }

    /// <summary>
    /// The timeline's readings of stored runs, each run given with its capture's SHA-256: from the value each run keeps
    /// of them (<see cref="TimelineReadingsValue"/>, one row a run), or from its readings' rows for a run stored before
    /// those were kept. Runs are taken in their captures' order, so readings read from the values come in the
    /// timeline's own order.
    /// </summary>
    internal static async Task<List<TimelineReading>> StoredReadingsAsync(ArchiveDbContext db, IReadOnlyDictionary<int, string> captureOfRun, CancellationToken cancellation)
    {
        var runIds = captureOfRun.Keys.ToList();
        var values = await ArchiveDatabase.ListAsync(db, db.RunTimelines.AsNoTracking().Where(t => runIds.Contains(t.RunId)).Select(t => new { t.RunId, t.Readings }), cancellation).ConfigureAwait(false);
        var readings = new List<TimelineReading>();
        var fromRows = new List<int>();
        var valueOf = values.ToDictionary(v => v.RunId, v => v.Readings);
        foreach (int runId in runIds.OrderBy(r => captureOfRun[r], StringComparer.Ordinal).ThenBy(r => r))
        {
            if (!valueOf.TryGetValue(runId, out var value) || !TimelineReadingsValue.TryRead(value, captureOfRun[runId], readings))
            {
                fromRows.Add(runId);
            }
        }

        if (fromRows.Count == 0)
        {
            return readings;
        }

        var query = db.Candidates.AsNoTracking().Where(c => fromRows.Contains(c.RunId))
            .Select(c => new { c.RunId, c.SettingName, c.IdentityKey, c.Status, c.Confidence, c.StartSeconds, c.EndSeconds, c.Speed });
        var rows = await ArchiveDatabase.ListAsync(db, query, cancellation).ConfigureAwait(false);
        readings.Capacity = readings.Count + rows.Count;
        foreach (var c in rows)
        {
            readings.Add(ReadingOf(captureOfRun[c.RunId], c.SettingName, c.IdentityKey, c.Status, c.Confidence, c.StartSeconds, c.EndSeconds, c.Speed));
        }

        return readings;
    }

    /// <summary>
    /// The timeline of the given runs, readings and image. The readings are put in one order first, whatever order they
    /// came in (the database's or a job's), so a job and the page draw the same timeline byte for byte.
    /// </summary>
    private static TapeTimeline Build(IReadOnlyList<DecodeRun> runs, IReadOnlyDictionary<int, Capture> captures, IReadOnlyList<TimelineReading> readings, TapeImage? image)
    {
        // Every field is a key, so readings that compare equal are alike in every field and their order cannot show.
        var ordered = new List<TimelineReading>(readings);
        if (!InOrder(ordered))
        {
            ordered.Sort(CompareReadings);
        }

        var lanes = runs.Select(r => (captures[r.CaptureId].Sha256, $"Capture {r.CaptureId} · {captures[r.CaptureId].OriginalFileName}")).ToList();
        var settings = runs.ToDictionary(r => captures[r.CaptureId].Sha256, r => (IReadOnlyList<string>)[.. SettingsJson.Read(r.SettingsJson).Select(s => s.Name)], StringComparer.Ordinal);
        IReadOnlyList<TimelinePosition>? positions = image is null
            ? null
            : [.. image.Blocks.Select(b => new TimelinePosition(b.Position, b.Key, Vocabulary.Of(b.Status).Name, b.Confidence))];
        return TapeTimeline.Build(lanes, ordered, settings, positions);
    }

    /// <summary>Whether readings are already in the timeline's order (as a long tape's come from its runs' kept values).</summary>
    private static bool InOrder(List<TimelineReading> readings)
    {
        for (int i = 1; i < readings.Count; i++)
        {
            if (CompareReadings(readings[i - 1], readings[i]) > 0)
            {
                return false;
            }
        }

        return true;
    }

    /// <summary>The one order of a timeline's readings: capture, setting, start, end, identity, outcome, confidence, speed.</summary>
    internal static int CompareReadings(TimelineReading a, TimelineReading b)
    {
        int c = string.CompareOrdinal(a.CaptureKey, b.CaptureKey);
        c = c != 0 ? c : string.CompareOrdinal(a.Setting, b.Setting);
        c = c != 0 ? c : a.StartSeconds.CompareTo(b.StartSeconds);
        c = c != 0 ? c : a.EndSeconds.CompareTo(b.EndSeconds);
        c = c != 0 ? c : string.CompareOrdinal(a.Key, b.Key);
        c = c != 0 ? c : string.CompareOrdinal(a.Status, b.Status);
        c = c != 0 ? c : a.Confidence.CompareTo(b.Confidence);
        return c != 0 ? c : a.Speed.CompareTo(b.Speed);
    }

    private static TimelineDrawing Draw(TapeTimeline timeline, string title, string? positionLinkPrefix)
    {
        int folded = timeline.Captures.Sum(c => c.Folded.Count);
        return timeline.Captures.Count == 0
            ? new TimelineDrawing(0, 0, null, string.Empty, null)
            : new TimelineDrawing(
                timeline.Captures.Count,
                folded,
                timeline.Image?.Spans.Count,
                TimelineSvg.Render(timeline, timeline.Image is null || positionLinkPrefix is null ? null : p => $"{positionLinkPrefix}{p}", title: title),
                folded > 0 ? TimelineSvg.Render(timeline, null, folded: true, title: "Settings that read nothing checkable") : null);
    }

    /// <summary>
    /// Writes a drawing in the store's temporary folder (which its sweep clears); returns its path, or an empty string
    /// when the store cannot take it (disk full, read-only): that costs the next view a drawing, not the page or the job.
    /// </summary>
    private static async Task<string> StageAsync(ContentStore store, TimelineDrawing drawing, CancellationToken cancellation)
    {
        string temporary = Path.Combine(store.TempFolder, $"{Guid.NewGuid():N}.timeline.part");
        try
        {
            await File.WriteAllBytesAsync(temporary, JsonSerializer.SerializeToUtf8Bytes(drawing), cancellation).ConfigureAwait(false);
            return temporary;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            Forget(temporary);
            return string.Empty;
        }
    }
}

/// <summary>
/// A tape page's timeline a job drew before its write transaction, waiting in the store's temporary folder. The job
/// puts it in place (<see cref="Place"/>) inside its transaction just before the commit, once the new run's id is
/// known; that is a rename, so the write lock is not held for the drawing. Disposing removes what was not committed.
/// </summary>
public sealed class StagedTimeline : IDisposable
{
    private readonly ContentStore store;
    private readonly int itemId;
    private readonly IReadOnlyList<DecodeRun> runs;
    private readonly string? imageSha256;
    private readonly string links;
    private readonly string title;
    private readonly string temporary;
    private string? placed;
    private bool committed;

    internal StagedTimeline(ContentStore store, int itemId, IReadOnlyList<DecodeRun> runs, string? imageSha256, string links, string title, string temporary)
    {
        this.store = store;
        this.itemId = itemId;
        this.runs = runs;
        this.imageSha256 = imageSha256;
        this.links = links;
        this.title = title;
        this.temporary = temporary;
    }

    /// <summary>Puts the drawing in place under the name of its runs (ids read now) and removes the tape's older drawings.</summary>
    public void Place()
    {
        string kept = TimelineDrawings.PathOf(store, itemId, TimelineDrawings.KeyOf(itemId, runs, imageSha256, links, title));
        if (TimelineDrawings.Place(store, itemId, temporary, kept))
        {
            placed = kept;
        }
    }

    /// <summary>Says the job's transaction committed: the drawing placed stays.</summary>
    public void Committed() => committed = true;

    public void Dispose()
    {
        if (!committed && placed is not null)
        {
            // Its run or image was rolled back: a drawing of it must not stay under a name that may be used again.
            TimelineDrawings.Forget(placed);
        }

        TimelineDrawings.Forget(temporary);
    }
}
