namespace TapeVault.Core.Drafting;

/// <summary>How many stop bits asynchronous characters have, as their spacing tells it, with the evidence in words.</summary>
public sealed record StopBitSpacing(string StopBits, bool Told, int OneStop, int TwoStops, int Steps, string Evidence);

/// <summary>
/// The stop bits of asynchronous characters, from their spacing. A receiver decides the start bit, the data, the
/// parity and the first stop bit only, and any further stop bits are idle line to it (common practice for serial
/// lines), so decoding cannot tell one stop bit from two; but characters written back to back begin one frame
/// apart, and the frame is the start bit, the data and parity bits and every stop bit. The steps between
/// consecutive characters of a block, in bit times, that land on a whole frame of one or of two stop bits are
/// counted; steps of neither (a gap, a character lost to damage) say nothing.
/// </summary>
public static class CharacterSpacing
{
    /// <summary>A step counts for a frame length when it lands within this many bit times of it.</summary>
    public const double Tolerance = 0.35;

    /// <summary>The fewest back-to-back steps that tell the stop bits.</summary>
    public const int LeastSteps = 8;

    /// <summary>The share of those steps one frame length must hold.</summary>
    public const double Holds = 0.8;

    /// <param name="blockCharacterSeconds">For each block, the time of each character in it (in order).</param>
    /// <param name="baud">The bit rate as the capture plays.</param>
    /// <param name="bitsBeforeStop">The start bit, the data bits and the parity bit, if any.</param>
    public static StopBitSpacing Measure(IEnumerable<IReadOnlyList<double>> blockCharacterSeconds, double baud, int bitsBeforeStop)
    {
        ArgumentNullException.ThrowIfNull(blockCharacterSeconds);
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(baud);
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(bitsBeforeStop);
        int one = 0;
        int two = 0;
        int steps = 0;
        foreach (var times in blockCharacterSeconds)
        {
            for (int i = 1; i < times.Count; i++)
            {
                double bits = (times[i] - times[i - 1]) * baud;
                steps++;
                if (Math.Abs(bits - (bitsBeforeStop + 1)) <= Tolerance)
                {
                    one++;
                }
                else if (Math.Abs(bits - (bitsBeforeStop + 2)) <= Tolerance)
                {
                    two++;
                }
            }
        }

        int backToBack = one + two;
        string counted = $"of {steps} steps from one character to the next, {one} are {bitsBeforeStop + 1} bit times (one stop bit) and {two} are {bitsBeforeStop + 2} (two)";
        if (backToBack >= LeastSteps && two >= Holds * backToBack)
        {
            return new StopBitSpacing("11", true, one, two, steps, counted + "; a receiver decides only the first stop bit, so the spacing tells");
        }

        if (backToBack >= LeastSteps && one >= Holds * backToBack)
        {
            return new StopBitSpacing("1", true, one, two, steps, counted + "; a receiver decides only the first stop bit, so the spacing tells");
        }

        return new StopBitSpacing("1", false, one, two, steps, counted + "; too few characters come back to back to tell (one stop bit drafted: a receiver reads the first only)");
    }
}
