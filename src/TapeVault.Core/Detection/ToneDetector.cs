using System.Runtime.CompilerServices;

namespace TapeVault.Core.Detection;

/// <summary>
/// The tone detector of an FSK setting: two sliding quadrature correlators, one bit long, measure the energy at the
/// mark and space tones (<see cref="ToneBank"/>, every setting's in one vector; <see cref="ToneCorrelator"/>, the
/// scalar form); their normalised difference D = (Em − Es)/(Em + Es) is the soft decision (the non-coherent
/// binary FSK detector of the textbooks, e.g. Proakis, Digital Communications). Whether there is a carrier at all, and
/// which windows hold one tone alone, come from the <see cref="ToneGate"/> (which hangs on the energies only, and so
/// runs in the bank's vector lanes).
/// <para>
/// Em and Es are each divided by that tone's own level, learnt from the windows that hold one tone alone, so that a
/// capture with high-frequency loss (the mark tone weaker than the space tone) still has D cross zero half a window
/// after each change of tone, where the bit timing expects it. Which windows may teach a level is the caller's
/// call (it knows whether the recording is under way): see <see cref="Next"/>.
/// </para>
/// </summary>
public struct ToneDetector
{
    /// <summary>The largest energy ratio between the tones that is rebalanced: 16, i.e. 12 dB.</summary>
    private const double MaximumToneImbalance = 16;

    /// <summary>
    /// How far D worked out with one division may lie from D worked out as m = Em/balance, (m − Es)/(m + Es): each is
    /// within a few units in the last place of a double (about 1e-16, D being at most 1 in size) of the exact quotient,
    /// so 1e-13 leaves a margin of several hundred times.
    /// </summary>
    private const double QuotientMargin = 1e-13;

    private readonly double _levelGain;
    private readonly double _settledSamples;
    private double _markLevel;
    private double _spaceLevel;
    private double _markLevelSamples;
    private double _spaceLevelSamples;

    // The mark level over the space level, bounded (see Next), valid while both are known and _balanceStale is false:
    // worked out only for a window that teaches no level, the first after one that did (a window that teaches one
    // takes D from the levels themselves, see FromLevels), so that most windows cost no division for it.
    private double _balance;
    private bool _balanceStale;

    public ToneDetector(double baud, double sampleRate)
    {
        Window = ToneCorrelator.WindowFor(baud, sampleRate);

        // The tone levels follow about two bits' worth of windows that hold one tone alone.
        _levelGain = 1.0 / (2.0 * Window);
        _settledSamples = 2.0 * Window;
    }

    /// <summary>The correlator window, in samples: one bit at nominal speed.</summary>
    public int Window { get; }

    /// <summary>Whether the last window held a carrier (its energy is neither silence nor a dropout's).</summary>
    public bool Carrier { get; private set; }

    /// <summary>
    /// Takes the energies at the mark and space tones of the window that ends with one sample (from the setting's lane
    /// of the <see cref="ToneBank"/>, or a <see cref="ToneCorrelator"/>) and the <see cref="ToneGate"/>'s answer for it,
    /// and returns D for that window (0 without carrier). A window that holds mark alone teaches the mark level when
    /// <paramref name="learnMark"/>, one that holds space alone the space level when <paramref name="learnSpace"/>:
    /// noise before a lead-in can look like either tone, so only windows of the recording may teach.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public float Next(double mark, double space, int gate, bool learnMark, bool learnSpace)
    {
        bool carrier = (gate & ToneGate.Carrier) != 0;
        Carrier = carrier;
        if (!carrier)
        {
            return 0;
        }

        // Each tone is measured against its own level, learnt where the window holds that tone alone (there the
        // raw D is near ±1, whatever the balance). High-frequency loss (azimuth, worn heads, a deck's low-pass)
        // makes the mark tone weaker than the space tone; unweighted, D would then cross zero early at every fall to
        // space and late at every rise to mark, and the bit timing, which hangs on those crossings, would slip.
        // A level starts as the plain mean of what has been seen (the first windows that pass the test are the least
        // pure ones, at the edge of a lone bit) and becomes a running average once it has enough behind it.
        // The levels and the balance are carried in locals from the fields' load to D and stored once: D hangs on the
        // level just learnt through two divisions, and a field written and read back would put the store's round trip
        // twice on that path. The arithmetic is that of the fields, operation for operation.
        // A window that teaches a level leaves the balance to be worked out again (Rebalance) when a window needs it; the
        // window itself takes D from the levels (FromLevels), which is the same float without the balance's division.
        double markLevel = _markLevel;
        double spaceLevel = _spaceLevel;
        bool taught = false;
        if (learnMark && (gate & ToneGate.PureMark) != 0)
        {
            double samples = _markLevelSamples + 1;
            _markLevelSamples = samples;
            markLevel += (mark - markLevel) * LevelStep(samples, _settledSamples, _levelGain);
            _markLevel = markLevel;
            taught = true;
        }
        else if (learnSpace && (gate & ToneGate.PureSpace) != 0)
        {
            double samples = _spaceLevelSamples + 1;
            _spaceLevelSamples = samples;
            spaceLevel += (space - spaceLevel) * LevelStep(samples, _settledSamples, _levelGain);
            _spaceLevel = spaceLevel;
            taught = true;
        }

        return Decide(mark, space, markLevel, spaceLevel, taught, ref _balance, ref _balanceStale);
    }

