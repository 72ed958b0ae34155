using TapeVault.Core.Formats;

namespace TapeVault.Core.Bytes;

/// <summary>
/// The grid asynchronous characters stand on: characters of a block follow back to back, so the start bit of the last
/// well-framed one says where the next ones may start, and for how long across a gap in the signal (the speed is
/// known to a fraction of a per cent). It also carries whether the grid goes back to a confirmed start bit (after a
/// lead-in or an idle line, or ruled the only framing by the characters themselves).
/// </summary>
public struct CharacterGrid
{
    /// <summary>How far, in bits, a start bit after a loss of signal may lie off the character grid from before it.</summary>
    private const double ToleranceBits = 0.3;

    /// <summary>How much the grid's uncertainty grows per bit of gap: a speed error of 0.15 % (wow the tracking missed).</summary>
    private const double DriftPerBit = 0.0015;

    /// <summary>Past this uncertainty a whole bit's slip can no longer be told from drift and the grid is not used.</summary>
    private const double MaximumToleranceBits = 0.45;

    private readonly int _frameBits;
    private double _start;

    public CharacterGrid(ByteFraming framing)
    {
        ArgumentNullException.ThrowIfNull(framing);
        _frameBits = framing.BitsPerByte;
        _start = double.NaN;
        Confirmed = true;
    }

    /// <summary>Whether the grid goes back to a confirmed start bit.</summary>
    public bool Confirmed { get; set; }

    /// <summary>
    /// Whether a fall to space at <paramref name="crossing"/> after a loss of signal may be a start bit. The stream
    /// resumes with no lead-in, so any fall from a data bit 1 to a 0 looks like one; and some falls frame as well as
    /// the true ones (in lower-case text, bits 5 and 6 are mark and bit 7 space, so a frame three bits early has its
    /// stop bits on mark too, and stays there). While the grid is still sure only a fall on it is a start bit; once it
    /// has drifted past knowing (or where there never was one), any fall is.
    /// </summary>
    public readonly bool MayResumeAt(double crossing, double bitSamples)
    {
        if (double.IsNaN(_start))
        {
            return true;
        }

        double elapsedBits = (crossing - _start) / bitSamples;
        double tolerance = ToleranceAt(crossing, bitSamples);
        if (tolerance > MaximumToleranceBits)
        {
            return true;
        }

        double characters = elapsedBits / _frameBits;
        double offBits = Math.Abs(characters - Math.Round(characters)) * _frameBits;
        return offBits <= tolerance;
    }

    /// <summary>Whether the grid still holds at <paramref name="crossing"/>: there is one, and it has not drifted past knowing.</summary>
    public readonly bool HoldsAt(double crossing, double bitSamples) =>
        !double.IsNaN(_start) && ToleranceAt(crossing, bitSamples) <= MaximumToleranceBits;

    /// <summary>
    /// A character of the block, its start bit at <paramref name="start"/>: a well-framed one moves the grid there. The
    /// next character starts where this one ended: it is no surer than this one, whose framing failed or not.
    /// </summary>
    public void Add(bool framingOk, double start, bool confirmed)
    {
        if (framingOk)
        {
            _start = start;
        }

        Confirmed = framingOk ? confirmed : Confirmed && confirmed;
    }

    /// <summary>How far, in bits, a start bit at <paramref name="crossing"/> may lie off the grid kept since the last good character.</summary>
    private readonly double ToleranceAt(double crossing, double bitSamples) => ToleranceBits + (DriftPerBit * (crossing - _start) / bitSamples);
}
