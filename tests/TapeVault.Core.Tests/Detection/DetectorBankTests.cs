using TapeVault.Core.Detection;
using TapeVault.Core.Edges;
using Xunit;

namespace TapeVault.Core.Tests.Detection;

/// <summary>Known-answer tests of the detector bank: the edges of a sine, the default bank, chunking.</summary>
public sealed class DetectorBankTests
{
    private const int SampleRate = 44_100;

    /// <summary>The starting phase of the test sines, in radians.</summary>
    private const double SinePhase = 0.3;

    [Theory]
    [InlineData(1234.5, false)]
    [InlineData(2400.0, false)]
    [InlineData(987.65, true)]
    [InlineData(3000.0, true)]
    public void A_sine_gives_rising_edges_one_period_apart_to_a_twentieth_of_a_sample(double frequencyHz, bool differentiate)
    {
        var setting = new DetectorSetting("probe", 30, 9000, differentiate, invert: false, ThresholdMode.Relative, 0.2, EdgeSelection.Rising);
        var edges = Edges(setting, Sine(frequencyHz, 0.5, SampleRate, amplitude: 0.5), 4096);
        double period = SampleRate / frequencyHz;

        var settled = edges.Where(e => e.Sample > 0.1 * SampleRate).ToList();
        Assert.True(settled.Count > 100, $"only {settled.Count} edges");
        double worst = 0;
        for (int i = 1; i < settled.Count; i++)
        {
            Assert.True(settled[i].Rising);
            worst = Math.Max(worst, Math.Abs(settled[i].Sample - settled[i - 1].Sample - period));
        }

        // A steady sine crosses zero upwards once per period (its definition); the filters shift every crossing alike.
        Assert.True(worst < 0.05, $"worst interval error {worst:0.0000} samples over {settled.Count} edges");
    }

    [Fact]
    public void A_sine_through_the_dc_block_alone_gives_edges_where_the_filtered_sine_crosses_zero()
    {
        // No low-pass: the chain is the one-pole high-pass y[n] = a·(y[n−1] + x[n] − x[n−1]), whose response at ω is
        // H = a(1 − e^{−jω}) / (1 − a·e^{−jω}) (z-transform of the difference equation, any DSP text).
        const double frequencyHz = 1234.5;
        const double highPassHz = 30;
        var setting = new DetectorSetting("probe", highPassHz, null, differentiate: false, invert: false, ThresholdMode.Relative, 0.2, EdgeSelection.Rising);
        var edges = Edges(setting, Sine(frequencyHz, 0.5, SampleRate, amplitude: 0.5), 4096);

        double w = 2 * Math.PI * frequencyHz / SampleRate;
        double rc = 1 / (2 * Math.PI * highPassHz);
        double a = rc / (rc + 1.0 / SampleRate);
        var numerator = a * (1 - System.Numerics.Complex.FromPolarCoordinates(1, -w));
        var denominator = 1 - a * System.Numerics.Complex.FromPolarCoordinates(1, -w);
        double phase = (numerator / denominator).Phase;

        // sin(ω n + φ0 + arg H) crosses zero upwards where ω n + φ0 + arg H = 2πk.
        double worst = 0;
        int count = 0;
        foreach (var edge in edges.Where(e => e.Sample > 0.1 * SampleRate))
        {
            double cycles = (w * edge.Sample + SinePhase + phase) / (2 * Math.PI);
            double error = (cycles - Math.Round(cycles)) * 2 * Math.PI / w;
            worst = Math.Max(worst, Math.Abs(error));
            count++;
        }

        Assert.True(count > 100, $"only {count} edges");
        Assert.True(worst < 0.05, $"worst edge error {worst:0.0000} samples over {count} edges");
    }

    [Fact]
    public void Falling_edges_sit_half_a_period_after_rising_ones_and_both_gives_the_two_interleaved()
    {
        const double frequencyHz = 1500;
        var samples = Sine(frequencyHz, 0.3, SampleRate, amplitude: 0.4);
        var rising = Edges(new DetectorSetting("r", 30, 9000, false, false, ThresholdMode.Relative, 0.2, EdgeSelection.Rising), samples, 4096);
        var falling = Edges(new DetectorSetting("f", 30, 9000, false, false, ThresholdMode.Relative, 0.2, EdgeSelection.Falling), samples, 4096);
        var both = Edges(new DetectorSetting("b", 30, 9000, false, false, ThresholdMode.Relative, 0.2, EdgeSelection.Both), samples, 4096);

        Assert.All(falling, e => Assert.False(e.Rising));
        Assert.Equal(rising.Count + falling.Count, both.Count);
        double half = SampleRate / frequencyHz / 2;
        var late = rising.Where(e => e.Sample > 0.1 * SampleRate).ToList();
        foreach (var r in late.Take(50))
        {
            var next = falling.First(f => f.Sample > r.Sample);
            Assert.Equal(half, next.Sample - r.Sample, 1);
        }
    }

