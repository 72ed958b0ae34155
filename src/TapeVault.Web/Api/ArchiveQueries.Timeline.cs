using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Jobs;
using TapeVault.Core.Timeline;

namespace TapeVault.Web.Api;

/// <summary>A tape page's timeline as drawn: how many captures and folded lanes it has, the image lane's size, and the SVG.</summary>
public sealed record TimelineDrawing(int Captures, int FoldedLanes, int? ImagePositions, string Drawing, string? FoldedDrawing);

public sealed partial class ArchiveQueries
{
    /// <summary>
    /// The tape timeline of an item, drawn, and whether it came from the drawings kept under the store's
    /// <c>derived/timelines</c> folder. A drawing depends only on the runs the merge takes (a run and its readings are
    /// written in one save and never changed), the newest image (content-addressed), the title, the links and the code
    /// that builds and draws it (the core's and this web app's builds); all of them are in the file's name, so a new
    /// decode, a new merge, a renamed tape or a new build of the app draws anew, and a long tape's thousands of
    /// readings are read from the database once, not per view.
    /// </summary>
    public async Task<(TimelineDrawing Drawing, bool Cached)> TimelineDrawingAsync(int itemId, string title, string? positionLinkPrefix, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(title);
        var runs = await MergeJob.RunsToMergeAsync(db, itemId, cancellation).ConfigureAwait(false);
        var newest = await db.Images.AsNoTracking().Where(i => i.ItemId == itemId).OrderByDescending(i => i.Version)
            .Select(i => i.Sha256).FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
        bool imageStored = newest is not null && store.Exists(newest);
        var identity = new StringBuilder()
            .Append(typeof(TimelineSvg).Assembly.ManifestModule.ModuleVersionId).Append('\n')
            .Append(typeof(ArchiveQueries).Assembly.ManifestModule.ModuleVersionId).Append('\n')
            .Append(itemId).Append('\n')
            .Append(string.Join(',', runs.Select(r => r.Id))).Append('\n')
            .Append(imageStored ? newest : "-").Append('\n')
            .Append(positionLinkPrefix ?? "-").Append('\n')
            .Append(title);
        string key = Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(identity.ToString())));
        string cache = Path.Combine(store.Root, "derived", "timelines", key[..2], $"{key}.json");
        if (File.Exists(cache))
        {
            try
            {
                await using var read = File.OpenRead(cache);
                if (await JsonSerializer.DeserializeAsync<TimelineDrawing>(read, cancellationToken: cancellation).ConfigureAwait(false) is { Drawing: not null } kept)
                {
                    return (kept, true);
                }
            }
            catch (Exception e) when (e is JsonException or IOException or UnauthorizedAccessException)
            {
                // A damaged or unreadable kept drawing is drawn anew (and replaced below, if the store lets us).
            }
        }

        var timeline = await TimelineAsync(itemId, cancellation).ConfigureAwait(false);
        int folded = timeline.Captures.Sum(c => c.Folded.Count);
        var drawing = timeline.Captures.Count == 0
            ? new TimelineDrawing(0, 0, null, string.Empty, null)
            : new TimelineDrawing(
                timeline.Captures.Count,
                folded,
                timeline.Image?.Spans.Count,
                TimelineSvg.Render(timeline, timeline.Image is null || positionLinkPrefix is null ? null : p => $"{positionLinkPrefix}{p}", title: title),
                folded > 0 ? TimelineSvg.Render(timeline, null, folded: true, title: "Settings that read nothing checkable") : null);

        // Written in the store's temporary folder (which its sweep clears), then moved into place: a reader sees the old
        // file, none, or the whole new one. The drawing is only kept to spare the next view; a store that cannot take
        // it (disk full, read-only) costs that, not the page.
        string temporary = Path.Combine(store.TempFolder, $"{Guid.NewGuid():N}.timeline.part");
        try
        {
            Directory.CreateDirectory(Path.GetDirectoryName(cache)!);
            await File.WriteAllBytesAsync(temporary, JsonSerializer.SerializeToUtf8Bytes(drawing), cancellation).ConfigureAwait(false);
            File.Move(temporary, cache, overwrite: true);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            File.Delete(temporary);
        }

        return (drawing, false);
    }
}
