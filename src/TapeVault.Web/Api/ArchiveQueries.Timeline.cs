using TapeVault.Archive.Timeline;

namespace TapeVault.Web.Api;

public sealed partial class ArchiveQueries
{
    /// <summary>
    /// The tape timeline of an item, drawn, and whether it came from the drawings kept under the store's
    /// <c>derived/timelines</c> folder (<see cref="TimelineDrawings"/>: the decode and merge jobs keep the page's drawing
    /// when they change it, and one drawn here is kept for the next view).
    /// </summary>
    public Task<(TimelineDrawing Drawing, bool Cached)> TimelineDrawingAsync(int itemId, string title, string? positionLinkPrefix, CancellationToken cancellation = default) =>
        TimelineDrawings.DrawingAsync(db, store, itemId, title, positionLinkPrefix, ReadImageAsync, cancellation);
}
