using Microsoft.AspNetCore.Mvc;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Timeline;
using TapeVault.Web.Api;

namespace TapeVault.Web.Pages.Items;

public sealed class ItemModel(ArchiveQueries queries, CuratorActions actions, JobDispatcher jobs) : ArchivePage
{
    public ItemDetail? Item { get; private set; }

    public IReadOnlyList<EventView> Events { get; private set; } = [];

    public IReadOnlyList<ProfileView> Profiles { get; private set; } = [];

    public IReadOnlyList<SettingView> Settings { get; } = ArchiveQueries.DefaultSettings();

    /// <summary>The default bank's settings grouped by what they assume about where the capture's signal comes from.</summary>
    public IReadOnlyList<SettingGroupView> SettingGroups { get; } = ArchiveQueries.SettingGroups();

    public IReadOnlyList<ImageSummary> Images { get; private set; } = [];

    public ImageDetail? Latest { get; private set; }

    /// <summary>The tape timeline as drawn (its lanes of settings that read something checkable, and those folded away).</summary>
    public TimelineDrawing? Timeline { get; private set; }

    [TempData]
    public string? Message { get; set; }

    [BindProperty]
    public DecodeForm Decode { get; set; } = new();

    /// <summary>How many image positions the positions table shows at a time (a long tape's table comes in pages).</summary>
    public const int PositionsPerPage = 100;

    /// <summary>The first position of the page of the positions table shown (0-based index into the image's blocks).</summary>
    public int PositionsFrom { get; private set; }

    public Task<IActionResult> OnGetAsync(int id, [FromQuery(Name = "positions")] int positions = 0) => LoadOrNotFoundAsync(async () =>
    {
        await LoadAsync(id).ConfigureAwait(false);
        int count = Latest?.Blocks.Count ?? 0;
        PositionsFrom = count == 0 ? 0 : Math.Clamp(positions, 0, count - 1) / PositionsPerPage * PositionsPerPage;
    });

    public Task<IActionResult> OnPostDecodeAsync(int id) => TryAsync(
        async () =>
        {
            var capture = await queries.CaptureAsync(Decode.CaptureId).ConfigureAwait(false);
            if (capture.ItemId != id)
            {
                return NotFound();
            }

            if (Decode.Settings.Count == 0)
            {
                throw new TapeVault.Archive.ArchiveInputException("Tick at least one detector setting.");
            }

            var job = await actions.QueueDecodeAsync(Decode.CaptureId, Decode.Profile, Decode.Settings, null, Agent).ConfigureAwait(false);
            await jobs.DispatchAsync(job, CancellationToken.None).ConfigureAwait(false);
            Message = $"Decode of capture {Decode.CaptureId} queued as job {job.Id}.";
            return Redirect($"/items/{id}");
        },
        () => LoadAsync(id));

    public IReadOnlyList<ExportView> Exports { get; private set; } = [];

    /// <summary>The profile the upload form decodes with unless told otherwise: the last one used on this tape, else the first.</summary>
    public string? UploadProfile => DefaultProfile ?? (Profiles.Count > 0 ? Profiles[0].Id : null);

    /// <summary>The profile the decode form offers first: the one this tape was last decoded with.</summary>
    public string? DefaultProfile => Item?.Captures.SelectMany(c => c.Runs).OrderByDescending(r => r.Id).FirstOrDefault()?.ProfileId;

    public Task<IActionResult> OnPostBagAsync(int id) => TryAsync(
        async () =>
        {
            var job = await actions.QueueScopedAsync(JobKinds.Bag, null, id, Agent).ConfigureAwait(false);
            await jobs.DispatchAsync(job, CancellationToken.None).ConfigureAwait(false);
            Message = $"Making a bag of this tape: job {job.Id}; the download appears below when it is done.";
            return Redirect($"/items/{id}");
        },
        () => LoadAsync(id));

    public Task<IActionResult> OnPostMergeAsync(int id) => TryAsync(
        async () =>
        {
            var job = await actions.QueueMergeAsync(id, Agent).ConfigureAwait(false);
            await jobs.DispatchAsync(job, CancellationToken.None).ConfigureAwait(false);
            Message = $"Merge queued as job {job.Id}; the new image version appears here when it is done.";
            return Redirect($"/items/{id}");
        },
        () => LoadAsync(id));

    private async Task LoadAsync(int id)
    {
        Item = await queries.ItemAsync(id, HttpContext.RequestAborted).ConfigureAwait(false);
        Events = await queries.ItemEventsAsync(id, HttpContext.RequestAborted).ConfigureAwait(false);
        Profiles = queries.Profiles();

        // The timeline first, so that its time (told in a Server-Timing header, W3C Server Timing) includes reading
        // the newest image when it is drawn anew; a drawing kept from an earlier view says so in the header.
        long started = System.Diagnostics.Stopwatch.GetTimestamp();
        var (timeline, cached) = await queries.TimelineDrawingAsync(id, TimelineDrawings.PageTitle(Item!.AccessionNumber), TimelineDrawings.PagePositionLinks(id), HttpContext.RequestAborted).ConfigureAwait(false);
        Timeline = timeline;
        double milliseconds = System.Diagnostics.Stopwatch.GetElapsedTime(started).TotalMilliseconds;
        string how = cached ? "tape timeline drawn earlier, read" : "tape timeline read and drawn";
        Response.Headers.Append("Server-Timing", $"timeline;desc=\"{how}\";dur={milliseconds.ToString("0.0", System.Globalization.CultureInfo.InvariantCulture)}");
        Images = await queries.ImagesAsync(id, HttpContext.RequestAborted).ConfigureAwait(false);
        if (Images.Count > 0)
        {
            try
            {
                Latest = await queries.ImageAsync(Images[0].Id, HttpContext.RequestAborted).ConfigureAwait(false);
            }
            catch (Exception e) when (e is TapeVault.Archive.ArchiveNotFoundException or TapeVault.Archive.ArchiveConflictException)
            {
                ModelState.AddModelError(string.Empty, e.Message);
            }
        }

        Exports = await queries.ExportsAsync(null, id, HttpContext.RequestAborted).ConfigureAwait(false);
    }

    public sealed class DecodeForm
    {
        public int CaptureId { get; set; }

        public string Profile { get; set; } = string.Empty;

        public List<string> Settings { get; set; } = [];
    }
}
