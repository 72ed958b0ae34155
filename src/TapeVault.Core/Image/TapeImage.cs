using System.Collections.Immutable;

namespace TapeVault.Core.Image;

/// <summary>How a position of the tape image was recovered.</summary>
public enum RecoveryStatus
{
    /// <summary>A candidate whose checksum holds. A format without checksum has no clean positions: nothing verifies them.</summary>
    Clean,

    /// <summary>No candidate was valid; a margin-weighted vote across candidates gave bytes the checksum accepts (or, without checksum, the vote's bytes, however many passes agree).</summary>
    Voted,

    /// <summary>The vote did not satisfy the checksum; flipping the least certain bits did.</summary>
    Repaired,

    /// <summary>Nothing good enough was read: the bytes are absent, never filled in.</summary>
    Missing,
}

/// <summary>Which reading a position's bytes came from: enough to find the capture and the decode again.</summary>
public sealed record BlockProvenance(
    string CaptureSha256,
    string SettingName,
    string CodeVersion,
    double StartSeconds,
    double Confidence);

/// <summary>One position of the tape image.</summary>
public sealed record ImageBlock
{
    /// <summary>0-based, in tape order.</summary>
    public required int Position { get; init; }

    /// <summary>The identity key of the position (header file and block number, or "#n" for stream order).</summary>
    public required string Key { get; init; }

    public string? FileName { get; init; }

    public long? FileId { get; init; }

    public long? BlockNumber { get; init; }

    public required RecoveryStatus Status { get; init; }

    /// <summary>Calibrated probability that <see cref="Payload"/> is right, 0..1 (0 for missing).</summary>
    public required double Confidence { get; init; }

    public required ImmutableArray<byte> Header { get; init; }

    /// <summary>Empty for a missing position.</summary>
    public required ImmutableArray<byte> Payload { get; init; }

    /// <summary>The winning reading first; for voted and repaired blocks every reading that took part.</summary>
    public required ImmutableArray<BlockProvenance> Sources { get; init; }

    /// <summary>Distinct captures whose valid readings agree with the chosen payload.</summary>
    public required int AgreeingCaptures { get; init; }

    /// <summary>Two valid readings disagreed; <see cref="ConflictingPayloads"/> keeps the losers.</summary>
    public bool Conflict => !ConflictingPayloads.IsDefaultOrEmpty;

    public ImmutableArray<ConflictingReading> ConflictingPayloads { get; init; } = [];

    public string PayloadHex => Convert.ToHexStringLower(Payload.AsSpan());
}

/// <summary>A valid reading that lost a conflict: kept so that a curator can judge.</summary>
public sealed record ConflictingReading(ImmutableArray<byte> Payload, BlockProvenance Source, int AgreeingCaptures);

/// <summary>A file named by the block headers.</summary>
public sealed record ImageFile(string Name, long Length, int FirstPosition, int BlockCount, bool Complete);

/// <summary>A capture that went into the image.</summary>
public sealed record ImageSource(string CaptureSha256, string FileName, int SampleRate, int Channels, double DurationSeconds);

/// <summary>One verified image of one tape: ordered blocks with status, confidence and provenance, and the files they make up.</summary>
public sealed record TapeImage
{
    public required string ProfileId { get; init; }

    public required string CodeVersion { get; init; }

    public required DateTimeOffset CreatedUtc { get; init; }

    public required ImmutableArray<ImageSource> Captures { get; init; }

    public required ImmutableArray<ImageBlock> Blocks { get; init; }

    public required ImmutableArray<ImageFile> Files { get; init; }

    public int Count(RecoveryStatus status) => Blocks.Count(b => b.Status == status);

    /// <summary>
    /// Probability that every recovered (non-missing) position is right: the product of their confidences, positions
    /// being read independently (summed in logs, so that thousands of near-certain positions do not lose precision).
    /// Missing positions hold no bytes to be right or wrong; <see cref="Count"/> says how many there are.
    /// </summary>
    public double OverallConfidence => Math.Exp(Blocks.Where(b => b.Status != RecoveryStatus.Missing).Sum(b => Math.Log(b.Confidence)));
}
