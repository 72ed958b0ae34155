using System.Globalization;
using Microsoft.AspNetCore.Mvc;
using TapeVault.Archive;
using TapeVault.Archive.Storage;
using TapeVault.Core.Formats;
using TapeVault.Web.Api;

namespace TapeVault.Web.Pages.Captures;

/// <summary>
/// One capture: its facts, the whole waveform, the blocks of a decode run, a zoom into any block with one detector
/// setting's threshold and decisions, the pulse-length histogram and the playback speed over time. Every choice is a
/// query parameter, so every view is a plain link that works without script, mouse or a second request.
/// </summary>
public sealed class CaptureModel(ArchiveDbContext db, ContentStore store, ProfileCatalog profiles, WebOptions web) : ArchivePage
{
    public const double DefaultZoomSeconds = CapturePlots.DefaultZoomSeconds;

    private readonly CapturePlots plots = new(db, store, profiles);

    [FromQuery(Name = "run")]
    public int? RunId { get; set; }

    [FromQuery(Name = "setting")]
    public string? Setting { get; set; }

    [FromQuery(Name = "block")]
    public int? Block { get; set; }

    [FromQuery(Name = "from")]
    public double? From { get; set; }

    [FromQuery(Name = "seconds")]
    public double? Seconds { get; set; }

    [FromQuery(Name = "scope")]
    public string? Scope { get; set; }

    /// <summary>The index of the first block in the list (default: the list centred on the block shown).</summary>
    [FromQuery(Name = "list")]
    public int? List { get; set; }

    /// <summary>How many blocks the list shows at once; a long capture has thousands.</summary>
    public const int ListedCount = 21;

    public int ListStart { get; private set; }

    public IReadOnlyList<BlockPositionView> Listed { get; private set; } = [];

    public int CaptureId { get; private set; }

    public CaptureFacts? Facts { get; private set; }

    public WaveformView? Overview { get; private set; }

    public BlockListView? Blocks { get; private set; }

    public BlockPositionView? Selected { get; private set; }

    public ZoomView? Zoom { get; private set; }

    public HistogramView? Histogram { get; private set; }

    public SpeedView? Speed { get; private set; }

    /// <summary>Why a plot is missing (the capture not decoded yet, its original unreadable), in words for the page.</summary>
    public List<string> Problems { get; } = [];

    public Task<IActionResult> OnGetAsync(int id) => LoadOrNotFoundAsync(() => LoadAsync(id));

    /// <summary>The curator takes the deck, operator, date and notes the file's own metadata suggests.</summary>
    public Task<IActionResult> OnPostUseFileDetailsAsync(int id) => TryAsync(
        async () =>
        {
            var actions = HttpContext.RequestServices.GetRequiredService<TapeVault.Archive.Curation.CuratorActions>();
            await actions.UseEmbeddedDetailsAsync(id, Agent, HttpContext.RequestAborted).ConfigureAwait(false);
            return RedirectToPage(new { id });
        },
        () => LoadAsync(id));

    /// <summary>A link to this page with the current choices, some replaced.</summary>
    public string Link(int? block = null, double? from = null, double? seconds = null, string? scope = null, string anchor = "", bool keepZoom = true, int? list = null, string? setting = null)
    {
        var query = new List<string>();
        void add(string name, string? value)
        {
            if (!string.IsNullOrEmpty(value))
            {
                query.Add($"{name}={Uri.EscapeDataString(value)}");
            }
        }

        add("run", Blocks?.Choice.RunId.ToString(CultureInfo.InvariantCulture));
        add("setting", setting ?? Blocks?.Choice.Setting);
        add("block", (block ?? Selected?.Position)?.ToString(CultureInfo.InvariantCulture));
        if (from is not null || keepZoom)
        {
            add("from", (from ?? Zoom?.Signal.FromSeconds)?.ToString("0.######", CultureInfo.InvariantCulture));
            add("seconds", (seconds ?? Zoom?.Signal.DurationSeconds)?.ToString("0.######", CultureInfo.InvariantCulture));
        }

        add("scope", scope ?? Histogram?.Scope);
        add("list", list?.ToString(CultureInfo.InvariantCulture));
        return $"/captures/{CaptureId}" + (query.Count > 0 ? "?" + string.Join("&", query) : string.Empty) + anchor;
    }

