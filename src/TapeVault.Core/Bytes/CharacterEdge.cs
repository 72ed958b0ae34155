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
/// </summary>
public static class CharacterEdge
{
    /// <summary>The time a transient at a break in the signal fills (the 2 ms fade of a dropout's edge, a click), in seconds: fitted, 2.5 ms.</summary>
    public const double TransientSeconds = 0.0025;

    /// <summary>How fast the doubt falls with the character's least decision distance: e per 1/8.5 of it (fitted).</summary>
    public const double DistanceScale = 8.5;

    /// <summary>
    /// The chance that a character at an edge of what was read is not the written one, given the least decision
    /// distance of its bits (<paramref name="leastDistance"/>, −1..1) and the <paramref name="baud"/> it was read at.
    /// </summary>
    public static double Error(double leastDistance, double baud)
    {
        double odds = baud * TransientSeconds * Math.Exp(-DistanceScale * Math.Clamp(leastDistance, -1, 1));
        return odds / (1 + odds);
    }
}