    /// <summary>
    /// D of a window with carrier, once its levels are learnt (<paramref name="taught"/>: whether the window taught
    /// one): the balance the levels give, <paramref name="balance"/>, is worked out again only where a window needs it
    /// and <paramref name="balanceStale"/> says the levels moved since (a window that teaches a level takes D from the
    /// levels themselves, <see cref="FromLevels"/>, the same float without the balance's division).
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static float Decide(double mark, double space, double markLevel, double spaceLevel, bool taught, ref double balance, ref bool balanceStale)
    {
        if (Unknown(markLevel, spaceLevel))
        {
            // Until both tones have been heard alone, assume they are balanced.
            balanceStale |= taught;
            return (float)((mark - space) / (mark + space));
        }

        if (taught)
        {
            balanceStale = true;
            float d = FromLevels(mark, space, markLevel, spaceLevel);
            if (!float.IsNaN(d))
            {
                return d;
            }
        }

        if (balanceStale)
        {
            balance = Rebalance(markLevel, spaceLevel);
            balanceStale = false;
        }

        return Balanced(mark, space, balance);
    }

    /// <summary>
    /// How far from zero the sign of D is taken without its division: where the numerator of D, worked out to within a
    /// few units in the last place of its denominator (about 1e-16 of it), is more than 2^-24 of the denominator, D
    /// itself is (every way of working it out above lies within about 1e-12 of the same quotient), so the float D
    /// rounds to is of the numerator's sign and not zero.
    /// </summary>
    private const double SignMargin = 1.0 / (1 << 24);

