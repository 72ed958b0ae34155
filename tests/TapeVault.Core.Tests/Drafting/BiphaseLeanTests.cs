using TapeVault.Core.Drafting;
using Xunit;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// Biphase whose edges lean: an offset on the signal (mains hum) moves every rising crossing of a sloped edge one way
/// and every falling one the other. The signal is written here from the definition of biphase (Manchester) coding,
/// common practice: a transition in the middle of every cell whose direction is the bit, one more at the boundary
/// between two equal bits; its edges are ramps a fifth of a cell long, so that an offset moves a rising crossing
/// later and a falling one earlier by the offset over the ramp's slope (the geometry of a ramp, common practice).
/// </summary>
public sealed class BiphaseLeanTests
{
    private const int Rate = 48000;

    /// <summary>Samples a cell: 1000 µs cells.</summary>
    private const int Cell = 48;

    /// <summary>
    /// A lead-in of zeros (all halves) under 50 Hz hum of 0.35 of the peak level, which shortens the halves from a
    /// rising edge to a falling one by up to a seventh and lengthens the others alike: the survey groups the halves
    /// apart (past its ±15 % reach), and the pair of groups one twice the other is lost.
    /// </summary>
    [Fact]
    public void Leaning_edges_still_score_and_draft_as_biphase()
    {
        var stretch = CaptureStretch.FromSamples(Signal(hum: 0.35), Rate, "leaning.wav");
        var drafter = new BiphaseDrafter();
        var survey = StretchSurvey.TakeEach(stretch).First(s => s.Clusters.Count >= 2);
        var score = drafter.Score(survey);

        // The cell is the sum of a half and the half after it, which the lean leaves alone (common practice).
        Assert.True(score.Score > 0.5, score.Evidence);
        var proposal = drafter.Draft(survey, CancellationToken.None);
        Assert.NotNull(proposal);
        double cellUs = proposal.Sections["biphase"]!["cellMicroseconds"]!.GetValue<double>();
        Assert.InRange(cellUs, 1e6 * Cell / Rate * 0.95, 1e6 * Cell / Rate * 1.05);
    }

    /// <summary>Halves from a rising edge to a falling one shortened by the lean, the others lengthened: evened, every one is half a cell again.</summary>
    [Fact]
    public void Evening_takes_the_lean_out_of_a_lead_in()
    {
        var stretch = CaptureStretch.FromSamples(Signal(hum: 0.35), Rate, "leaning.wav");
        var survey = StretchSurvey.TakeEach(stretch).First(s => s.Clusters.Count >= 2);
        var evened = BiphaseDrafter.EvenIntervals(survey.Edges, survey.Intervals);
        double half = 0.5 * Cell / Rate;

        // The lead-in's halves (the first 300 intervals after the signal starts): within 8 % of half a cell (the hum moves its lean within the reach it is measured over).
        var leadIn = evened.Skip(10).Take(300).ToList();
        Assert.All(leadIn, x => Assert.InRange(x, half * 0.92, half * 1.08));
    }

    /// <summary>
    /// Blocks of a lead-in of 200 zeros, a sync of 8 bits, and 40 random bytes, 1 a rising transition, with edges as
    /// ramps a fifth of a cell long and 50 Hz hum added.
    /// </summary>
    private static float[] Signal(double hum)
    {
        var bits = new List<int>();
        var rng = new Random(7);
        for (int block = 0; block < 6; block++)
        {
            bits.AddRange(Enumerable.Repeat(0, 200));
            bits.AddRange([1, 0, 1, 1, 0, 0, 1, 0]);
            for (int b = 0; b < 320; b++)
            {
                bits.Add(rng.Next(2));
            }
        }

        // Levels by half cell: a 1 is low then high (a rising mid-cell transition), a 0 high then low.
        var halves = new List<double>();
        foreach (int bit in bits)
        {
            halves.Add(bit == 1 ? -1 : 1);
            halves.Add(bit == 1 ? 1 : -1);
        }

        int ramp = Cell / 5;
        var samples = new float[(halves.Count * Cell / 2) + Rate / 10];
        double level = halves[0];
        for (int i = 0; i < samples.Length; i++)
        {
            int h = Math.Min(halves.Count - 1, i / (Cell / 2));
            double target = halves[h];
            level += Math.Clamp(target - level, -2.0 / ramp, 2.0 / ramp);
            samples[i] = (float)(0.5 * (level + (hum * Math.Sin(2 * Math.PI * 50 * i / Rate))));
        }

        return samples;
    }
}
