using TapeVault.Core.Formats;

namespace TapeVault.Core.Bytes;

/// <summary>
/// Whether a run of asynchronous characters, as read, pins its own framing. The framer decides a character's start
/// bit, data bits, parity and first stop bit; further stop bits are mark it never looks at. Where the bits read would
/// also give a valid start and valid stop bits on every character at another bit offset, the run is consistent with
/// a different true framing: a run of 0x00 with two stop bits framed one bit late reads 0x80 (the first stop bit as
/// the last data bit, the second as the stop), and a run of 0xFE framed one bit early reads 0xFF. Each such
/// character is decided clearly, so its decisions cannot tell; only characters whose bits rule out every other offset
/// pin it. A word of lowercase letters holds three bits early too (bits 5 and 6 set as stop bits, bit 7 clear as a
/// start bit), but the spaces, capitals and punctuation of text break that within a word or two, so a reading is
/// judged unpinned only where another offset holds over all of it.
/// </summary>
public static class FramingAmbiguity
{
    /// <summary>
    /// The least characters a run must have for its framing to be judged: with two or fewer, another offset holds by
    /// chance too often to say anything.
    /// </summary>
    public const int LeastCharacters = 3;

    /// <summary>
    /// Below this mean decision distance, a run whose framing it does not pin is doubted: such readings were wrong far
    /// more often than their decisions priced, and those at or above it never. Measured on the trust benchmark's
    /// kcs-1200 and kcs-300 stream readings of tuning seeds 16200–16259 and 16300–16399 priced at 0.9 or more (before
    /// this price), of those whose framing another offset also held over every character: below 0.98, 13 of 125 wrong
    /// at 1200 baud and 7 of 213 at 300 (expected by their confidence: under 5 in all); at or above it, none of 394.
    /// </summary>
    public const double ClearMeanDistance = 0.98;

    /// <summary>
    /// The odds, at 1200 baud, that a run whose framing another offset also holds, decided below
    /// <see cref="ClearMeanDistance"/>, was framed wrong; at another baud in proportion to it (<see cref="UnpinnedError"/>).
    /// Fitted by maximum likelihood on the readings told at <see cref="ClearMeanDistance"/> (both bauds together). One
    /// odds per baud fits them no better (1200 baud: 0.116, 300: 0.034, in the ratio 3.4 where the baud says 4; twice
    /// the log-likelihood gained 0.11), so the odds stay in proportion to the baud.
    /// </summary>
    public const double UnpinnedOddsAt1200 = 0.123;

    /// <summary>
    /// The chance that a run at <paramref name="baud"/> whose framing another offset also holds, decided below
    /// <see cref="ClearMeanDistance"/>, was framed wrong. A start bit is found late by a lag of fixed length on tape
    /// (the tone filters' delay, a transient), which fills four times as much of a bit at 1200 baud as at 300: the
    /// odds go with the baud, as an edge character's do (<see cref="CharacterEdge"/>). 0.11 at 1200 baud, 0.030 at 300.
    /// </summary>
    public static double UnpinnedError(double baud)
    {
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(baud);
        double odds = UnpinnedOddsAt1200 * baud / 1200;
        return odds / (1 + odds);
    }

    /// <summary>
    /// The most characters in a row of <paramref name="bytes"/> over which some other bit offset than the one read
    /// also gives every frame valid start and stop bits (a frame there spans two characters read, so a stretch of k
    /// such frames covers k + 1 characters). <paramref name="starts"/>: where each character began (its start bit),
    /// in any unit; a spacing of more than a frame and a half bit from the median spacing is a gap of idle line, which
    /// breaks a stretch (empty: the run is taken as contiguous). Parity is not checked, which can only count more.
    /// </summary>
    public static int LongestOtherFraming(ReadOnlySpan<byte> bytes, ReadOnlySpan<double> starts, ByteFraming framing)
    {
        ArgumentNullException.ThrowIfNull(framing);
        int n = bytes.Length;
        int frameBits = framing.BitsPerByte;
        if (n < 2 || frameBits < 2)
        {
            return 0;
        }

        double most = double.PositiveInfinity;
        if (starts.Length == n)
        {
            var spacings = new double[n - 1];
            for (int j = 0; j + 1 < n; j++)
            {
                spacings[j] = starts[j + 1] - starts[j];
            }

            Array.Sort(spacings);
            double frame = spacings[(n - 1) / 2];
            most = frame * (1 + (1.5 / frameBits));
        }

        Span<sbyte> pair = stackalloc sbyte[2 * frameBits];
        Span<bool> framed = stackalloc bool[frameBits];
        int best = 0;
        for (int offset = 1; offset < frameBits; offset++)
        {
            int run = 0;
            for (int j = 0; j + 1 < n; j++)
            {
                bool contiguous = starts.Length != n || starts[j + 1] - starts[j] <= most;
                bool holds = false;
                if (contiguous)
                {
                    FrameBits(bytes[j], framing, framed, pair[..frameBits]);
                    FrameBits(bytes[j + 1], framing, framed, pair[frameBits..]);
                    holds = FrameHolds(pair.Slice(offset, frameBits), framing);
                }

                run = holds ? run + 1 : 0;
                best = Math.Max(best, run);
            }
        }

        return best == 0 ? 0 : best + 1;
    }

    /// <summary>
    /// Whether nothing in <paramref name="bytes"/> pins its framing: another offset holds over every character of a
    /// run of <see cref="LeastCharacters"/> or more.
    /// </summary>
    public static bool Unpinned(ReadOnlySpan<byte> bytes, ReadOnlySpan<double> starts, ByteFraming framing) =>
        bytes.Length >= LeastCharacters && LongestOtherFraming(bytes, starts, framing) >= bytes.Length;

    /// <summary>
    /// The bits of one character as the framer read them (<see cref="BitPatterns.Frame"/> writes the frame, into
    /// <paramref name="framed"/>): 0 or 1 where decided, −1 where never looked at (stop bits after the first).
    /// </summary>
    private static void FrameBits(byte value, ByteFraming framing, Span<bool> framed, Span<sbyte> bits)
    {
        BitPatterns.Frame(framing, value, framed);
        int undecidedFrom = framing.BitsPerByte - framing.StopBits.Length + 1;
        for (int i = 0; i < framed.Length; i++)
        {
            bits[i] = i >= undecidedFrom ? (sbyte)-1 : (sbyte)(framed[i] ? 1 : 0);
        }
    }

    /// <summary>Whether a frame laid on <paramref name="bits"/> has its start and stop bits where the framing wants them (an undecided bit may be either).</summary>
    private static bool FrameHolds(ReadOnlySpan<sbyte> bits, ByteFraming framing)
    {
        for (int s = 0; s < framing.StartBits.Length; s++)
        {
            if (!Fits(bits[s], framing.StartBits[s]))
            {
                return false;
            }
        }

        int stopAt = bits.Length - framing.StopBits.Length;
        for (int s = 0; s < framing.StopBits.Length; s++)
        {
            if (!Fits(bits[stopAt + s], framing.StopBits[s]))
            {
                return false;
            }
        }

        return true;
    }

    private static bool Fits(sbyte bit, char wanted) => bit < 0 || bit == (wanted == '1' ? 1 : 0);
}
