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
}
