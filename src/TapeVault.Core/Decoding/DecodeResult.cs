using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Decoding;

/// <summary>How far a decode has got, for progress bars.</summary>
public readonly record struct DecodeProgress(long SamplesDone, long SamplesTotal)
{
    public double Fraction => SamplesTotal > 0 ? Math.Min(1, (double)SamplesDone / SamplesTotal) : 0;
}

public sealed record DecodeOptions
{
    public ChannelChoice Channel { get; init; } = ChannelChoice.Mix;

    /// <summary>Samples per chunk: big enough to amortise the per-chunk work, small enough to stay in cache.</summary>
    public int ChunkSamples { get; init; } = 16_384;

    public IProgress<DecodeProgress>? Progress { get; init; }

    /// <summary>
    /// How many threads may run the symbol decoders (each takes its share of the settings); the decode uses at most
    /// two, and no more than the machine's cores. The bank runs on the reading thread besides.
    /// </summary>
    public int DecoderThreads { get; init; } = 2;

    /// <summary>Count every setting's edge intervals as the decode goes (<see cref="DecodeResult.Surveys"/>), so the plots' pulse-length histograms need no pass of their own.</summary>
    public bool SurveyIntervals { get; init; }

    /// <summary>
    /// Read the tone windows of a slow FSK profile every few samples rather than every sample
    /// (<see cref="Detection.ToneCorrelator.StrideFor"/>: every fourth at 300 baud and 44.1 kHz): about half the
    /// decode's processor time. It changes what a decode finds, and on held-out trust seeds it has not been shown to
    /// keep every wrong reading short of clean (docs/performance.md), so it is off unless asked for.
    /// </summary>
    public bool SparseToneReadings { get; init; }

    /// <summary>Columns of a min/max waveform overview made from the samples as they are read (<see cref="DecodeResult.Overview"/>); 0 for none.</summary>
    public int OverviewColumns { get; init; }

    public CancellationToken Cancellation { get; init; }
}

/// <summary>
/// Everything one capture × one bank produced: every candidate of every setting, and the best per position. A decode of
/// a capture file reads its candidates back from a spool file (<see cref="ReadingSpool"/>) that the result owns:
/// dispose of the result when done with its candidates, so the spool's file is given back at once rather than when the
/// collector next finalises it.
/// </summary>
public sealed record DecodeResult(
    CaptureInfo Capture,
    FormatProfile Profile,
    IReadOnlyList<DetectorSetting> Settings,
    IReadOnlyList<BlockCandidate> Candidates,
    IReadOnlyList<BlockCandidate> Best,
    string CodeVersion) : IDisposable
{
    /// <summary>The spool the candidates are read back from, when they are; closed by <see cref="Dispose"/>.</summary>
    public ReadingSpool? Spool { get; init; }

    public void Dispose() => Spool?.Dispose();

    /// <summary>Each setting's edge intervals over the whole capture, when the decode was asked to count them.</summary>
    public IReadOnlyList<Pulses.IntervalSurvey>? Surveys { get; init; }

    /// <summary>The waveform overview made from the samples as they were read, when the decode was asked for one.</summary>
    public WaveformOverview? Overview { get; init; }
}