    /// <summary>
    /// <see cref="Next"/> over the readings of a character from <paramref name="i"/> (both tones teach), for as long as
    /// nothing but the tone levels and the sign of D moves: stops before the first reading without carrier or at
    /// <paramref name="end"/> (<paramref name="i"/> left there, false), or at the first reading whose D is of the
    /// other sign than <paramref name="previousD"/> (<paramref name="i"/> left there, that D in <paramref name="d"/>,
    /// true). <paramref name="previousD"/> becomes D of the last reading taken before the one stopped at.
    /// <para>
    /// Every reading moves the levels as <see cref="Next"/> does, operation for operation, but only the sign of its D
    /// is needed until the stop: where the sign is beyond doubt (<see cref="SignMargin"/>) it comes from D's numerator
    /// alone, without the divisions; D itself is worked out, as Next works it out, for the reading stopped at and the
    /// one before it. The levels and their counts stay in locals for the whole run.
    /// </para>
    /// </summary>
    public bool UntilToneChanges(ToneLane tones, ref int i, int end, ref float previousD, out float d)
    {
        bool previousNegative = previousD < 0;

        // The lane's gate bits tested in the bank's words and its energies read from the chunk's, without the bit
        // shuffle of ToneLane.Gate and with the words' bounds checked once, by the slice to the end.
        var lane = new LaneReadings(tones, end);
        var run = new LevelRun
        {
            MarkLevel = _markLevel,
            SpaceLevel = _spaceLevel,
            MarkSamples = _markLevelSamples,
            SpaceSamples = _spaceLevelSamples,
            MarkBefore = _markLevel,
            SpaceBefore = _spaceLevel,
        };

        int n = i;
        bool changed = false;
        d = 0;
        while (n < lane.Words.Length)
        {
            // The readings whose sign is beyond doubt, in a loop that calls nothing (a call would make the JIT keep the
            // levels on the stack across it); a doubt or a stop comes back here.
            var stop = SureReadings(lane, _settledSamples, _levelGain, previousNegative, ref n, ref run);
            if (stop == RunStop.Doubt)
            {
                // D near zero (or not a number): its sign from D itself.
                float exact = Decision(run.Mark, run.Space, run.MarkLevel, run.SpaceLevel, run.Taught);
                if ((exact < 0) != previousNegative)
                {
                    d = exact;
                    changed = true;
                    break;
                }

                n = unchecked(n + 1);
                continue;
            }

            if (stop == RunStop.Changed)
            {
                changed = true;
                d = Decision(run.Mark, run.Space, run.MarkLevel, run.SpaceLevel, run.Taught);
            }

            break;
        }

        if (n > i)
        {
            // D of the last reading taken before the stop, from the levels after it.
            int last = n - 1;
            double lastMarkLevel = changed ? run.MarkBefore : run.MarkLevel;
            double lastSpaceLevel = changed ? run.SpaceBefore : run.SpaceLevel;
            bool lastTaught = (tones.Gate(last) & (ToneGate.PureMark | ToneGate.PureSpace)) != 0;
            previousD = Decision(tones.Mark(last), tones.Space(last), lastMarkLevel, lastSpaceLevel, lastTaught);
        }

        Carrier |= n > i || changed;
        _markLevel = run.MarkLevel;
        _spaceLevel = run.SpaceLevel;
        _markLevelSamples = run.MarkSamples;
        _spaceLevelSamples = run.SpaceSamples;

        // The balance kept is worked out again from the levels where a window next needs it (Decide), as if each
        // reading here had gone through Next: it is the levels' own whenever they have not moved since it was.
        _balanceStale |= run.TaughtAny;
        i = n;
        return changed;
    }

    /// <summary>Why <see cref="SureReadings"/> stopped.</summary>
    private enum RunStop
    {
        /// <summary>At the end, or before a reading without carrier.</summary>
        Stopped,

        /// <summary>At a reading whose sign of D its numerator alone cannot tell (<see cref="SignMargin"/>).</summary>
        Doubt,

        /// <summary>At a reading whose D is of the other sign.</summary>
        Changed,
    }

    /// <summary>
    /// The levels and their counts in <see cref="UntilToneChanges"/>, with the levels before the last reading taken
    /// (for D of that one if it is the reading stopped at) and that reading's energies and whether it taught a level.
    /// </summary>
    private struct LevelRun
    {
        public double MarkLevel, SpaceLevel, MarkSamples, SpaceSamples, MarkBefore, SpaceBefore, Mark, Space;
        public bool Taught, TaughtAny;
    }

    /// <summary>One lane's gate words (up to the end of a run) and energies, and its bits in the words.</summary>
    private readonly ref struct LaneReadings(ToneLane tones, int end)
    {
        public readonly ReadOnlySpan<int> Words = tones.GateWords[..end];
        public readonly ReadOnlySpan<double> Energies = tones.Energies;
        public readonly int Lane = tones.LaneIndex;
        public readonly int CarrierBit = tones.CarrierBit;
        public readonly int PureMarkBit = tones.PureMarkBit;
        public readonly int PureBits = tones.PureMarkBit | tones.PureSpaceBit;
    }

