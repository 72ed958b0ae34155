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

    public CancellationToken Cancellation { get; init; }
}

/// <summary>Everything one capture × one bank produced: every candidate of every setting, and the best per position.</summary>
public sealed record DecodeResult(
    CaptureInfo Capture,
    FormatProfile Profile,
    IReadOnlyList<DetectorSetting> Settings,
    IReadOnlyList<BlockCandidate> Candidates,
    IReadOnlyList<BlockCandidate> Best,
    string CodeVersion);
