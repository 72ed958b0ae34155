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

/// <summary>
/// Bounds of the merge's work, validated when built (and when changed with <c>with</c>): a bound the merge cannot work
/// with is refused at once, and the error names the field.
/// </summary>
public sealed record MergeOptions
{
    /// <summary>The most bits the repair search may flip: it keeps a table of 2^k patterns, indexed by an int.</summary>
    public const int MostRepairBits = 30;

    private readonly int _repairBits = 12;
    private readonly int _maximumTrials = 4096;
    private readonly int _trialsAfterHit = 4096;
    private readonly double _streamByteErrorFloor = BlockScorer.UnseenByteError;
    private readonly double _streamAfterGapFactor = 1;
    private readonly TimeProvider _clock = TimeProvider.System;

    /// <summary>
    /// How many of the least certain bits the repair search may flip, in every combination (2^k trials at most); 0 to
    /// <see cref="MostRepairBits"/>.
    /// </summary>
    public int RepairBits
    {
        get => _repairBits;
        init => _repairBits = InRange(value, 0, MostRepairBits, nameof(RepairBits));
    }

    /// <summary>The most checksum trials the repair search makes for one position, the plain vote included: at least 1.</summary>
    public int MaximumTrials
    {
        get => _maximumTrials;
        init => _maximumTrials = InRange(value, 1, int.MaxValue, nameof(MaximumTrials));
    }

    /// <summary>
    /// The most patterns the repair search tries after one that holds, for its confidence; the chance of those it does
    /// not try is counted against the one that holds, so a smaller bound makes the merge faster and its voted positions
    /// less sure, never surer. 0 or more.
    /// </summary>
    public int TrialsAfterHit
    {
        get => _trialsAfterHit;
        init => _trialsAfterHit = InRange(value, 0, int.MaxValue, nameof(TrialsAfterHit));
    }

    /// <summary>
    /// The least chance that a stream byte one capture read is wrong, whatever its decision margins say (a character
    /// framed one bit off reads cleanly); captures that read a byte alike are all wrong only if each is, so for k of
    /// them the floor is this to the power k. The default is <see cref="BlockScorer.UnseenByteError"/>, the floor every
    /// unchecked byte gets from the block scorer. A chance: 0 or more, below 1.
    /// </summary>
    public double StreamByteErrorFloor
    {
        get => _streamByteErrorFloor;
        init => _streamByteErrorFloor = value >= 0 && value < 1
            ? value
            : throw new ArgumentOutOfRangeException(nameof(StreamByteErrorFloor), value, $"{nameof(StreamByteErrorFloor)} is a chance: 0 or more and below 1.");
    }

    /// <summary>
    /// The factor on the confidence of a stream segment that resumes after bytes no capture kept, for readings that
    /// resume after a dropout framed on a false start bit more often than their margins show: 1 since the FSK decoder
    /// takes a start bit after a loss of signal only on the character grid it kept before, and the characters at the
    /// edge of what each capture read carry their own doubt (StreamMerge.EdgeCharacterError). Above 0, at most 1 (it
    /// lowers a confidence, never raises it).
    /// </summary>
    public double StreamAfterGapFactor
    {
        get => _streamAfterGapFactor;
        init => _streamAfterGapFactor = value > 0 && value <= 1
            ? value
            : throw new ArgumentOutOfRangeException(nameof(StreamAfterGapFactor), value, $"{nameof(StreamAfterGapFactor)} must be above 0 and at most 1.");
    }

    /// <summary>The time the image records as its making; null for the clock's now.</summary>
    public DateTimeOffset? CreatedUtc { get; init; }

    /// <summary>The clock that says "now" when <see cref="CreatedUtc"/> is null (the system's unless the host gives its own).</summary>
    public TimeProvider Clock
    {
        get => _clock;
        init => _clock = value ?? throw new ArgumentNullException(nameof(Clock), $"{nameof(Clock)} is needed (TimeProvider.System for the system's).");
    }

    private static int InRange(int value, int least, int most, string field) =>
        value >= least && value <= most
            ? value
            : throw new ArgumentOutOfRangeException(field, value, most == int.MaxValue ? $"{field} must be {least} or more." : $"{field} must be from {least} to {most}.");
}
