namespace TapeVault.Web.Api;

/// <summary>A capture with the item it belongs to, for the capture page's heading and facts.</summary>
public sealed record CaptureFacts(CaptureSummary Capture, string AccessionNumber, string ItemTitle);

/// <summary>Min/max columns of a stretch of signal: column i covers [FromSeconds + i·SecondsPerColumn, … + SecondsPerColumn).</summary>
public sealed record WaveformView(
    int SampleRate,
    long FrameCount,
    double FromSeconds,
    double DurationSeconds,
    double SecondsPerColumn,
    IReadOnlyList<float> Minimum,
    IReadOnlyList<float> Maximum,
    bool FromCache);

/// <summary>Which run and setting a plot shows, and what else could be chosen.</summary>
public sealed record PlotChoice(int RunId, string ProfileId, string Family, string Setting, string SettingDescription, IReadOnlyList<string> Settings, IReadOnlyList<int> Runs);

/// <summary>One block position of a run, where the chosen setting (or, if it missed it, the best reading) found it.</summary>
public sealed record BlockPositionView(int Position, string Identity, string Status, double Confidence, double StartSeconds, double EndSeconds, string Setting, double Speed);

/// <summary>The blocks of the chosen run, in tape order.</summary>
public sealed record BlockListView(PlotChoice Choice, IReadOnlyList<BlockPositionView> Blocks);

/// <summary>A counted edge of the detector, in seconds from the start of the capture.</summary>
public sealed record EdgeView(double Seconds, bool Rising, double Level);

/// <summary>
/// A zoomed stretch: the capture's signal, and what the chosen setting made of it: the conditioned signal its Schmitt
/// trigger saw, the half-width of the switching band (largest in each column), and the edges it counted.
/// </summary>
public sealed record ZoomView(
    PlotChoice Choice,
    WaveformView Signal,
    WaveformView Conditioned,
    IReadOnlyList<float> Band,
    IReadOnlyList<EdgeView> Edges,
    double WarmUpSeconds);

/// <summary>One bin of the pulse-length histogram.</summary>
public sealed record HistogramBinView(double FromSeconds, double ToSeconds, long Count);

/// <summary>A marked duration: kind "nominal" (what the format writes), "boundary" (where a decision changes) or "limit".</summary>
public sealed record PulseMarkView(string Label, double Seconds, string Kind);

/// <summary>How long the intervals between the chosen setting's edges were, over a block or the whole capture (Cached: made by the decode job or an earlier request).</summary>
public sealed record HistogramView(
    PlotChoice Choice,
    string Scope,
    double FromSeconds,
    double ToSeconds,
    string Measures,
    double Speed,
    IReadOnlyList<HistogramBinView> Bins,
    long Below,
    long Above,
    IReadOnlyList<PulseMarkView> Marks,
    bool Cached = false);

/// <summary>The playback speed a block was read at (1 = nominal; above 1 the tape ran fast), where the block lies in the capture.</summary>
public sealed record SpeedPointView(int Position, string Identity, double StartSeconds, double EndSeconds, double Speed, string Status);

public sealed record SpeedView(PlotChoice Choice, IReadOnlyList<SpeedPointView> Points, double? MedianSpeed);
