namespace TapeVault.Core.Formats;

/// <summary>
/// An FSK lead-in of one character written over and over, back to back (a leader), rather than of mark tone. At least
/// <see cref="MinimumCount"/> of them in a row, each framed well and equal to <see cref="Character"/>, mark a block
/// start; the block's sync characters follow the last of them. A run of one character read back to back can be framed
/// only where it was written (the loader refuses a character whose frame repeats within itself), so the leader also
/// fixes where every following character starts, and the time from one leader character to the next gives the
/// playback speed.
/// </summary>
public sealed record CharacterLeadIn(int Character, int MinimumCount);

/// <summary>The repeated bit patterns a biphase lead-in may be, and what they imply for reading and writing.</summary>
public static class BitPatterns
{
    /// <summary>A lead-in of zeros: a transition every half cell.</summary>
    public const string Zeros = "0";

    /// <summary>A lead-in of ones: a transition every half cell, the other way.</summary>
    public const string Ones = "1";

    /// <summary>A lead-in of alternating bits: only mid-cell transitions, one every whole cell.</summary>
    public const string Alternating = "01";

    /// <summary>
    /// Whether a biphase lead-in of <paramref name="pattern"/> is a run of whole cells (alternating bits, whose
    /// neighbours always differ, so no transition falls on a cell boundary) rather than of half cells (equal bits).
    /// </summary>
    public static bool IsWholeCellRun(string pattern) => pattern == Alternating;

    /// <summary>The <paramref name="index"/>-th bit of <paramref name="pattern"/> repeated from phase <paramref name="phase"/>.</summary>
    public static bool BitAt(string pattern, int phase, int index)
    {
        ArgumentNullException.ThrowIfNull(pattern);
        return pattern[(phase + index) % pattern.Length] == '1';
    }

    /// <summary>
    /// The last <paramref name="length"/> bits (up to 64) of <paramref name="pattern"/> repeated, ending at phase
    /// <paramref name="phase"/>, as the low bits of a number (the latest bit lowest), the way a shift register holds them.
    /// </summary>
    public static ulong Window(string pattern, int phase, int length)
    {
        ArgumentNullException.ThrowIfNull(pattern);
        ulong value = 0;
        for (int i = 0; i < length; i++)
        {
            // Bit i from the end is pattern position (phase − i) modulo the period.
            int position = ((phase - i) % pattern.Length + pattern.Length) % pattern.Length;
            value |= (pattern[position] == '1' ? 1UL : 0UL) << i;
        }

        return value;
    }

    /// <summary>
    /// Where a sync word first matches a shift register fed with the lead-in pattern (in any phase) and then the sync
    /// word itself: the number of sync bits read when it matches. A sync word that is found only where it ends gives its
    /// own length; one found earlier, inside the lead-in or overlapping it, gives less, and would start blocks in the
    /// wrong place.
    /// </summary>
    public static int FirstMatch(string leadIn, string sync)
    {
        ArgumentNullException.ThrowIfNull(leadIn);
        ArgumentNullException.ThrowIfNull(sync);
        int length = sync.Length;
        int first = length;
        for (int phase = 0; phase < leadIn.Length; phase++)
        {
            // The stream: a lead-in as long as the sync word, ending at this phase, then the sync word.
            var stream = new char[2 * length];
            for (int i = 0; i < length; i++)
            {
                stream[i] = leadIn[((phase - (length - 1 - i)) % leadIn.Length + leadIn.Length) % leadIn.Length];
            }

            sync.CopyTo(0, stream, length, length);
            for (int end = length; end <= 2 * length; end++)
            {
                if (new string(stream, end - length, length) == sync)
                {
                    first = Math.Min(first, end - length);
                    break;
                }
            }
        }

        return first;
    }

    /// <summary>
    /// The bits of one character framed by <paramref name="framing"/> as they go to tape: start bits, data bits in their
    /// order, the parity bit if any, stop bits. The one place a frame is laid out; the writers use it.
    /// </summary>
    public static bool[] Frame(ByteFraming framing, int value)
    {
        ArgumentNullException.ThrowIfNull(framing);
        var bits = new bool[framing.BitsPerByte];
        Frame(framing, value, bits);
        return bits;
    }

    /// <summary>The same frame written into <paramref name="bits"/> (<see cref="ByteFraming.BitsPerByte"/> of them), allocating nothing.</summary>
    public static void Frame(ByteFraming framing, int value, Span<bool> bits)
    {
        ArgumentNullException.ThrowIfNull(framing);
        if (bits.Length != framing.BitsPerByte)
        {
            throw new ArgumentException($"A framed byte has {framing.BitsPerByte} bits, not {bits.Length}.", nameof(bits));
        }

        int at = 0;
        foreach (char c in framing.StartBits)
        {
            bits[at++] = c == '1';
        }

        int ones = 0;
        for (int i = 0; i < framing.DataBits; i++)
        {
            bool bit = ((value >> framing.DataBitShift(i)) & 1) != 0;
            ones += bit ? 1 : 0;
            bits[at++] = bit;
        }

        if (framing.Parity != Parity.None)
        {
            bits[at++] = framing.ParityBit(ones);
        }

        foreach (char c in framing.StopBits)
        {
            bits[at++] = c == '1';
        }
    }

    /// <summary>
    /// The first whole-bit shift at which a run of <paramref name="value"/> framed back to back also reads as well-framed
    /// copies of the same character, or 0 when no shift does: then a receiver that has framed several of them in a row
    /// has found the only framing there is. A receiver checks the start bits, the data, the parity and the first stop
    /// bit (common practice for serial lines), so those are the bits compared.
    /// </summary>
    public static int SelfSimilarShift(ByteFraming framing, int value)
    {
        var frame = Frame(framing, value);
        int period = frame.Length;
        int checkedBits = period - Math.Max(0, framing.StopBits.Length - 1);
        for (int shift = 1; shift < period; shift++)
        {
            bool same = true;
            for (int i = 0; i < checkedBits && same; i++)
            {
                same = frame[(shift + i) % period] == frame[i];
            }

            if (same)
            {
                return shift;
            }
        }

        return 0;
    }
}
