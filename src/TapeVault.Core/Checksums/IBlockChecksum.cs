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

    /// <summary>Computes the check value; only the low <see cref="Width"/> bytes can be non-zero.</summary>
    uint Compute(ReadOnlySpan<byte> data);
}
