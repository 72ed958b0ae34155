using TapeVault.Core.Drafting;
using Xunit;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// Biphase whose edges lean: every rising crossing moved one way and every falling one the other (an offset on the
/// signal does it to sloped edges; so do edges that slew at different rates). The signal is written here from the
/// definition of biphase (Manchester) coding, common practice: a transition in the middle of every cell whose
/// direction is the bit, one more at the boundary between two equal bits. Its rising edges are ramps of 10 samples and
/// its falling ones of 2, so that a crossing half-way up a ramp comes 5 samples after a rising ramp begins and 1 after
/// a falling one (the geometry of a ramp, common practice): an interval from a rising crossing to a falling one is
/// 4 samples short of its length, the next 4 long. An offset alone would not do here: every setting's read chain
/// takes a slow offset such as mains hum out before it finds crossings.
/// </summary>
public sealed class BiphaseLeanTests
{
    private const int Rate = 48000;

    /// <summary>Samples a cell: 1000 µs cells.</summary>
    private const int Cell = 48;

    /// <summary>Samples a rising edge takes from one level to the other.</summary>
    private const int RiseSamples = 10;

    /// <summary>Samples a falling edge takes.</summary>
    private const int FallSamples = 2;

    /// <summary>
    /// A lead-in of zeros (all halves) whose halves from a rising edge to a falling one are written a sixth short (20
    /// samples of 24) and the others a sixth long (28; through the settings' filters they read about 442 and 558 µs of
    /// 500): the survey groups the halves apart, and the pair of groups one twice the other is lost.
    /// </summary>
    [Fact]
    public void Leaning_edges_still_score_and_draft_as_biphase()
    {
        var stretch = CaptureStretch.FromSamples(Signal(), Rate, "leaning.wav");
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
        var stretch = CaptureStretch.FromSamples(Signal(), Rate, "leaning.wav");
        var survey = StretchSurvey.TakeEach(stretch).First(s => s.Clusters.Count >= 2);
        var evened = BiphaseDrafter.EvenIntervals(survey.Edges, survey.Intervals);
        double half = 0.5 * Cell / Rate;

        // The lead-in's halves (the first 300 intervals after the signal starts): within 8 % of half a cell, where they read over a tenth from it unevened.
        var leadIn = evened.Skip(10).Take(300).ToList();
        Assert.All(leadIn, x => Assert.InRange(x, half * 0.92, half * 1.08));
    }

    /// <summary>
    /// Blocks of a lead-in of 200 zeros, a sync of 8 bits, and 40 random bytes, 1 a rising transition, with edges as
    /// rising ramps of <see cref="RiseSamples"/> and falling ones of <see cref="FallSamples"/>.
    /// </summary>
    private static float[] Signal()
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

        var samples = new float[(halves.Count * Cell / 2) + Rate / 10];
        double level = halves[0];
        for (int i = 0; i < samples.Length; i++)
        {
            int h = Math.Min(halves.Count - 1, i / (Cell / 2));
            double target = halves[h];
            level += Math.Clamp(target - level, -2.0 / FallSamples, 2.0 / RiseSamples);
            samples[i] = (float)(0.5 * level);
        }

        return samples;
    }
}
