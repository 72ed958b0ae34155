namespace TapeVault.Core.Checksums;

/// <summary>
/// A check value computed over one decoded tape block, used to decide whether the block was read intact.
/// </summary>
public interface IBlockChecksum
{
    /// <summary>Catalogue name (for example <c>crc16-xmodem</c> or <c>CRC-16/ARC</c>), or the canonical text of its parameters.</summary>
    string Name { get; }

    /// <summary>Size of the stored check value in bytes: 1 to 4.</summary>
    int Width { get; }

    /// <summary>
    /// Chance that a random block passes the check by accident: 2^-(8 * <see cref="Width"/>) for a check that fills
    /// its bytes (a CRC of fewer bits than its bytes hold says so itself).
    /// </summary>
    double FalseMatchProbability => Math.ScaleB(1.0, -8 * Width);

    /// <summary>
    /// Chance that a block with two or more wrong bytes passes the check. For a CRC, its <see cref="FalseMatchProbability"/>
    /// (a CRC-16 or CRC-32 detects every error of two bits within the lengths a tape block has, and any other pattern
    /// passes about once in 2^w; CRC catalogue widths, common practice). An additive sum or an xor cancels two
    /// single-bit errors at one bit position (opposite changes of a sum, any pair of an xor, and for an 8-bit sum any
    /// two errors of its top bit), the commonest way two misread bits meet on tape, so it passes about one such pair in
    /// eight (the chance two single-bit errors share one of eight bit positions; common practice, from memory): see
    /// <see cref="PairCancellingOdds"/>.
    /// </summary>
    double MultipleErrorMatchProbability => FalseMatchProbability;

    /// <summary>
    /// The chance that two single-bit errors fall at one of a byte's eight bit positions, where an additive sum or an
    /// xor cancels them (common practice, from memory: the known weakness of additive checks against CRCs).
    /// </summary>
    public const double PairCancellingOdds = 1.0 / 8;

    /// <summary>Computes the check value; only the low <see cref="Width"/> bytes can be non-zero.</summary>
    uint Compute(ReadOnlySpan<byte> data);
}
