using TapeVault.Core.Detection;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;
using Xunit;

namespace TapeVault.Core.Tests.Pulses;

/// <summary>The pulse-length histogram's bins and the marks drawn on it.</summary>
public sealed class PulseHistogramTests
{
    [Fact]
    public void Every_duration_lands_in_the_bin_a_search_over_the_edges_finds()
    {
        var histogram = new PulseHistogram(100e-6, 3e-3, 57);
        var edges = histogram.ToResult().BinEdgesSeconds;
        Assert.Equal(58, edges.Length);
        Assert.Equal(100e-6, edges[0]);
        Assert.Equal(3e-3, edges[^1]);

        // Random durations across and beyond the range, and every edge itself with its neighbours either side.
        var random = new Random(6);
        var durations = Enumerable.Range(0, 20_000).Select(_ => Math.Exp(Math.Log(50e-6) + (random.NextDouble() * Math.Log(6e-3 / 50e-6)))).ToList();
        foreach (double e in edges)
        {
            durations.AddRange([e, Math.BitDecrement(e), Math.BitIncrement(e)]);
        }

        var expected = new long[57];
        long below = 0, above = 0;
        foreach (double d in durations)
        {
            histogram.Add(d);
            int bin = -1;
            for (int i = 0; i < 57; i++)
            {
                if (d >= edges[i] && d < edges[i + 1])
                {
                    bin = i;
                }
            }

            if (bin >= 0)
            {
                expected[bin]++;
            }
            else if (d < edges[0])
            {
                below++;
            }
            else
            {
                above++;
            }
        }

        var result = histogram.ToResult();
        Assert.Equal(expected, result.Counts);
        Assert.Equal(below, result.Below);
        Assert.Equal(above, result.Above);
        Assert.Equal(durations.Count, result.Total);
    }

    [Fact]
    public void Bins_are_even_in_the_logarithm_of_duration()
    {
        var edges = new PulseHistogram(1e-4, 1e-2, 40).ToResult().BinEdgesSeconds;
        double ratio = Math.Pow(100, 1.0 / 40);
        for (int i = 1; i < edges.Length; i++)
        {
            Assert.Equal(ratio, edges[i] / edges[i - 1], 1e-12);
        }
    }

    [Fact]
    public void Intervals_fed_chunk_by_chunk_count_the_same_as_all_at_once()
    {
        var edges = Enumerable.Range(0, 500).Select(i => new Edge((i * 17.5) + (i % 3 * 4.25), true, 0.5f)).ToArray();
        var whole = new PulseHistogram(1e-4, 2e-3, 30);
        whole.AddIntervals(edges, 44_100);
        var chunked = new PulseHistogram(1e-4, 2e-3, 30);
        for (int i = 0; i < edges.Length; i += 37)
        {
            chunked.AddIntervals(edges.AsSpan(i, Math.Min(37, edges.Length - i)), 44_100);
        }

        Assert.Equal(whole.ToResult().Counts.ToArray(), chunked.ToResult().Counts.ToArray());
        Assert.True(whole.ToResult().InRange > 400);
        Assert.Equal(edges.Length - 1, chunked.ToResult().Total);
    }

    [Theory]
    [InlineData(1.0, false)]
    [InlineData(1.04, false)]
    [InlineData(0.97, true)]
    public void Pulse_width_boundaries_sit_where_the_classifier_changes_its_decision(double speed, bool bothEdges)
    {
        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");
        var setting = new DetectorSetting("probe", 30, 9000, false, false, ThresholdMode.Relative, 0.2, bothEdges ? EdgeSelection.Both : EdgeSelection.Rising);
        var marks = PulseMarks.For(profile, setting, speed);
        var classifier = new PulseClassifier(profile.PulseWidth!.Classes.Select(c => c.Seconds).ToArray());
        double unit = bothEdges ? 2 : 1;

        // The decoder classifies a whole cycle (two halves added when both edges count) measured at the given speed.
        var boundaries = marks.Marks.Where(m => m.Kind == PulseMarkKind.Boundary).ToList();
        Assert.Equal(profile.PulseWidth.Classes.Count - 1, boundaries.Count);
        for (int i = 0; i < boundaries.Count; i++)
        {
            double b = boundaries[i].Seconds * unit;
            Assert.Equal(i, classifier.ClassOf(b * 0.999, speed));
            Assert.Equal(i + 1, classifier.ClassOf(b * 1.001, speed));
        }

        var limits = marks.Marks.Where(m => m.Kind == PulseMarkKind.Limit).ToList();
        Assert.Equal(-1, classifier.ClassOf(limits[0].Seconds * unit * 0.999, speed));
        Assert.Equal(0, classifier.ClassOf(limits[0].Seconds * unit * 1.001, speed));
        Assert.Equal(-1, classifier.ClassOf(limits[1].Seconds * unit * 1.001, speed));

        var nominal = marks.Marks.Where(m => m.Kind == PulseMarkKind.Nominal).ToList();
        for (int i = 0; i < nominal.Count; i++)
        {
            Assert.Equal(profile.PulseWidth.Classes[i].Seconds, nominal[i].Seconds * unit * speed, 1e-12);
        }

        Assert.True(marks.LowestSeconds < limits[0].Seconds && marks.HighestSeconds > limits[1].Seconds);
    }

    [Fact]
    public void Fsk_marks_are_the_two_tone_cycles_with_no_boundary()
    {
        // Kansas City Standard: mark 2400 Hz, space 1200 Hz (BYTE, February 1976).
        var marks = PulseMarks.For(ProfileCatalog.BuiltIn.Get("kcs-300"), DetectorBanks.Default[0], 1.0);
        Assert.Equal([1 / 2400.0, 1 / 1200.0], marks.Marks.Select(m => m.Seconds));
        Assert.DoesNotContain(marks.Marks, m => m.Kind == PulseMarkKind.Boundary);
    }
}
