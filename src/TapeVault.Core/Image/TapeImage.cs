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

    /// <summary>
    /// Calibrated probability that the whole position is right, 0..1 (0 for missing): its <see cref="Payload"/>, and its
    /// place, which <see cref="KeyConfidence"/> doubts apart. Where nothing doubts the key it is the payload's.
    /// </summary>
    public required double Confidence { get; init; }

    /// <summary>
    /// Probability that <see cref="Key"/> names the position's place on the tape, 0..1; 1 where nothing doubts it (a key
    /// read from a block header, and a stream's key where no silence before its stretch had room for a file no capture
    /// read). <see cref="Confidence"/> already holds it (never more than it): the payload's own confidence is
    /// <see cref="PayloadConfidence"/>. Doubts of keys are nested: a stream's key #s counts the stretches read before it,
    /// so its doubt holds every doubt of an earlier key (see <see cref="TapeImage.OverallConfidence"/>).
    /// </summary>
    public double KeyConfidence
    {
        get => _keyConfidence;
        init => _keyConfidence = value is >= 0 and <= 1 ? value : throw new ArgumentOutOfRangeException(nameof(KeyConfidence), value, "A key's confidence is a probability from 0 to 1.");
    }

    private readonly double _keyConfidence = 1;

    /// <summary>
    /// Probability that <see cref="Payload"/> is right whatever its place: <see cref="Confidence"/> without the key's doubt
    /// (0 where the key is surely wrong, as nothing then says how far the bytes are right).
    /// </summary>
    public double PayloadConfidence => KeyConfidence > 0 ? Math.Min(1, Confidence / KeyConfidence) : 0;

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
    /// Probability that every recovered (non-missing) position is right, bytes and place: the product of their payloads'
    /// confidences, times the least of their keys' confidences. Payloads are read independently, so their chances
    /// multiply (summed in logs, so that thousands of near-certain positions do not lose precision). Keys are not: the
    /// doubt of a key is that a file before it went unread, and a later stream key's doubt holds every earlier one's (it
    /// is the chance that no silence before its stretch hid a file), so every key is right exactly when the most doubted
    /// one is: one doubted silence counts once, not once for each position after it. Where no key is doubted (every
    /// block image, and an image read from a version 1 container) this is the product of the positions' confidences.
    /// Missing positions hold no bytes to be right or wrong; <see cref="Count"/> says how many there are.
    /// </summary>
    public double OverallConfidence
    {
        get
        {
            double logPayloads = 0, leastKey = 1;
            foreach (var block in Blocks)
            {
                if (block.Status != RecoveryStatus.Missing)
                {
                    logPayloads += Math.Log(block.PayloadConfidence);
                    leastKey = Math.Min(leastKey, block.KeyConfidence);
                }
            }

            return Math.Exp(logPayloads) * leastKey;
        }
    }
}
