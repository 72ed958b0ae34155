using TapeVault.Core.Text;
using System.Collections.Concurrent;
using System.Security.Claims;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Runs;
using TapeVault.Archive.Storage;
using TapeVault.Core.Audio;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;

namespace TapeVault.Web.Api;

/// <summary>
/// The reads behind the capture page and its JSON endpoints: the overview, the blocks of a run, a zoomed stretch with
/// one setting's threshold and edges, the pulse-length histogram and the measured speed. Everything is computed from
/// the stored original, which never changes, so results depend only on the capture's SHA-256 and the choices made.
/// </summary>
public sealed class CapturePlots(ArchiveDbContext db, ContentStore store, ProfileCatalog profiles)
{
    public const int DefaultColumns = CaptureOverviews.DefaultColumns;
    public const int MaximumColumns = 4000;
    public const double MaximumZoomSeconds = 20;
    public const double MinimumZoomSeconds = 0.001;
    public const int HistogramBins = WholeCaptureSurveys.Bins;

    /// <summary>The default zoom: the first 40 ms of a block, where the sync and the first bytes are.</summary>
    public const double DefaultZoomSeconds = 0.04;

    /// <summary>A default zoom starts this long before its block, so the block's first edges are not on the frame's edge.</summary>
    public const double ZoomLeadSeconds = 0.005;

    /// <summary>
    /// Run before a zoomed stretch so that the filters and the envelope have settled by its first sample: the DC block's
    /// time constant is 5 ms at 30 Hz and the envelope falls by 1/e in 20 ms, so a quarter second leaves no trace of the
    /// rested start. The decoder ran from the start of the capture, so the trigger's state can still differ for a moment.
    /// </summary>
    public const double WarmUpSeconds = 0.25;

    /// <summary>The capture page reads the capture as the decoder does by default; the channel a run used is kept with its job, not the run.</summary>
    public const ChannelChoice Channel = ChannelChoice.Mix;

    // Whole-capture histograms take seconds on a long capture; they depend only on the original and the choices.
    private static readonly ConcurrentDictionary<string, Task<PulseHistogramResult>> WholeCaptureHistograms = new(StringComparer.Ordinal);
    private const int WholeCaptureHistogramsKept = 64;

    /// <summary>
    /// Where viewers may not download originals, no plot shows them the capture finer than this many samples a column:
    /// enough for the shape of a pulse, not enough to rebuild the recording from zoom after zoom.
    /// </summary>
    public const int ViewerFramesPerColumn = 8;

    /// <summary>The fewest samples a column of the overview or a zoom stands for (1: every sample, for curators).</summary>
    public int LeastFramesPerColumn { get; set; } = 1;

    /// <summary>What <see cref="LeastFramesPerColumn"/> is for this user under the app's settings.</summary>
    public static int LeastFramesPerColumnFor(ClaimsPrincipal user, WebOptions web)
    {
        ArgumentNullException.ThrowIfNull(user);
        ArgumentNullException.ThrowIfNull(web);
        return web.ViewersMayDownloadOriginals || user.IsInRole(Roles.Curator) ? 1 : ViewerFramesPerColumn;
    }

    private int Columns(int asked, long frames) =>
        (int)Math.Max(1, Math.Min(Math.Clamp(asked, 50, MaximumColumns), frames / Math.Max(1, LeastFramesPerColumn)));