    /// <summary>
    /// The loop of <see cref="UntilToneChanges"/> over the readings from <paramref name="n"/> whose sign of D is beyond
    /// doubt: each moves the levels as <see cref="Next"/> does, operation for operation; stops at the end, before a
    /// reading without carrier, or at a reading of doubt or of a change of sign (<paramref name="n"/> left at it, its
    /// energies and whether it taught in <paramref name="run"/>). Calls nothing, so the levels stay in registers.
    /// </summary>
    [MethodImpl(MethodImplOptions.NoInlining)]
    private static RunStop SureReadings(in LaneReadings lane, double settled, double levelGain, bool previousNegative, ref int n, ref LevelRun run)
    {
        var words = lane.Words;
        var energies = lane.Energies;
        int laneIndex = lane.Lane;
        int carrierBit = lane.CarrierBit;
        int pureMarkBit = lane.PureMarkBit;
        int pureBits = lane.PureBits;
        double markLevel = run.MarkLevel;
        double spaceLevel = run.SpaceLevel;
        double markSamples = run.MarkSamples;
        double spaceSamples = run.SpaceSamples;
        double markBefore = run.MarkBefore;
        double spaceBefore = run.SpaceBefore;
        bool taughtAny = run.TaughtAny;
        double mark = 0, space = 0;
        bool taught = false;
        var stop = RunStop.Stopped;
        int k = n;
        unchecked
        {
            for (; k < words.Length; k++)
            {
                int word = words[k];
                if ((word & carrierBit) == 0)
                {
                    break;
                }

                mark = energies[ToneLane.MarkAt(k, laneIndex)];
                space = energies[ToneLane.SpaceAt(k, laneIndex)];
                markBefore = markLevel;
                spaceBefore = spaceLevel;
                taught = (word & pureBits) != 0;
                if ((word & pureMarkBit) != 0)
                {
                    markSamples += 1;
                    markLevel += (mark - markLevel) * LevelStep(markSamples, settled, levelGain);
                }
                else if (taught)
                {
                    spaceSamples += 1;
                    spaceLevel += (space - spaceLevel) * LevelStep(spaceSamples, settled, levelGain);
                }

                taughtAny |= taught;

                // D's numerator and denominator for the balance the levels give, bounded (Weights).
                // The energies are sums of squares, so the denominator is not negative.
                var weights = Weights(markLevel, spaceLevel);
                double markWeighted = mark * weights.Mark;
                double spaceWeighted = space * weights.Space;
                double numerator = markWeighted - spaceWeighted;
                double denominator = markWeighted + spaceWeighted;

                if (!(Math.Abs(numerator) > denominator * SignMargin))
                {
                    stop = RunStop.Doubt;
                    break;
                }

                if ((numerator < 0) != previousNegative)
                {
                    stop = RunStop.Changed;
                    break;
                }
            }
        }

        n = k;
        run.MarkLevel = markLevel;
        run.SpaceLevel = spaceLevel;
        run.MarkSamples = markSamples;
        run.SpaceSamples = spaceSamples;
        run.MarkBefore = markBefore;
        run.SpaceBefore = spaceBefore;
        run.Mark = mark;
        run.Space = space;
        run.Taught = taught;
        run.TaughtAny = taughtAny;
        return stop;
    }

    /// <summary>D of one window as <see cref="Next"/> gives it, from the levels after it and whether it taught one; the balance worked out afresh.</summary>
    private static float Decision(double mark, double space, double markLevel, double spaceLevel, bool taught)
    {
        double balance = 0;
        bool stale = true;
        return Decide(mark, space, markLevel, spaceLevel, taught, ref balance, ref stale);
    }

    /// <summary>
    /// How far D worked out from the levels, (Em·S − Es·M)/(Em·S + Es·M), may lie from the quotient of
    /// <see cref="Balanced"/> with the balance rounded, M/S: each is within a few units in the last place of 1 (about
    /// 1e-16) of the exact D, the rounding of the balance moving D by at most half its own (|dD/d ln b| ≤ 1/2), so
    /// 1e-14 leaves a margin of about ten times.
    /// </summary>
    private const double LevelsMargin = 1e-14;

    /// <summary>
    /// D with the mark energy divided by the balance of the levels <paramref name="markLevel"/> and
    /// <paramref name="spaceLevel"/> (both positive), without working the balance out: the float
    /// <see cref="Balanced"/> gives with the balance <see cref="Rebalance"/> gives, where the quotient of the levels'
    /// weights (<see cref="Weights"/>), widened by <see cref="QuotientMargin"/> and <see cref="LevelsMargin"/>, rounds
    /// to one float (then Balanced's own quotient, within the narrower margin of the same point, rounds to it as well:
    /// past the bounds the weights are the bound's, which Rebalance gives exactly); NaN elsewhere, where the caller
    /// works the balance out.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static float FromLevels(double mark, double space, double markLevel, double spaceLevel)
    {
        var weights = Weights(markLevel, spaceLevel);
        double markWeighted = mark * weights.Mark;
        double spaceWeighted = space * weights.Space;
        double quotient = (markWeighted - spaceWeighted) / (markWeighted + spaceWeighted);
        float below = (float)(quotient - (QuotientMargin + LevelsMargin));
        return below == (float)(quotient + (QuotientMargin + LevelsMargin)) ? below : float.NaN;
    }