    /// <summary>Another run of this capture, with its own defaults (its blocks are not this run's).</summary>
    public string RunLink(int run) => $"/captures/{CaptureId}?run={run.ToString(CultureInfo.InvariantCulture)}";

    /// <summary>The same view through another setting of the run.</summary>
    public string SettingLink(string setting) => Link(setting: setting);

    /// <summary>The block list starting at the block <paramref name="fraction"/> of the way through the run.</summary>
    public string ListAt(double fraction) =>
        Link(list: (int)(fraction * Math.Max(0, (Blocks?.Blocks.Count ?? 0) - ListedCount)), anchor: "#blocks");

    /// <summary>The link that zooms to the start of <paramref name="block"/>.</summary>
    public string ZoomLink(BlockPositionView block)
    {
        ArgumentNullException.ThrowIfNull(block);
        return Link(block.Position, Math.Max(0, block.StartSeconds - CapturePlots.ZoomLeadSeconds), DefaultZoomSeconds, anchor: "#zoom");
    }

    /// <summary>The link that shows the whole of <paramref name="block"/> (cut to the longest zoom).</summary>
    public string WholeBlockLink(BlockPositionView block)
    {
        ArgumentNullException.ThrowIfNull(block);
        double from = Math.Max(0, block.StartSeconds - 0.02);
        return Link(block.Position, from, Math.Min(CapturePlots.MaximumZoomSeconds, block.EndSeconds - from + 0.02), anchor: "#zoom");
    }

    private async Task LoadAsync(int id)
    {
        CaptureId = id;
        plots.LeastFramesPerColumn = CapturePlots.LeastFramesPerColumnFor(User, web);
        var cancellation = HttpContext.RequestAborted;
        Facts = await plots.FactsAsync(id, cancellation).ConfigureAwait(false);
        try
        {
            Overview = await plots.OverviewAsync(id, CapturePlots.DefaultColumns, cancellation).ConfigureAwait(false);
        }
        catch (ArchiveConflictException e)
        {
            Problems.Add(e.Message);
        }

        if (Facts.Capture.Runs.Count == 0)
        {
            return;
        }

        CapturePlots.ChosenRun run;
        try
        {
            run = await plots.ChooseAsync(id, RunId, Setting, cancellation).ConfigureAwait(false);
        }
        catch (Exception e) when (e is ArchiveInputException or ArchiveNotFoundException)
        {
            // A bad run or setting in the link: say so, and show the defaults instead.
            Problems.Add(e.Message);
            run = await plots.ChooseAsync(id, null, null, cancellation).ConfigureAwait(false);
        }

        // Listed by position, the order the tape holds them (the best readings' start times can differ in order by a setting's lag).
        Blocks = new BlockListView(run.Choice, [.. CapturePlots.Blocks(run).OrderBy(b => b.Position).ThenBy(b => b.StartSeconds)]);
        Selected = Block is { } b ? Blocks.Blocks.FirstOrDefault(x => x.Position == b) : null;
        Selected ??= Blocks.Blocks.Count > 0 ? Blocks.Blocks[0] : null;
        double from = From ?? (Selected is { } s ? Math.Max(0, s.StartSeconds - CapturePlots.ZoomLeadSeconds) : 0);
        double seconds = Seconds ?? DefaultZoomSeconds;
        try
        {
            Zoom = await plots.ZoomAsync(run, from, seconds, CapturePlots.DefaultColumns, cancellation).ConfigureAwait(false);
        }
        catch (Exception e) when (e is ArchiveInputException or ArchiveConflictException)
        {
            Problems.Add(e.Message);
        }

        try
        {
            string scope = Scope == "whole" || Selected is null ? "whole" : "block";
            Histogram = await plots.HistogramAsync(run, scope, Selected?.Position, cancellation).ConfigureAwait(false);
        }
        catch (Exception e) when (e is ArchiveInputException or ArchiveNotFoundException or ArchiveConflictException)
        {
            Problems.Add(e.Message);
        }

        Speed = CapturePlots.Speed(run);
        int selectedIndex = Selected is null ? 0 : Blocks.Blocks.ToList().IndexOf(Selected);
        int first = List ?? (selectedIndex - (ListedCount / 2));
        ListStart = Math.Clamp(first, 0, Math.Max(0, Blocks.Blocks.Count - ListedCount));
        Listed = [.. Blocks.Blocks.Skip(ListStart).Take(ListedCount)];
    }
}
