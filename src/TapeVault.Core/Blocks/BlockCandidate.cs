using System.Collections.Immutable;

namespace TapeVault.Core.Blocks;

public enum BlockStatus
{
    /// <summary>The block began where the format marks a block start, and its checksum holds over bytes that prove it (see <see cref="BlockScorer"/>).</summary>
    Clean,

    /// <summary>The checksum does not hold, or the block was cut short, or its holding check is no evidence; <see cref="BlockCandidate.Doubts"/> says which.</summary>
    Failed,

    /// <summary>The format has no checksum.</summary>
    Unchecked,
}

/// <summary>What identifies a block on the tape: the header's file and block number, or its order where there is no header.</summary>
public readonly record struct BlockIdentity(string? FileName, long? FileId, long? BlockNumber, int Ordinal)
{
    public string Key =>
        FileName is null && FileId is null && BlockNumber is null
            ? $"#{Ordinal}"
            : $"{FileName}{(FileId is { } id ? $"/{id}" : string.Empty)}:{BlockNumber}";

    public override string ToString() => Key;
}

/// <summary>
/// One block as one detector setting read it from one capture, with everything needed to judge it:
/// the checksum result, how close each decision came to its boundary, and an estimate of the chance the payload is right.
/// </summary>
public sealed record BlockCandidate
{
    public required int SettingIndex { get; init; }

    public required string SettingName { get; init; }

    /// <summary>Index of the block position on the tape (assigned once every setting has been read).</summary>
    public int Position { get; init; } = -1;

    public required BlockIdentity Identity { get; init; }

    public required ImmutableArray<byte> Header { get; init; }

    public required ImmutableArray<byte> Payload { get; init; }

    /// <summary>The check value read from tape, or null when the format has none or the block was cut short.</summary>
    public uint? StoredChecksum { get; init; }

    public required BlockStatus Status { get; init; }

    /// <summary>Why the block is not clean, or what lowers the trust in it (none in readings stored before these were kept).</summary>
    public BlockDoubts Doubts { get; init; }

    /// <summary>Estimated probability that the payload is right, 0..1: the model's estimate through the family's calibration map (<see cref="ConfidenceMap"/>).</summary>
    public required double Confidence { get; init; }

    /// <summary>The scorer's own estimate before calibration (what the calibration map is fitted on; 0 in readings stored before it was kept).</summary>
    public double ModelConfidence { get; init; }

    /// <summary>Per payload byte: the smallest margin of the decisions that made it (0 on the boundary, 1 at nominal or beyond).</summary>
    public required ImmutableArray<float> ByteMargins { get; init; }

    /// <summary>Per payload byte: the estimated probability that it is wrong.</summary>
    public required ImmutableArray<float> ByteErrorOdds { get; init; }

    /// <summary>Per header byte: the estimated probability that it is wrong (empty in readings stored before these were kept).</summary>
    public ImmutableArray<float> HeaderErrorOdds { get; init; } = [];

    /// <summary>Per byte of the check value read: the estimated probability that it is wrong (empty when none was read, or for older readings).</summary>
    public ImmutableArray<float> ChecksumErrorOdds { get; init; } = [];

    /// <summary>Per payload byte: its time in the capture, in seconds.</summary>
    public required ImmutableArray<double> ByteSeconds { get; init; }

    public required int Decisions { get; init; }

    /// <summary>Decisions whose margin was below <see cref="DecisionLog.AmbiguousMargin"/>.</summary>
    public required int AmbiguousDecisions { get; init; }

    public required double MinimumMargin { get; init; }

    public required double MeanMargin { get; init; }

    public required int FramingErrors { get; init; }

    /// <summary>The detector's envelope over the block, in dB relative to full scale.</summary>
    public required double LevelDbfs { get; init; }

    /// <summary>Decision signal-to-noise ratio: the typical distance from nominal to a boundary over the spread of the decisions, in dB.</summary>
    public required double SnrDb { get; init; }

    /// <summary>Measured playback speed relative to nominal (1.03: 3 % fast).</summary>
    public required double Speed { get; init; }

    public required double StartSeconds { get; init; }

    public required double EndSeconds { get; init; }

    /// <summary>The block ended before its layout said it would (dropout or lost sync).</summary>
    public required bool Truncated { get; init; }

    /// <summary>
    /// Which copy of its block the reading began at, as the sync read tells it, where the format writes each block k
    /// times with a sync that differs from copy to copy (0 the first copy); null where the sync says nothing (copies
    /// alike, too few sync bytes read, or bytes of no copy). The header keeps the first copy's sync whatever was read,
    /// so that copies agree byte for byte; this is where the copy read is kept. Null in readings stored before it was.
    /// </summary>
    public int? SyncCopy { get; init; }

    public string PayloadHex => Convert.ToHexStringLower(Payload.AsSpan());
}
