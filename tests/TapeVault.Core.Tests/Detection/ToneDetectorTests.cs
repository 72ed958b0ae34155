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
                double rounded = ToneDetector.Rebalance(markLevel, spaceLevel);
                Assert.Equal(ToneDetector.Divided(mark, space, rounded), fromLevels);
            }
        }

        // Past the bounds (about one draw in eleven here), near D = 0 and near midpoints it leaves the answer to the
        // exact path; for energies drawn freely around the levels it answers.
        Assert.InRange(plainAnswered, (int)(0.85 * plainDraws), plainDraws);
    }

    [Fact]
    public void D_from_the_levels_leaves_the_answer_to_the_exact_path_past_the_balance_bounds()
    {
        // Past 16 (12 dB) the balance is held at the bound, which the levels' own ratio does not give.
        Assert.True(float.IsNaN(ToneDetector.FromLevels(3.0, 1.0, 17.0, 1.0)));
        Assert.True(float.IsNaN(ToneDetector.FromLevels(3.0, 1.0, 1.0, 17.0)));
        Assert.Equal(ToneDetector.Divided(3.0, 1.0, 2.0), ToneDetector.FromLevels(3.0, 1.0, 2.0, 1.0));
    }

    /// <summary>Mark energy that puts D within a hair of a midpoint between two floats near 0.5 (spacing 2⁻²⁴ there).</summary>
    private static double NearMidpoint(double space, double balance, Random random)
    {
        double d = 0.5 + ((random.Next(-1000, 1000) + 0.5) * Math.Pow(2, -24)) + ((random.NextDouble() - 0.5) * 1e-14);
        return space * balance * (1 + d) / (1 - d);
    }
}
