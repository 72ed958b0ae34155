using System.Runtime.Intrinsics;
using TapeVault.Core.Detection;
using Xunit;

namespace TapeVault.Core.Tests.Detection;

/// <summary>
/// The gate tells a window that holds one tone alone without dividing, except in a narrow band around the threshold:
/// its answer must be that of the definition, raw D = (Em − Es)/(Em + Es) past ±0.9 (the non-coherent FSK detector's
/// normalised difference, Proakis, Digital Communications), with the division made every time, in both forms.
/// </summary>
public sealed class ToneGateTests
{
    [Fact]
    public void Pure_tone_answers_equal_raw_D_worked_out_by_division_in_both_forms_even_within_rounding_of_the_threshold()
    {
        var random = new Random(4711);
        var gate = new ToneGate(window: 147, sampleRate: 44_100);
        var (silence, gain) = gate.Lanes;
        var reference = Vector256<double>.Zero;
        int pureWindows = 0, nearThreshold = 0;
        var scalar = new[] { gate, gate, gate, gate };
        var mark = new double[4];
        var space = new double[4];
        for (int draw = 0; draw < 500_000; draw++)
        {
            for (int lane = 0; lane < 4; lane++)
            {
                // A total over twelve decades, and a raw D drawn anywhere in [−1, 1] or within a few units in the last
                // place of ±0.9 (where only the division can tell), with the energies rounded as they come.
                double total = Math.Pow(10, -4 + (12 * random.NextDouble()));
                double d = (draw % 3) switch
                {
                    0 => (2 * random.NextDouble()) - 1,
                    1 => 0.9 + ((random.NextDouble() - 0.5) * 1e-15),
                    _ => -0.9 + ((random.NextDouble() - 0.5) * 1e-15),
                };
                mark[lane] = total * (1 + d) / 2;
                space[lane] = total * (1 - d) / 2;
            }

            var carrier = ToneGate.Next(Vector256.Create(mark), Vector256.Create(space), ref reference, silence, gain, out var pureMark, out var pureSpace);
            for (int lane = 0; lane < 4; lane++)
            {
                double m = mark[lane], s = space[lane];
                double raw = (m - s) / (m + s);
                bool hasCarrier = carrier.GetElement(lane) != 0;
                Assert.Equal(hasCarrier && raw > 0.9, pureMark.GetElement(lane) != 0);
                Assert.Equal(hasCarrier && raw < -0.9, pureSpace.GetElement(lane) != 0);

                // The scalar form, each lane's own gate fed the same windows, gives the same bits.
                int expected = (hasCarrier ? ToneGate.Carrier : 0)
                    | (pureMark.GetElement(lane) != 0 ? ToneGate.PureMark : 0)
                    | (pureSpace.GetElement(lane) != 0 ? ToneGate.PureSpace : 0);
                Assert.Equal(expected, scalar[lane].Next(m, s));
                pureWindows += expected >> 1 != 0 ? 1 : 0;
                nearThreshold += Math.Abs(Math.Abs(raw) - 0.9) < 1e-9 ? 1 : 0;
            }
        }

        // Both kinds of window were met in numbers, so the test has teeth.
        Assert.True(pureWindows > 100_000, $"{pureWindows} pure windows");
        Assert.True(nearThreshold > 100_000, $"{nearThreshold} windows within 1e-9 of the threshold");
    }
}
