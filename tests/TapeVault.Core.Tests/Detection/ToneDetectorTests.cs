using TapeVault.Core.Detection;
using Xunit;

namespace TapeVault.Core.Tests.Detection;

/// <summary>
/// The soft decision with the mark energy rebalanced is worked out with one division where the rounding to a float
/// allows; every decision downstream hangs on its bits, so it must be the float the two-division formula gives.
/// </summary>
public sealed class ToneDetectorTests
{
    [Fact]
    public void One_division_gives_the_same_float_as_two_over_random_energies_and_balances()
    {
        var random = new Random(40_001);
        for (int i = 0; i < 2_000_000; i++)
        {
            // Energies over twelve decades, balances over the whole bounded range (1/16 to 16).
            double mark = Math.Pow(10, (random.NextDouble() * 12) - 6);
            double space = Math.Pow(10, (random.NextDouble() * 12) - 6);
            double balance = Math.Pow(16, (random.NextDouble() * 2) - 1);
            Assert.Equal(ToneDetector.Divided(mark, space, balance), ToneDetector.Balanced(mark, space, balance));
        }
    }

    [Fact]
    public void One_division_gives_the_same_float_as_two_where_D_is_near_zero_or_near_a_rounding_midpoint()
    {
        // Near D = 0 floats are dense and the margin is hit often: the exact path must take over there. Energies are
        // drawn so that mark ≈ space·balance to within 1e-3 … 1e-12, and near the midpoints between floats of
        // D ≈ 0.5 (the spacing of floats there is 2⁻²⁴ ≈ 6e-8).
        var random = new Random(40_002);
        for (int i = 0; i < 500_000; i++)
        {
            double balance = Math.Pow(16, (random.NextDouble() * 2) - 1);
            double space = Math.Pow(10, (random.NextDouble() * 6) - 3);
            double offset = Math.Pow(10, -3 - (random.NextDouble() * 9)) * (random.Next(2) == 0 ? 1 : -1);
            double mark = space * balance * (1 + offset);
            Assert.Equal(ToneDetector.Divided(mark, space, balance), ToneDetector.Balanced(mark, space, balance));

            // D = 0.5 + (k + 1/2)·2⁻²⁴ + a hair: m/s = (1 + D)/(1 − D).
            double d = 0.5 + ((random.Next(-1000, 1000) + 0.5) * Math.Pow(2, -24)) + (random.NextDouble() - 0.5) * 1e-14;
            double markNearMidpoint = space * balance * (1 + d) / (1 - d);
            Assert.Equal(ToneDetector.Divided(markNearMidpoint, space, balance), ToneDetector.Balanced(markNearMidpoint, space, balance));
        }
    }

    [Fact]
    public void D_from_the_levels_is_the_float_of_the_rounded_balance_wherever_it_answers()
    {
        // A window that teaches a level takes D from the levels, (Em·S − Es·M)/(Em·S + Es·M), without the balance's
        // division; where it answers it must be the float the two-division formula gives with the balance rounded and
        // bounded as Rebalance keeps it. Levels over the bounded range and past it, energies around them, and D near
        // zero and near rounding midpoints (where it must leave the answer to the exact path).
        var random = new Random(40_003);
        int plainDraws = 0;
        int plainAnswered = 0;
        const int Draws = 1_000_000;
        for (int i = 0; i < Draws; i++)
        {
            double spaceLevel = Math.Pow(10, (random.NextDouble() * 8) - 4);
            double markLevel = spaceLevel * Math.Pow(16, (random.NextDouble() * 2.2) - 1.1);
            double space = spaceLevel * Math.Pow(10, (random.NextDouble() * 4) - 2);
            double balance = markLevel / spaceLevel;
            double mark = (i % 3) switch
            {
                0 => markLevel * Math.Pow(10, (random.NextDouble() * 4) - 2),
                1 => space * balance * (1 + (Math.Pow(10, -3 - (random.NextDouble() * 10)) * (random.Next(2) == 0 ? 1 : -1))),
                _ => NearMidpoint(space, balance, random),
            };

            float fromLevels = ToneDetector.FromLevels(mark, space, markLevel, spaceLevel);
            plainDraws += i % 3 == 0 ? 1 : 0;
            if (!float.IsNaN(fromLevels))
            {
                plainAnswered += i % 3 == 0 ? 1 : 0;
                Assert.Equal(ToneDetector.Divided(mark, space, Clamped(markLevel, spaceLevel)), fromLevels);
            }

            Assert.Equal(Clamped(markLevel, spaceLevel), ToneDetector.Rebalance(markLevel, spaceLevel));
        }

        // Near D = 0 and near midpoints it leaves the answer to the exact path; for energies drawn freely around the
        // levels it answers, past the bounds (about one draw in eleven here) as well.
        Assert.InRange(plainAnswered, (int)(0.85 * plainDraws), plainDraws);
    }

