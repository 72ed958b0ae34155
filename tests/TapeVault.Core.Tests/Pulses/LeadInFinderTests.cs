using TapeVault.Core.Pulses;
using Xunit;

namespace TapeVault.Core.Tests.Pulses;

/// <summary>
/// The lead-in finder on pulse trains built here: a run of near-equal pulses at a known speed, with seeded jitter.
/// The check is the speed the train was built at; the classes are those of the three-class test format (2.8 : 3.9 :
/// 5.4), lead-in on the middle one.
/// </summary>
public sealed class LeadInFinderTests
{
    private static readonly PulseClassifier Classes = new([280e-6, 390e-6, 540e-6]);

    private static LeadInFinder NewFinder() => LeadInFinder.ForClass(Classes, 1, minimumCount: 200);

    /// <summary>Feeds <paramref name="count"/> pulses of <paramref name="nominal"/> played at <paramref name="speed"/>, each jittered by up to ±<paramref name="jitter"/>.</summary>
    private static void Feed(ref LeadInFinder finder, double nominal, double speed, int count, double jitter, int seed)
    {
        var random = new Random(seed);
        for (int i = 0; i < count; i++)
        {
            finder.Add(nominal / speed * (1 + (jitter * ((2 * random.NextDouble()) - 1))));
        }
    }

    [Theory]
    [InlineData(0.885)]
    [InlineData(0.93)]
    [InlineData(1.00)]
    [InlineData(1.07)]
    [InlineData(1.115)]
    public void A_jittery_lead_in_is_found_at_any_speed_within_twelve_per_cent_and_gives_that_speed(double speed)
    {
        var finder = NewFinder();
        Feed(ref finder, 390e-6, speed, 400, jitter: 0.04, seed: 3);

        Assert.True(finder.Found);
        Assert.InRange(finder.Speed, speed * 0.995, speed * 1.005);
    }

    [Theory]
    [InlineData(0.85)]
    [InlineData(1.16)]
    public void A_run_further_off_speed_than_twelve_per_cent_is_not_a_lead_in(double speed)
    {
        var finder = NewFinder();
        Feed(ref finder, 390e-6, speed, 400, jitter: 0.02, seed: 4);

        Assert.False(finder.Found);
    }

    [Theory]
    [InlineData(280e-6)]
    [InlineData(540e-6)]
    public void A_long_run_of_a_neighbouring_class_at_nominal_speed_is_not_the_lead_in(double neighbour)
    {
        var finder = NewFinder();
        Feed(ref finder, neighbour, 1.0, 400, jitter: 0.02, seed: 5);

        Assert.False(finder.Found);
    }

    [Fact]
    public void Data_alternating_between_classes_never_makes_a_run()
    {
        var finder = NewFinder();
        var random = new Random(6);
        double[] nominal = [280e-6, 390e-6, 540e-6];
        for (int i = 0; i < 5000; i++)
        {
            // Bits of two classes each, as the test format writes them: never two medium pulses apart from a short.
            finder.Add(nominal[random.Next(2) == 0 ? 0 : 2] * 1.07);
            finder.Add(nominal[1] * 1.07);
            Assert.False(finder.Found);
        }
    }

    [Fact]
    public void A_pulse_off_the_run_by_less_than_half_the_way_to_a_neighbour_keeps_it_and_another_class_ends_it()
    {
        var finder = NewFinder();
        Feed(ref finder, 390e-6, 1.07, 300, jitter: 0.02, seed: 7);
        Assert.True(finder.Found);

        // The medium class's nearer boundary (the geometric mean with the long class) lies 17.7 % above it; half way
        // is 8.5 %: a pulse 7 % long still belongs to the run, wherever the speed has put the run.
        double pulse = 390e-6 / 1.07;
        Assert.True(finder.Add(pulse * 1.07));
        Assert.True(finder.Found);

        // A long pulse (the next class) ends the run.
        Assert.False(finder.Add(540e-6 / 1.07));
        Assert.False(finder.Found);
        Assert.Equal(1, finder.Count);
    }

    /// <summary>
    /// <paramref name="before"/> lead-in pulses, then a stretch of pulses of no class for <paramref name="noiseSeconds"/>
    /// (or a loss of signal the decoder reports), then <paramref name="after"/> more, against a minimum of 200. The run
    /// goes on over a break no longer than the one the finder allows (20 ms here), and only then; and it is a lead-in
    /// only with half the minimum after the break.
    /// </summary>
    [Theory]
    [InlineData(120, 100, 0.010, 0.020, false, true)]
    [InlineData(120, 100, 0.030, 0.020, false, false)]
    [InlineData(120, 100, 0.010, 0.0, false, false)]
    [InlineData(120, 100, 0.0, 0.020, true, true)]
    [InlineData(120, 100, 0.0, 0.0, true, false)]
    [InlineData(180, 30, 0.010, 0.020, false, false)]
    public void A_run_broken_by_a_short_break_goes_on_with_its_count_whole(int before, int after, double noiseSeconds, double breakSeconds, bool lost, bool found)
    {
        var finder = LeadInFinder.ForClass(Classes, 1, minimumCount: 200, breakSeconds);
        Feed(ref finder, 390e-6, 1.0, before, jitter: 0.02, seed: 6);
        if (lost)
        {
            finder.Interrupt();
        }

        double spent = 0;
        for (int i = 0; spent < noiseSeconds; i++)
        {
            double pulse = i % 2 == 0 ? 100e-6 : 900e-6;
            finder.Add(pulse);
            spent += pulse;
        }

        Feed(ref finder, 390e-6, 1.0, after, jitter: 0.02, seed: 7);

        Assert.Equal(found, finder.Found);
        bool goesOn = breakSeconds > 0 && noiseSeconds <= breakSeconds;
        Assert.Equal(goesOn ? before + after : after, finder.Count);
    }
}
