namespace TapeVault.Core.Bytes;

/// <summary>
/// The doubt of an asynchronous character at an edge of what was read: the first after the signal began or came back,
/// the last before it broke off or the line went idle. Inside a run of characters each one's neighbours hold its
/// frame, and a weak decision is one noisy bit of a real character. At an edge nothing does: a weak decision there is
/// as likely the mark of a transient (the fade of a dropout, the click where the tone stops or changes phase) on
/// which a start bit was framed, and the character is then invented or framed off.
/// <para>
/// A transient lasts a fixed time on tape, about <see cref="TransientSeconds"/>, whatever the baud: the faster the
/// characters, the more of a bit it fills, the deeper the dip it makes in a one-bit correlator window, and the more
/// bits it can turn. The odds that an edge character is not the written one are therefore the transient's length in
/// bits, baud · <see cref="TransientSeconds"/>, falling by e for every 1 / <see cref="DistanceScale"/> of the
/// character's least decision distance (the soft decision D signed toward a start or stop bit's value, |D| for data
/// bits; 1 = certain). Measured on the trust benchmark's kcs-300 and kcs-1200 readings of tuning seeds 1400–1547
/// (our channel with random dropouts, SoX chains, minimodem's own FSK), last character of a reading by its least
/// distance: at 1200 baud wrong 57 % below 0.2, 26 % at 0.2–0.4, 2.8 % at 0.4–0.6, 0.16 % above; at 300 baud 21 %
/// below 0.2 and none of 4 723 above. The same bins inside readings are wrong 10 %, 1.3 %, 0.2 %, 0.04 %: a decision
/// model for inner characters cannot price an edge. How the reading ended matters too (at 1200 baud a weak last
/// character before a file's end was wrong about half the time, before a dropout one time in twenty); this formula
/// does not tell them apart yet, and is right on their mix (docs/performance.md).
/// </para>
/// <para>
/// An edge character's frame is decided on less evidence than its decisions show: inside a stream characters follow
/// one another back to back, each start bit one frame after the one before, and a character whose start lies off the
/// grid its neighbours keep was framed somewhere else than where characters were written: the first character of a
/// stretch framed a bit early on the tone's first cycles, or a character framed after the last one on the transient
/// where the tone stopped or joined another recording (its start bit that transient, its bits the mark tone after it:
/// 0xFF). Its decisions may all be clean. So an edge character also carries <see cref="OffGridError"/> of how far its
/// start lies from one frame beside its neighbour's (<see cref="OffsetBits"/>). Measured on the stream readings of the
/// trust benchmark's kcs-300 and kcs-1200 tapes of tuning seeds 17000–19079 (edge characters of readings of three or
/// more characters, judged at the place their time claims; those of least decision distance 0.5 or more): an edge
/// character off by under a tenth of a bit was wrong 1.6 % (kcs-1200) and 0.6 % (kcs-300) of the time, about as its
/// decisions said; by 0.1–0.5 bit 5 % and 2 %; by 0.6 bit or more 87 times in 91, where its decisions said 14 %.
/// Half-offset and power fitted by maximum likelihood over the edge characters of every reading of two or more
/// characters, whatever their decisions, with the decision model as it was (log-likelihood −2993 before, −2521 after;
/// each profile on its own gives the same).
/// </para>
/// </summary>
public static class CharacterEdge
{
    /// <summary>The time a transient at a break in the signal fills (the 2 ms fade of a dropout's edge, a click), in seconds: fitted, 2.5 ms.</summary>
    public const double TransientSeconds = 0.0025;

    /// <summary>How fast the doubt falls with the character's least decision distance: e per 1/8.5 of it (fitted).</summary>
    public const double DistanceScale = 8.5;

    /// <summary>The offset from its neighbour's grid, in bits, at which an edge character is as likely framed wrong as not (fitted: 0.75).</summary>
    public const double OffGridHalfBits = 0.75;

    /// <summary>How sharply the doubt rises with the offset: its power (fitted: the cube).</summary>
    public const double OffGridPower = 3;

    /// <summary>The spacings next to an edge character's own whose median is the frame its neighbours keep.</summary>
    public const int GridSpacings = 15;

    /// <summary>
    /// The chance that a character at an edge of what was read is not the written one, given the least decision
    /// distance of its bits (<paramref name="leastDistance"/>, −1..1) and the <paramref name="baud"/> it was read at.
    /// </summary>
    public static double Error(double leastDistance, double baud)
    {
        double odds = baud * TransientSeconds * Math.Exp(-DistanceScale * Math.Clamp(leastDistance, -1, 1));
        return odds / (1 + odds);
    }

    /// <summary>
    /// The same where the character's start also lies <paramref name="offsetBits"/> off the grid of its neighbours
    /// (<see cref="OffsetBits"/>): it is the written one only if neither the transient nor the frame misled.
    /// </summary>
    public static double Error(double leastDistance, double baud, double offsetBits) =>
        1 - ((1 - Error(leastDistance, baud)) * (1 - OffGridError(offsetBits)));

    /// <summary>
    /// The chance that an edge character whose start lies <paramref name="offsetBits"/> (either way) off the grid of
    /// its neighbours was framed where no character was written: x³ / (x³ + <see cref="OffGridHalfBits"/>³).
    /// </summary>
    public static double OffGridError(double offsetBits)
    {
        double ratio = Math.Pow(Math.Abs(offsetBits) / OffGridHalfBits, OffGridPower);
        return double.IsFinite(ratio) ? ratio / (1 + ratio) : 1;
    }

    /// <summary>
    /// How far, in bits, the first (<paramref name="first"/>) or last character of a run whose characters start at
    /// <paramref name="starts"/> lies off the grid its neighbours keep: the spacing to its neighbour against the median
    /// of the <see cref="GridSpacings"/> spacings next to it inside the run (a frame at the speed the tape ran there),
    /// in bits of a frame of <paramref name="frameBits"/>. 0 where the run has no inner spacing to hold it against
    /// (three characters or fewer).
    /// </summary>
    public static double OffsetBits(ReadOnlySpan<double> starts, bool first, int frameBits)
    {
        int inner = Math.Min(GridSpacings, starts.Length - 3);
        if (inner < 1 || frameBits < 1)
        {
            return 0;
        }

        Span<double> spacings = stackalloc double[GridSpacings];
        spacings = spacings[..inner];
        int last = starts.Length - 1;
        for (int k = 0; k < inner; k++)
        {
            // From the character next to the edge inward: spacings 1–2, 2–3, … or n−3–n−2, n−4–n−3, …
            spacings[k] = first ? starts[k + 2] - starts[k + 1] : starts[last - 1 - k] - starts[last - 2 - k];
        }

        spacings.Sort();
        double frame = inner % 2 == 1 ? spacings[inner / 2] : 0.5 * (spacings[(inner / 2) - 1] + spacings[inner / 2]);
        if (frame <= 0)
        {
            return 0;
        }

        double own = first ? starts[1] - starts[0] : starts[last] - starts[last - 1];
        return ((own / frame) - 1) * frameBits;
    }
}