    [Fact]
    public void D_from_the_levels_past_the_balance_bounds_is_that_of_the_bound()
    {
        // Past 16 (12 dB) the balance is held at the bound, which the levels' own ratio does not give.
        Assert.Equal(ToneDetector.Divided(3.0, 1.0, 16.0), ToneDetector.FromLevels(3.0, 1.0, 17.0, 1.0));
        Assert.Equal(ToneDetector.Divided(3.0, 1.0, 1.0 / 16), ToneDetector.FromLevels(3.0, 1.0, 1.0, 17.0));
        Assert.Equal(ToneDetector.Divided(3.0, 1.0, 2.0), ToneDetector.FromLevels(3.0, 1.0, 2.0, 1.0));
        Assert.Equal(16.0, ToneDetector.Rebalance(17.0, 1.0));
        Assert.Equal(1.0 / 16, ToneDetector.Rebalance(1.0, 17.0));
    }

    /// <summary>
    /// The balance as the detector documents it, written out apart from it: the levels' ratio, rounded, clamped to 12 dB
    /// either way (a factor of 16 in energy; the bound is the detector's own choice, common practice for a deck's
    /// high-frequency loss).
    /// </summary>
    private static double Clamped(double markLevel, double spaceLevel) => Math.Clamp(markLevel / spaceLevel, 1.0 / 16, 16);

    [Fact]
    public void A_run_within_a_character_stops_where_Next_reading_by_reading_stops_and_leaves_the_same_detector()
    {
        // The reference is Next itself, one reading at a time, stopped where the decoder's loop over a character stops:
        // before a reading without carrier or at the end given, or at the first D of the other sign (taken). Energies
        // drawn so that D is often near zero (its sign then needs the division), the tones up to 30 dB apart (the
        // balance at its bounds), and the first readings before either level is known.
        var random = new Random(40_003);
        for (int capture = 0; capture < 200; capture++)
        {
            const int length = 4000;
            var quad = new System.Runtime.Intrinsics.Vector256<double>[2 * length];
            var gates = new int[length];
            double imbalance = Math.Pow(10, ((random.NextDouble() * 6) - 3) / 2);
            bool markTone = true;
            for (int r = 0; r < length; r++)
            {
                markTone ^= random.Next(40) == 0;
                double level = Math.Pow(10, (random.NextDouble() * 0.4) - 0.2);
                double mark = (markTone ? level * imbalance : level * 0.01) * (1 + (random.NextDouble() * 0.1));
                double space = markTone ? level * 0.01 : level;
                if (random.Next(8) == 0)
                {
                    // Near D = 0: the mark energy a hair from the space energy times a balance in the bounds.
                    space = mark / (imbalance * (1 + ((random.NextDouble() - 0.5) * Math.Pow(10, -random.Next(3, 16)))));
                }

                quad[2 * r] = System.Runtime.Intrinsics.Vector256.Create(mark, 0, 0, 0);
                quad[(2 * r) + 1] = System.Runtime.Intrinsics.Vector256.Create(space, 0, 0, 0);
                int carrier = random.Next(300) == 0 ? 0 : ToneGate.Carrier;
                int pure = random.Next(4) == 0 ? 0 : markTone ? ToneGate.PureMark : ToneGate.PureSpace;
                gates[r] = carrier | (pure == ToneGate.PureMark ? 1 << ToneBank.LanesPerQuad : pure == ToneGate.PureSpace ? 1 << (2 * ToneBank.LanesPerQuad) : 0);
            }

            var lane = new ToneLane(quad, gates, 0, length);
            var run = new ToneDetector(300, 44_100);
            var reference = new ToneDetector(300, 44_100);
            float runPrevious = 0, referencePrevious = 0;
            int i = 0;
            while (i < length)
            {
                int end = Math.Min(length, i + random.Next(1, 400));
                int start = i;
                bool changed = run.UntilToneChanges(lane, ref i, end, ref runPrevious, out float d);

                int n = start;
                bool referenceChanged = false;
                float referenceD = 0;
                for (; n < end && (lane.Gate(n) & ToneGate.Carrier) != 0; n++)
                {
                    float next = reference.Next(lane.Mark(n), lane.Space(n), lane.Gate(n), learnMark: true, learnSpace: true);
                    if ((next < 0) != (referencePrevious < 0))
                    {
                        referenceChanged = true;
                        referenceD = next;
                        break;
                    }

                    referencePrevious = next;
                }

                Assert.Equal(n, i);
                Assert.Equal(referenceChanged, changed);
                Assert.Equal(referencePrevious, runPrevious);
                Assert.Equal(referenceD, d);
                Assert.Equal(reference.Carrier, run.Carrier);
                if (i == length)
                {
                    break;
                }

                // The reading stopped at goes through Next in both, as the decoder's full step takes it; learning only
                // the mark level now and then, as between characters.
                bool learnSpace = random.Next(2) == 0;
                float stepRun = run.Next(lane.Mark(i), lane.Space(i), lane.Gate(i), learnMark: true, learnSpace);
                float stepReference = reference.Next(lane.Mark(i), lane.Space(i), lane.Gate(i), learnMark: true, learnSpace);
                Assert.Equal(stepReference, stepRun);
                runPrevious = referencePrevious = stepRun;
                i++;
            }
        }
    }

    /// <summary>Mark energy that puts D within a hair of a midpoint between two floats near 0.5 (spacing 2⁻²⁴ there).</summary>
    private static double NearMidpoint(double space, double balance, Random random)
    {
        double d = 0.5 + ((random.Next(-1000, 1000) + 0.5) * Math.Pow(2, -24)) + ((random.NextDouble() - 0.5) * 1e-14);
        return space * balance * (1 + d) / (1 - d);
    }
}