    [Fact]
    public void An_inverted_setting_rises_where_the_direct_one_falls()
    {
        var samples = Sine(1100, 0.3, SampleRate, amplitude: 0.4);
        var direct = Edges(new DetectorSetting("d", 30, 9000, false, invert: false, ThresholdMode.Relative, 0.2, EdgeSelection.Falling), samples, 4096);
        var inverted = Edges(new DetectorSetting("i", 30, 9000, false, invert: true, ThresholdMode.Relative, 0.2, EdgeSelection.Rising), samples, 4096);

        var a = direct.Where(e => e.Sample > 0.05 * SampleRate).Take(100).ToList();
        var b = inverted.Where(e => e.Sample > 0.05 * SampleRate).Take(100).ToList();
        Assert.Equal(a.Count, b.Count);
        for (int i = 0; i < a.Count; i++)
        {
            Assert.Equal(a[i].Sample, b[i].Sample, 3);
        }
    }

    [Fact]
    public void Hysteresis_keeps_noise_smaller_than_the_band_from_making_edges()
    {
        // A Schmitt trigger ignores excursions inside its band (DESIGN §1; common practice for comparators).
        var samples = new float[SampleRate / 2];
        var random = new Random(3);
        for (int i = 0; i < samples.Length; i++)
        {
            samples[i] = (float)(0.005 * (random.NextDouble() - 0.5));
        }

        var fixedBand = new DetectorSetting("fixed", 30, 9000, false, false, ThresholdMode.Fixed, 0.02, EdgeSelection.Both);

        Assert.Empty(Edges(fixedBand, samples, 4096));
    }

    [Fact]
    public void The_default_bank_has_eight_settings_covering_both_polarities_differentiated_and_direct()
    {
        var bank = DetectorBanks.Default;

        Assert.Equal(8, bank.Count);
        Assert.Equal(DetectorBank.LanesPerGroup, bank.Count);
        Assert.Equal(bank.Count, bank.Select(s => s.Name).Distinct().Count());
        foreach (bool differentiate in new[] { false, true })
        {
            foreach (bool invert in new[] { false, true })
            {
                Assert.Contains(bank, s => s.Differentiate == differentiate && s.Invert == invert);
            }
        }

        Assert.Contains(bank, s => s.Edges == EdgeSelection.Both);
        Assert.Contains(bank, s => s.ThresholdMode == ThresholdMode.Fixed);
        Assert.Contains(bank, s => s.ThresholdMode == ThresholdMode.Relative);
        Assert.All(bank, s => Assert.False(string.IsNullOrWhiteSpace(s.Describe())));
    }

    [Fact]
    public void The_default_bank_runs_its_eight_settings_in_one_pass_with_the_same_edges_as_each_alone()
    {
        var samples = Chirp(0.4, SampleRate);
        var bank = new DetectorBank(DetectorBanks.Default, SampleRate);
        var together = NewBuffers(bank.Settings.Count);
        bank.Process(samples, together);

        for (int s = 0; s < DetectorBanks.Default.Count; s++)
        {
            var alone = Edges(DetectorBanks.Default[s], samples, samples.Length);
            Assert.Equal(alone.Count, together[s].Count);
            Assert.Equal(alone, together[s].Items.ToArray());
        }
    }

    [Fact]
    public void Nine_settings_spill_into_a_second_lane_group_and_keep_their_edges()
    {
        var settings = DetectorBanks.Default.Append(new DetectorSetting("ninth", 50, 6000, true, true, ThresholdMode.Relative, 0.3, EdgeSelection.Both)).ToList();
        var samples = Chirp(0.3, SampleRate);
        var bank = new DetectorBank(settings, SampleRate);
        var edges = NewBuffers(settings.Count);
        bank.Process(samples, edges);

        Assert.Equal(Edges(settings[8], samples, samples.Length), edges[8].Items.ToArray());
        Assert.Equal(Edges(settings[0], samples, samples.Length), edges[0].Items.ToArray());
    }