    public async Task<CaptureFacts> FactsAsync(int captureId, CancellationToken cancellation = default)
    {
        var capture = await db.Captures.AsNoTracking().Include(c => c.Runs).Include(c => c.Item)
            .FirstOrDefaultAsync(c => c.Id == captureId, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no capture {captureId}.");
        return new CaptureFacts(ArchiveQueries.ToSummary(capture), capture.Item!.AccessionNumber, capture.Item.Title);
    }

    /// <summary>The whole capture in <paramref name="columns"/> min/max columns, cached beside the store.</summary>
    public async Task<WaveformView> OverviewAsync(int captureId, int columns = DefaultColumns, CancellationToken cancellation = default)
    {
        var capture = await CaptureAsync(captureId, cancellation).ConfigureAwait(false);
        long frames = (long)Math.Round(capture.DurationSeconds * capture.SampleRate);
        var (overview, cached) = await CaptureOverviews.GetAsync(store, capture.Sha256, Columns(columns, frames), Channel, cancellation).ConfigureAwait(false);
        return ToView(overview, 0, cached);
    }

    public async Task<BlockListView> BlocksAsync(int captureId, int? runId, string? setting, CancellationToken cancellation = default)
    {
        var run = await ChooseAsync(captureId, runId, setting, cancellation).ConfigureAwait(false);
        return new BlockListView(run.Choice, Blocks(run));
    }

    /// <summary>The run's block positions in tape order, each as the chosen setting read it (or the best reading where it missed).</summary>
    public static IReadOnlyList<BlockPositionView> Blocks(ChosenRun run)
    {
        ArgumentNullException.ThrowIfNull(run);
        return [.. run.Candidates.GroupBy(c => c.Position).Select(g =>
        {
            var own = g.Where(c => c.SettingName == run.Setting.Name).ToList();
            var pick = Best(own.Count > 0 ? own : g);
            return new BlockPositionView(g.Key, pick.IdentityKey, pick.Status, pick.Confidence, pick.StartSeconds, pick.EndSeconds, pick.SettingName, pick.Speed);
        }).OrderBy(b => b.StartSeconds)];
    }

    /// <summary>
    /// The stretch [<paramref name="fromSeconds"/>, + <paramref name="seconds"/>) of the capture and what the chosen
    /// setting made of it, worked out afresh by running that one setting over the stretch.
    /// </summary>
    /// <remarks>Without a start, the stretch begins just before the run's first block (or at the start of the capture).</remarks>
    public async Task<ZoomView> ZoomAsync(int captureId, int? runId, string? setting, double? fromSeconds, double? seconds, int columns = DefaultColumns, CancellationToken cancellation = default)
    {
        var run = await ChooseAsync(captureId, runId, setting, cancellation).ConfigureAwait(false);
        double from = fromSeconds ?? (Blocks(run) is { Count: > 0 } blocks ? Math.Max(0, blocks[0].StartSeconds - ZoomLeadSeconds) : 0);
        return await ZoomAsync(run, from, seconds ?? DefaultZoomSeconds, columns, cancellation).ConfigureAwait(false);
    }

    public async Task<ZoomView> ZoomAsync(ChosenRun run, double fromSeconds, double seconds, int columns = DefaultColumns, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(run);
        var capture = run.Capture;
        if (!double.IsFinite(fromSeconds) || !double.IsFinite(seconds))
        {
            throw new ArchiveInputException("The stretch to zoom to needs a start and a length in seconds.");
        }

        seconds = Math.Clamp(seconds, MinimumZoomSeconds, MaximumZoomSeconds);
        fromSeconds = Math.Clamp(fromSeconds, 0, Math.Max(0, capture.DurationSeconds - MinimumZoomSeconds));
        int rate = capture.SampleRate;
        long windowStart = (long)Math.Round(fromSeconds * rate);
        long warmStart = Math.Max(0, windowStart - (long)Math.Round(WarmUpSeconds * rate));
        int warmFrames = (int)(windowStart - warmStart);
        int windowFrames = (int)Math.Round(seconds * rate);
        var path = OriginalPath(capture);
        var samples = await Task.Run(() => ReadExcerpt(path, warmStart, warmFrames + windowFrames), cancellation).ConfigureAwait(false);
        if (samples.Length <= warmFrames)
        {
            throw new ArchiveInputException($"The capture ends at {capture.DurationSeconds:0.000} s, before {fromSeconds:0.000} s.");
        }

        var trace = DetectorTrace.Run(samples, rate, run.Setting, warmStart);
        var window = samples.AsSpan(warmFrames);
        int used = Columns(columns, window.Length);
        var signal = WaveformOverview.FromSamples(window, rate, used);
        var conditioned = WaveformOverview.FromSamples(trace.Conditioned.AsSpan()[warmFrames..], rate, used);
        var band = new float[conditioned.Columns];
        var bandSamples = trace.Band.AsSpan()[warmFrames..];
        for (int c = 0; c < band.Length; c++)
        {
            long first = conditioned.FirstFrame(c);
            long next = conditioned.FirstFrame(c + 1);
            float widest = 0;
            for (long i = first; i < next; i++)
            {
                widest = Math.Max(widest, bandSamples[(int)i]);
            }

            band[c] = widest;
        }

        double windowFrom = (double)windowStart / rate;
        double windowTo = (double)(windowStart + window.Length) / rate;
        var edges = new List<EdgeView>();
        foreach (var edge in trace.Edges)
        {
            double t = edge.Sample / rate;
            if (t >= windowFrom && t < windowTo)
            {
                edges.Add(new EdgeView(t, edge.Rising, edge.Level));
            }
        }

        return new ZoomView(run.Choice, ToView(signal, windowFrom, false), ToView(conditioned, windowFrom, false), band, edges, (double)warmFrames / rate);
    }

    /// <summary>
    /// Intervals between the chosen setting's edges, over one block position (<paramref name="scope"/> "block") or the whole
    /// capture ("whole"), with the profile's durations and decision boundaries placed for the measured speed.
    /// </summary>
    public async Task<HistogramView> HistogramAsync(int captureId, int? runId, string? setting, string? scope, int? position, CancellationToken cancellation = default)
    {
        var run = await ChooseAsync(captureId, runId, setting, cancellation).ConfigureAwait(false);
        return await HistogramAsync(run, scope, position, cancellation).ConfigureAwait(false);
    }

    public async Task<HistogramView> HistogramAsync(ChosenRun run, string? scope, int? position, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(run);
        var blocks = Blocks(run);

        // Without a scope, one block when the run found any, else the whole capture.
        bool whole = scope switch
        {
            null or "" => blocks.Count == 0,
            "block" => false,
            "whole" => true,
            _ => throw new ArchiveInputException("The histogram's scope is \"block\" or \"whole\"."),
        };
        // The speed the marks are placed for is the one the decode job kept the whole-capture survey under: one rule.
        double speed = WholeCaptureSurveys.SpeedOf(
            run.Candidates.Select(c => (c.Position, c.SettingName, c.Status == "clean", c.Confidence, c.Speed, c.StartSeconds)),
            run.Setting.Name);
        double from = 0, to = run.Capture.DurationSeconds;
        if (!whole)
        {
            if (blocks.Count == 0)
            {
                throw new ArchiveNotFoundException($"Run {run.Choice.RunId} found no blocks; choose the whole capture instead.");
            }

            var block = position is { } p
                ? blocks.FirstOrDefault(b => b.Position == p) ?? throw new ArchiveNotFoundException($"Run {run.Choice.RunId} has no block position {p}.")
                : blocks[0];
            (from, to) = (block.StartSeconds, block.EndSeconds);
            if (block.Setting == run.Setting.Name && block.Speed > 0)
            {
                speed = block.Speed;
            }
        }

        var marks = PulseMarks.For(run.Profile, run.Setting, speed);
        PulseHistogramResult result;
        bool cached = false;
        if (whole)
        {
            // Made by the decode job for every setting of its run; made here only when missing (an older run), then kept.
            string kept = WholeCaptureSurveys.CachePath(store, run.Capture.Sha256, run.Setting, marks);
            if (WholeCaptureSurveys.TryRead(kept) is { } survey)
            {
                result = survey;
                cached = true;
            }
            else
            {
                result = await SurveyAsync(run, marks, kept, cancellation).ConfigureAwait(false);
            }
        }
        else
        {
            int rate = run.Capture.SampleRate;
            long start = (long)Math.Round(from * rate);
            long warmStart = Math.Max(0, start - (long)Math.Round(WarmUpSeconds * rate));
            int frames = (int)Math.Min(int.MaxValue, (long)Math.Round(to * rate) - warmStart);
            var samples = await Task.Run(() => ReadExcerpt(OriginalPath(run.Capture), warmStart, frames), cancellation).ConfigureAwait(false);
            var trace = DetectorTrace.Run(samples, rate, run.Setting, warmStart);
            var histogram = new PulseHistogram(marks.LowestSeconds, marks.HighestSeconds, HistogramBins);
            var inBlock = trace.Edges.Where(e => e.Sample >= start).ToArray();
            histogram.AddIntervals(inBlock, rate);
            result = histogram.ToResult();
        }

        var bins = new HistogramBinView[result.Bins];
        for (int i = 0; i < bins.Length; i++)
        {
            bins[i] = new HistogramBinView(result.BinEdgesSeconds[i], result.BinEdgesSeconds[i + 1], result.Counts[i]);
        }

        return new HistogramView(run.Choice, whole ? "whole" : "block", from, to, marks.Measures, speed, bins, result.Below, result.Above,
            [.. marks.Marks.Select(m => new PulseMarkView(m.Label, m.Seconds, m.Kind.ToString().ToLowerInvariant()))], cached);
    }

    /// <summary>A whole-capture survey nobody made ahead: one computation however many ask at once, then kept on disk.</summary>
    private async Task<PulseHistogramResult> SurveyAsync(ChosenRun run, PulseMarkSet marks, string kept, CancellationToken cancellation)
    {
        var path = OriginalPath(run.Capture);
        if (WholeCaptureHistograms.Count >= WholeCaptureHistogramsKept)
        {
            WholeCaptureHistograms.Clear();
        }

        var survey = WholeCaptureHistograms.GetOrAdd(kept, _ => Task.Run(() =>
        {
            return WholeCaptureSurveys.MeasureAndKeep(store, path, kept, run.Setting, marks);
        }));
        try
        {
            var result = await survey.WaitAsync(cancellation).ConfigureAwait(false);
            WholeCaptureHistograms.TryRemove(kept, out _);
            return result;
        }
        catch (Exception e) when (e is not OperationCanceledException)
        {
            // A failed survey is not kept: the next request tries again.
            WholeCaptureHistograms.TryRemove(kept, out _);
            if (e is CaptureFormatException)
            {
                throw new ArchiveConflictException($"The stored original could not be read: {e.Message}");
            }

            throw;
        }
    }

    /// <summary>The speed each of the chosen setting's block readings was decoded at, in tape order.</summary>
    public async Task<SpeedView> SpeedAsync(int captureId, int? runId, string? setting, CancellationToken cancellation = default)
    {
        var run = await ChooseAsync(captureId, runId, setting, cancellation).ConfigureAwait(false);
        return Speed(run);
    }

    /// <summary>
    /// A position's best reading: clean first, then the most confident, then the earliest (as in
    /// WholeCaptureSurveys.SpeedOf; the order rows come back in is the database's own, PostgreSQL's not SQLite's).
    /// </summary>
    private static CandidatePoint Best(IEnumerable<CandidatePoint> readings) =>
        readings.OrderByDescending(c => c.Status == "clean").ThenByDescending(c => c.Confidence).ThenBy(c => c.StartSeconds).First();

    public static SpeedView Speed(ChosenRun run)
    {
        ArgumentNullException.ThrowIfNull(run);
        var points = run.Candidates.Where(c => c.SettingName == run.Setting.Name)
            .GroupBy(c => c.Position)
            .Select(Best)
            .OrderBy(c => c.StartSeconds)
            .Select(c => new SpeedPointView(c.Position, c.IdentityKey, c.StartSeconds, c.EndSeconds, c.Speed, c.Status))
            .ToList();
        return new SpeedView(run.Choice, points, Median(points.Select(p => p.Speed)));
    }

    /// <summary>The run (newest when none is named) and setting (the one with the most clean readings when none is named) a plot shows.</summary>
    public async Task<ChosenRun> ChooseAsync(int captureId, int? runId, string? setting, CancellationToken cancellation = default)
    {
        var capture = await CaptureAsync(captureId, cancellation).ConfigureAwait(false);
        var runs = await db.Runs.AsNoTracking().Where(r => r.CaptureId == captureId).OrderBy(r => r.Id).ToListAsync(cancellation).ConfigureAwait(false);
        if (runs.Count == 0)
        {
            throw new ArchiveNotFoundException($"Capture {captureId} has not been decoded yet.");
        }

        var run = runId is { } id
            ? runs.FirstOrDefault(r => r.Id == id) ?? throw new ArchiveNotFoundException($"Capture {captureId} has no decode run {id}.")
            : runs[^1];
        if (!profiles.TryGet(run.ProfileId, out var profile))
        {
            throw new ArchiveConflictException($"Run {run.Id} used the format profile '{run.ProfileId}', which this installation no longer has.");
        }

        var settings = SettingsJson.Read(run.SettingsJson);
        if (settings.Count == 0)
        {
            throw new ArchiveConflictException($"Run {run.Id} recorded no detector settings.");
        }

        // Only the columns the plots need: the payload and margin blobs stay in the database.
        var candidates = await db.Candidates.AsNoTracking().Where(c => c.RunId == run.Id)
            .Select(c => new CandidatePoint(c.Position, c.SettingIndex, c.SettingName, c.IdentityKey, Vocabulary.Of(c.Status).Name, c.Confidence, c.Speed, c.StartSeconds, c.EndSeconds))
            .ToListAsync(cancellation).ConfigureAwait(false);

        DetectorSetting chosen;
        if (!string.IsNullOrEmpty(setting))
        {
            chosen = settings.FirstOrDefault(s => s.Name == setting)
                ?? throw new ArchiveInputException($"Run {run.Id} has no detector setting '{setting}'; it ran {string.Join(", ", settings.Select(s => s.Name))}.");
        }
        else
        {
            chosen = WholeCaptureSurveys.ShownSetting(settings, candidates.Select(c => (c.SettingName, c.Status == "clean")));
        }

        var choice = new PlotChoice(run.Id, profile.Id, profile.Family.ToString().ToLowerInvariant(), chosen.Name, chosen.Describe(),
            [.. settings.Select(s => s.Name)], [.. runs.Select(r => r.Id)]);
        return new ChosenRun(capture, profile, chosen, choice, candidates);
    }

    private async Task<Capture> CaptureAsync(int captureId, CancellationToken cancellation) =>
        await db.Captures.AsNoTracking().FirstOrDefaultAsync(c => c.Id == captureId, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no capture {captureId}.");

    private string OriginalPath(Capture capture)
    {
        var path = store.PathOf(capture.Sha256);
        return File.Exists(path)
            ? path
            : throw new ArchiveConflictException($"The stored original of capture {capture.Id} is missing from the content store; run a fixity audit.");
    }

    private static float[] ReadExcerpt(string path, long start, int frames)
    {
        try
        {
            return CaptureExcerpt.Read(path, start, frames, Channel);
        }
        catch (CaptureFormatException e)
        {
            throw new ArchiveConflictException($"The stored original could not be read: {e.Message}");
        }
    }

    private static WaveformView ToView(WaveformOverview overview, double fromSeconds, bool cached) =>
        new(overview.SampleRate, overview.FrameCount, fromSeconds, overview.DurationSeconds,
            overview.Columns == 0 ? 0 : overview.DurationSeconds / overview.Columns, overview.Minimum, overview.Maximum, cached);

    private static double? Median(IEnumerable<double> values)
    {
        var sorted = values.Where(v => v > 0 && double.IsFinite(v)).Order().ToArray();
        return sorted.Length == 0 ? null : sorted.Length % 2 == 1 ? sorted[sorted.Length / 2] : 0.5 * (sorted[(sorted.Length / 2) - 1] + sorted[sorted.Length / 2]);
    }

    /// <summary>The parts of a stored candidate the plots use.</summary>
    public sealed record CandidatePoint(int Position, int SettingIndex, string SettingName, string IdentityKey, string Status, double Confidence, double Speed, double StartSeconds, double EndSeconds);

    /// <summary>A run resolved for plotting: the capture, its profile, the chosen setting and the run's candidates.</summary>
    public sealed record ChosenRun(Capture Capture, FormatProfile Profile, DetectorSetting Setting, PlotChoice Choice, IReadOnlyList<CandidatePoint> Candidates);
}