    /// <summary>
    /// D with the mark energy divided by <paramref name="balance"/>: the float nearest (m − Es)/(m + Es), m = Em/balance.
    /// The same quotient as (Em − Es·balance)/(Em + Es·balance) but for rounding, so that one division gives it, with
    /// both divisions made only where the rounding to a float might tell the two apart (D within
    /// <see cref="QuotientMargin"/> of the midpoint between two floats: a few windows in a million, at D near zero).
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static float Balanced(double mark, double space, double balance)
    {
        double weighted = space * balance;
        double quotient = (mark - weighted) / (mark + weighted);
        float below = (float)(quotient - QuotientMargin);
        return below == (float)(quotient + QuotientMargin) ? below : Divided(mark, space, balance);
    }

    /// <summary>The same D with both divisions: m = Em/balance, then (m − Es)/(m + Es).</summary>
    [MethodImpl(MethodImplOptions.NoInlining)]
    internal static float Divided(double mark, double space, double balance)
    {
        double m = mark / balance;
        return (float)((m - space) / (m + space));
    }

    /// <summary>
    /// The gain of a level after <paramref name="samples"/> windows taught it: the plain mean (1/samples) until that
    /// falls below the running average's gain. Past twice the window, 1/samples is below 1/(2·window) whatever the
    /// rounding, so the division is left out there.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static double LevelStep(double samples, double settled, double gain) => samples > settled ? gain : Math.Max(gain, 1.0 / samples);

    /// <summary>
    /// The weights on the mark and space energies in D for the tone levels <paramref name="markLevel"/> and
    /// <paramref name="spaceLevel"/>: D = (Em·Mark − Es·Space)/(Em·Mark + Es·Space), the balance being Space/Mark. Inside
    /// 12 dB between the tones the levels themselves (S on Em, M on Es); past it the bound's (1 on Em, 16 or 1/16 on Es):
    /// past 12 dB (more than any deck's high-frequency loss, common practice) the weaker tone is mostly gone, and lifting
    /// it further would lift noise into confident decisions. Until both levels are known (either not above 0), 1 and 1:
    /// the tones taken as balanced. The one place the bounds are applied: the balance (<see cref="Rebalance"/>), D from
    /// the levels (<see cref="FromLevels"/>) and the sign of D in the loop within a character all take them from here.
    /// Multiplying by 16 or 1/16 is exact, so the comparisons are those of the levels' exact ratio with the bounds.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static (double Mark, double Space) Weights(double markLevel, double spaceLevel)
    {
        if (Unknown(markLevel, spaceLevel))
        {
            return (1, 1);
        }

        if (markLevel >= MaximumToneImbalance * spaceLevel)
        {
            return (1, MaximumToneImbalance);
        }

        if (markLevel * MaximumToneImbalance <= spaceLevel)
        {
            return (1, 1 / MaximumToneImbalance);
        }

        return (spaceLevel, markLevel);
    }

    /// <summary>Whether a tone level is not known yet (0 until a window that holds that tone alone taught it).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static bool Unknown(double markLevel, double spaceLevel) => markLevel <= 0 || spaceLevel <= 0;

    /// <summary>
    /// The mark level over the space level (both positive), bounded (<see cref="Weights"/>): the levels' ratio rounded,
    /// or the bound it is past. The same double as clamping the rounded ratio to the bounds, since rounding is monotone
    /// and the bounds are doubles.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static double Rebalance(double markLevel, double spaceLevel)
    {
        var weights = Weights(markLevel, spaceLevel);
        return weights.Space / weights.Mark;
    }

    /// <summary>A new recording learns its own tone balance: the space level starts again from the next pure window.</summary>
    public void ForgetSpaceLevel()
    {
        _spaceLevel = 0;
        _spaceLevelSamples = 0;
    }
}
