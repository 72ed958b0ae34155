namespace TapeVault.Core.Bytes;

/// <summary>
/// The doubt of an asynchronous character at an edge of what was read: the first after the signal began or came back,
/// the last before it broke off or the line went idle. Inside a run of characters each one's neighbours hold its
/// frame, and a weak decision is one noisy bit of a real character. At an edge nothing does: a weak decision there is
/// as likely the mark of a transient (the fade of a dropout, the click where the tone stops or changes phase) on
/// which a start bit was framed, and the character is then invented or framed off.
/// <para>
/// A transient lasts a fixed time on tape, a few milliseconds, whatever the baud: the faster the
/// characters, the more of a bit it fills, the deeper the dip it makes in a one-bit correlator window, and the more
/// bits it can turn. The odds that an edge character is not the written one are therefore the transient's length in
/// bits, baud · <see cref="EdgePrice.TransientSeconds"/>, falling by e for every 1 / <see cref="EdgePrice.DistanceScale"/> of the
/// character's least decision distance (the soft decision D signed toward a start or stop bit's value, |D| for data
/// bits; 1 = certain). Measured on the trust benchmark's kcs-300 and kcs-1200 readings of tuning seeds 1400–1547
/// (our channel with random dropouts, SoX chains, minimodem's own FSK), last character of a reading by its least
/// distance: at 1200 baud wrong 57 % below 0.2, 26 % at 0.2–0.4, 2.8 % at 0.4–0.6, 0.16 % above; at 300 baud 21 %
/// below 0.2 and none of 4 723 above. The same bins inside readings are wrong 10 %, 1.3 %, 0.2 %, 0.04 %: a decision
/// model for inner characters cannot price an edge. How the reading ended matters too (at 1200 baud a weak last
/// character before a file's end was wrong about half the time, before a dropout one time in twenty); this formula
/// priced them alike (2.5 ms, e per 1/8.5) and was right only on their mix; each <see cref="CharacterEdgeKind"/> now has
/// its own measured price (<see cref="EdgePrice.Of"/>).
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
    /// <summary>
    /// The chance that an edge character of <paramref name="kind"/> is not the written one, given its least decision
    /// distance and baud: as <see cref="Error(double, double)"/>, with the transient's length and the fall of the doubt
    /// with the distance measured for that kind of edge (<see cref="EdgePrice.Of"/>).
    /// </summary>
    public static double Error(double leastDistance, double baud, CharacterEdgeKind kind)
    {
        var price = EdgePrice.Of(kind);
        double odds = baud * price.TransientSeconds * Math.Exp(-price.DistanceScale * Math.Clamp(leastDistance, -1, 1));
        return odds / (1 + odds);
    }

    /// <summary>
    /// As <see cref="Error(double, double, CharacterEdgeKind)"/> where the character's start also lies
    /// <paramref name="offsetBits"/> off the grid of its neighbours.
    /// </summary>
    public static double Error(double leastDistance, double baud, double offsetBits, CharacterEdgeKind kind) =>
        1 - ((1 - Error(leastDistance, baud, kind)) * (1 - OffGridError(offsetBits)));


    /// <summary>The offset from its neighbour's grid, in bits, at which an edge character is as likely framed wrong as not (fitted: 0.75).</summary>
    public const double OffGridHalfBits = 0.75;

    /// <summary>How sharply the doubt rises with the offset: its power (fitted: the cube).</summary>
    public const double OffGridPower = 3;

    /// <summary>The spacings next to an edge character's own whose median is the frame its neighbours keep.</summary>
    public const int GridSpacings = 15;

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

/// <summary>
/// Where an edge character stands, as the decoder knows it: what began before the first character of a reading, or
/// ended after its last. The kinds are not alike: a weak first character after a lead-in of mark tone is framed on the
/// tone's onset and is as often false as its decisions and the transient say, while a weak last character before a
/// loss of signal is most often a real character whose last bits the fade of the dropout dimmed.
/// </summary>
public enum CharacterEdgeKind
{
    /// <summary>The first character after a lead-in, an idle line or a leader (the block began on the format's own mark).</summary>
    FirstAfterLeadIn,

    /// <summary>The first character after the signal came back, or of a stream taken up with no lead-in.</summary>
    FirstAfterBreak,

    /// <summary>The last character before the line went idle or the capture ended.</summary>
    LastBeforeIdle,

    /// <summary>The last character before the signal was lost (a dropout).</summary>
    LastBeforeBreak,
}

/// <summary>
/// The price of one <see cref="CharacterEdgeKind"/>: the odds that such an edge character is false are
/// baud · <see cref="TransientSeconds"/> · e^(−<see cref="DistanceScale"/> · least distance).
/// </summary>
public readonly record struct EdgePrice(double TransientSeconds, double DistanceScale)
{
    /// <summary>
    /// The measured price of each kind: transient length and fall fitted by maximum likelihood (with the off-grid doubt,
    /// <see cref="CharacterEdge.OffGridError"/>, as it was) over the edge characters of the trust benchmark's kcs-300 and
    /// kcs-1200 readings of tuning seeds 16200–16248 (97 tapes, 2 695 readings of eight characters or more whose inner
    /// characters are the written ones), each edge's kind taken from where it lies in the written file (the first
    /// character of a file: after its lead-in; the last: before the idle line after it; else after or before a break).
    /// Wrong / expected under the fitted price / under the one price every kind had before (odds 2.5 ms · baud ·
    /// e^(−8.5 d)): first after a lead-in 49 / 50.5 / 52.9; first after a break 13 / 13.7 / 17.2; last before an idle
    /// line 29 / 28.4 / 34.8; last before a break 12 / 11.8 / 48.9. The one price was right for the first character
    /// after a lead-in and four times too high for the last before a dropout, whose weak last character is mostly a
    /// real one dimmed by the fade (at 1200 baud, least distance below 0.2: 8 wrong of 38, where it said 28).
    /// </summary>
    public static EdgePrice Of(CharacterEdgeKind kind) => kind switch
    {
        CharacterEdgeKind.FirstAfterLeadIn => new(0.0020, 8.5),
        CharacterEdgeKind.FirstAfterBreak => new(0.0013, 10),
        CharacterEdgeKind.LastBeforeIdle => new(0.013, 30),
        CharacterEdgeKind.LastBeforeBreak => new(0.00013, 5),
        _ => throw new ArgumentOutOfRangeException(nameof(kind)),
    };
}