    [Theory]
    [InlineData(1)]
    [InlineData(100)]
    [InlineData(4096)]
    [InlineData(7777)]
    public void Processing_in_chunks_gives_the_same_edges_as_one_whole_chunk(int chunk)
    {
        var samples = Chirp(1.0, SampleRate);
        var whole = NewBuffers(DetectorBanks.Default.Count);
        new DetectorBank(DetectorBanks.Default, SampleRate).Process(samples, whole);

        var chunked = new List<Edge>[DetectorBanks.Default.Count];
        for (int s = 0; s < chunked.Length; s++)
        {
            chunked[s] = [];
        }

        var bank = new DetectorBank(DetectorBanks.Default, SampleRate);
        var buffers = NewBuffers(chunked.Length);
        for (int start = 0; start < samples.Length; start += chunk)
        {
            foreach (var b in buffers)
            {
                b.Clear();
            }

            bank.Process(samples.AsSpan(start, Math.Min(chunk, samples.Length - start)), buffers);
            for (int s = 0; s < chunked.Length; s++)
            {
                chunked[s].AddRange(buffers[s].Items.ToArray());
            }
        }

        Assert.Equal(samples.Length, bank.SamplesSeen);
        for (int s = 0; s < chunked.Length; s++)
        {
            var expected = whole[s].Items.ToArray();
            Assert.Equal(expected.Length, chunked[s].Count);
            for (int i = 0; i < expected.Length; i++)
            {
                Assert.Equal(expected[i].Rising, chunked[s][i].Rising);
                Assert.Equal(expected[i].Level, chunked[s][i].Level);

                // The crossing is interpolated in single precision relative to the chunk; a thousandth of a sample is
                // far below any decision the decoders make.
                Assert.True(Math.Abs(expected[i].Sample - chunked[s][i].Sample) < 1e-3, $"setting {s} edge {i}: {expected[i].Sample} vs {chunked[s][i].Sample}");
            }
        }
    }

    [Fact]
    public void A_bank_refuses_no_settings_a_bad_rate_and_too_few_edge_buffers()
    {
        Assert.Throws<ArgumentException>(() => new DetectorBank([], SampleRate));
        Assert.Throws<ArgumentOutOfRangeException>(() => new DetectorBank(DetectorBanks.Default, 0));
        var bank = new DetectorBank(DetectorBanks.Default, SampleRate);
        Assert.Throws<ArgumentException>(() => bank.Process(new float[10], NewBuffers(3)));
    }

    [Theory]
    [InlineData(0.0, 9000.0, 0.2)]
    [InlineData(30.0, 20.0, 0.2)]
    [InlineData(30.0, 9000.0, 0.0)]
    [InlineData(30.0, 9000.0, 1.0)]
    public void A_setting_that_cannot_work_is_refused(double highPassHz, double lowPassHz, double hysteresis)
    {
        Assert.Throws<ArgumentException>(() => new DetectorSetting("bad", highPassHz, lowPassHz, false, false, ThresholdMode.Relative, hysteresis, EdgeSelection.Rising));
    }

    internal static float[] Sine(double frequencyHz, double seconds, int sampleRate, double amplitude)
    {
        var samples = new float[(int)(seconds * sampleRate)];
        for (int i = 0; i < samples.Length; i++)
        {
            samples[i] = (float)(amplitude * Math.Sin(2 * Math.PI * frequencyHz * i / sampleRate + SinePhase));
        }

        return samples;
    }

    /// <summary>A sweep from 300 Hz to 4 kHz with a little noise, so every setting has edges at every spacing.</summary>
    private static float[] Chirp(double seconds, int sampleRate)
    {
        var samples = new float[(int)(seconds * sampleRate)];
        var random = new Random(11);
        double phase = 0;
        for (int i = 0; i < samples.Length; i++)
        {
            double f = 300 + 3700 * i / (double)samples.Length;
            phase += 2 * Math.PI * f / sampleRate;
            samples[i] = (float)(0.4 * Math.Sin(phase) + 0.02 * (random.NextDouble() - 0.5));
        }

        return samples;
    }

    private static EdgeBuffer[] NewBuffers(int count)
    {
        var buffers = new EdgeBuffer[count];
        for (int i = 0; i < count; i++)
        {
            buffers[i] = new EdgeBuffer();
        }

        return buffers;
    }

    private static List<Edge> Edges(DetectorSetting setting, float[] samples, int chunk)
    {
        var bank = new DetectorBank([setting], SampleRate);
        var buffer = NewBuffers(1);
        var all = new List<Edge>();
        for (int start = 0; start < samples.Length; start += chunk)
        {
            buffer[0].Clear();
            bank.Process(samples.AsSpan(start, Math.Min(chunk, samples.Length - start)), buffer);
            all.AddRange(buffer[0].Items.ToArray());
        }

        return all;
    }
}
