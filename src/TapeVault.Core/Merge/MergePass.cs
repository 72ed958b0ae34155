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
        // The merge looks at the readings again and again: they are read back from the decode's spool once, here.
        return new MergePass(new ImageSource(c.Sha256, fileName, c.SampleRate, c.Channels, c.DurationSeconds), [.. result.Candidates], result.CodeVersion);
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
    /// The most patterns the repair search tries after one that holds, for its confidence; the chance of those it does
    /// not try is counted against the one that holds, so a smaller bound makes the merge faster and its voted positions
    /// less sure, never surer.
    /// </summary>
    public int TrialsAfterHit { get; init; } = 4096;

    /// <summary>
    /// The least chance that a stream byte one capture read is wrong, whatever its decision margins say (a character
    /// framed one bit off reads cleanly); captures that read a byte alike are all wrong only if each is, so for k of
    /// them the floor is this to the power k. The default is <see cref="BlockScorer.UnseenByteError"/>, the floor every
    /// unchecked byte gets from the block scorer.
    /// </summary>
    public double StreamByteErrorFloor { get; init; } = BlockScorer.UnseenByteError;

    /// <summary>
    /// The factor on the confidence of a stream segment that resumes after bytes no capture kept, for readings that
    /// resume after a dropout framed on a false start bit more often than their margins show: 1 since the FSK decoder
    /// takes a start bit after a loss of signal only on the character grid it kept before, and the characters at the
    /// edge of what each capture read carry their own doubt (StreamMerge.EdgeCharacterError).
    /// </summary>
    public double StreamAfterGapFactor { get; init; } = 1;

    /// <summary>The time the image records as its making; null for the clock's now.</summary>
    public DateTimeOffset? CreatedUtc { get; init; }

    /// <summary>The clock that says "now" when <see cref="CreatedUtc"/> is null (the system's unless the host gives its own).</summary>
    public TimeProvider Clock { get; init; } = TimeProvider.System;
}
