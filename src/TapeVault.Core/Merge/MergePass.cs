using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Image;

namespace TapeVault.Core.Merge;

/// <summary>
/// One capture's contribution to a merge: every candidate of every detector setting, already given positions within
/// the capture by <see cref="BlockPositioner"/>. Only the candidates' stored fields are read, so a pass can be rebuilt
/// from the archive as well as taken from a live decode.
/// </summary>
public sealed record MergePass(ImageSource Capture, IReadOnlyList<BlockCandidate> Candidates, string CodeVersion)
{
    /// <summary>A pass from a decode; <paramref name="fileName"/> is the capture's file name as the user knows it.</summary>
    public static MergePass From(DecodeResult result, string fileName)
    {
        ArgumentNullException.ThrowIfNull(result);
        var c = result.Capture;
        return new MergePass(new ImageSource(c.Sha256, fileName, c.SampleRate, c.Channels, c.DurationSeconds), result.Candidates, result.CodeVersion);
    }
}

/// <summary>Bounds of the merge's work.</summary>
public sealed record MergeOptions
{
    /// <summary>How many of the least certain bits the repair search may flip, in every combination (2^k trials at most).</summary>
    public int RepairBits { get; init; } = 12;

    /// <summary>The most checksum trials the repair search makes for one position, the plain vote included.</summary>
    public int MaximumTrials { get; init; } = 4096;

    /// <summary>
    /// The least chance that a stream byte read by one capture is wrong, whatever its decision margins say; and the
    /// least chance for a byte that two captures or more read alike. A decoder's per-byte odds do not see a
    /// character framed on a false start bit after a dropout (its bits are then read cleanly, one bit off), so
    /// without a floor a long stream claims more certainty than it has. The defaults were fitted on synthetic tapes
    /// (seeds 1–4 of the benchmark's recovery corpus, `dotnet run --project tests/TapeVault.Bench -- calibration`)
    /// by the smallest expected calibration error; the benchmark reports the error on tapes of seeds 101 onwards.
    /// </summary>
    public double StreamByteErrorFloor { get; init; } = BlockScorer.UnseenByteError;

    /// <inheritdoc cref="StreamByteErrorFloor"/>
    public double StreamAgreedByteErrorFloor { get; init; } = 2e-4;

    /// <summary>
    /// The factor on the confidence of a stream segment that resumes after bytes no capture kept, for readings that
    /// resume after a dropout framed on a false start bit more often than their margins show. Fitted with the floors
    /// above: 1 since the FSK decoder takes a start bit after a loss of signal only on the character grid it kept
    /// before (0.1 was the fit while it took any fall to space).
    /// </summary>
    public double StreamAfterGapFactor { get; init; } = 1;

    /// <summary>
    /// The most a stream segment may claim when some of its bytes one capture alone read, and when every byte was
    /// read alike by two captures or more. Nothing checks a stream: a segment goes wrong as a whole (a character
    /// invented at the edge of a dropout, a stretch framed a bit off, a byte lost between two slots) far more often
    /// than its bytes' margins show, and on damage drawn from wide ranges (the trust benchmark's kcs-1200 tapes of
    /// seeds 100–129, below the seeds it reports on) segments one capture carried were right 45 % of the time at
    /// every confidence their bytes gave, and segments two captures agreed on 93 %. Fitted there, measured on others.
    /// </summary>
    public double StreamLoneSegmentCeiling { get; init; } = 0.45;

    /// <inheritdoc cref="StreamLoneSegmentCeiling"/>
    public double StreamAgreedSegmentCeiling { get; init; } = 0.93;

    /// <summary>The time the image records as its making; null for the clock's now.</summary>
    public DateTimeOffset? CreatedUtc { get; init; }

    /// <summary>The clock that says "now" when <see cref="CreatedUtc"/> is null (the system's unless the host gives its own).</summary>
    public TimeProvider Clock { get; init; } = TimeProvider.System;
}
