using TapeVault.Core.Dsp;
using Xunit;

namespace TapeVault.Core.Tests.Detection;

/// <summary>
/// The second-order Butterworth low-pass of the detector chain and the channel model, from the RBJ "Audio EQ
/// Cookbook": with Q = 1/√2 its magnitude at the cut-off is Q, that is −3.01 dB, and it passes DC at unity.
/// </summary>
public sealed class ButterworthTests
{
    private const int SampleRate = 44_100;

    [Theory]
    [InlineData(1000.0)]
    [InlineData(5000.0)]
    [InlineData(9000.0)]
    [InlineData(12000.0)]
    public void The_butterworth_low_pass_is_three_db_down_at_its_cut_off(double cutoffHz)
    {
        double gain = MeasuredGainDb(cutoffHz, cutoffHz);

        // RBJ Audio EQ Cookbook: the low-pass has |H| = Q at ω0; Q = 1/√2 gives 20·log10(1/√2) = −3.0103 dB.
        Assert.Equal(20 * Math.Log10(Math.Sqrt(0.5)), gain, 2);
    }

    [Theory]
    [InlineData(5000.0, 500.0)]
    [InlineData(5000.0, 10000.0)]
    [InlineData(9000.0, 3000.0)]
    public void The_butterworth_low_pass_follows_the_bilinear_butterworth_magnitude(double cutoffHz, double toneHz)
    {
        double gain = MeasuredGainDb(cutoffHz, toneHz);

        // Butterworth |H|² = 1 / (1 + (Ω/Ω0)⁴), on the frequency axis the bilinear transform warps: Ω = tan(πf/fs)
        // (RBJ Audio EQ Cookbook builds its filters by the bilinear transform with this prewarping).
        double ratio = Math.Tan(Math.PI * toneHz / SampleRate) / Math.Tan(Math.PI * cutoffHz / SampleRate);
        double expected = -10 * Math.Log10(1 + Math.Pow(ratio, 4));
        Assert.Equal(expected, gain, 1);
    }

    [Theory]
    [InlineData(5000.0, 500.0)]
    [InlineData(5000.0, 10000.0)]
    [InlineData(9000.0, 3000.0)]
    [InlineData(4000.0, 2400.0)]
    public void The_gain_the_coefficients_give_is_the_bilinear_butterworth_magnitude_and_what_a_tone_measures(double cutoffHz, double toneHz)
    {
        double gain = BiquadCoefficients.ButterworthLowPass(cutoffHz, SampleRate).GainDb(toneHz, SampleRate);

        // Butterworth |H|² = 1 / (1 + (Ω/Ω0)⁴) with the bilinear transform's prewarping Ω = tan(πf/fs) (RBJ Audio EQ
        // Cookbook); the coefficients are single precision, so the two agree to a few thousandths of a dB.
        double ratio = Math.Tan(Math.PI * toneHz / SampleRate) / Math.Tan(Math.PI * cutoffHz / SampleRate);
        Assert.Equal(-10 * Math.Log10(1 + Math.Pow(ratio, 4)), gain, 2);
        Assert.Equal(MeasuredGainDb(cutoffHz, toneHz), gain, 1);
    }

    [Fact]
    public void The_butterworth_low_pass_passes_a_steady_level_unchanged()
    {
        var c = BiquadCoefficients.ButterworthLowPass(3000, SampleRate);

        // The cookbook low-pass has H(z = 1) = (b0 + b1 + b2) / (1 + a1 + a2) = 1.
        Assert.Equal(1, (c.B0 + c.B1 + c.B2) / (1 + c.A1 + c.A2), 5);
    }

    [Fact]
    public void A_cut_off_at_or_above_the_usable_band_passes_the_signal_through()
    {
        Assert.Equal(BiquadCoefficients.PassThrough, BiquadCoefficients.ButterworthLowPass(22_000, SampleRate));
        Assert.Equal(BiquadCoefficients.PassThrough, BiquadCoefficients.ButterworthLowPass(0, SampleRate));
    }

    [Fact]
    public void Filtering_in_chunks_matches_filtering_all_at_once()
    {
        var all = Detection.DetectorBankTests.Sine(2500, 0.1, SampleRate, 0.5);
        var chunked = (float[])all.Clone();
        var one = new Biquad(BiquadCoefficients.ButterworthLowPass(4000, SampleRate));
        var two = new Biquad(BiquadCoefficients.ButterworthLowPass(4000, SampleRate));

        one.Process(all);
        for (int start = 0; start < chunked.Length; start += 97)
        {
            two.Process(chunked.AsSpan(start, Math.Min(97, chunked.Length - start)));
        }

        Assert.Equal(all, chunked);
    }

    private static double MeasuredGainDb(double cutoffHz, double toneHz)
    {
        var filter = new Biquad(BiquadCoefficients.ButterworthLowPass(cutoffHz, SampleRate));
        int n = SampleRate;
        var signal = new float[n];
        for (int i = 0; i < n; i++)
        {
            signal[i] = (float)Math.Sin(2 * Math.PI * toneHz * i / SampleRate);
        }

        filter.Process(signal);

        // Steady state: the second half, by a single-bin DFT over whole cycles of the tone.
        int start = n / 2;
        int length = (int)(Math.Floor((n - start) * toneHz / SampleRate) * SampleRate / toneHz);
        double re = 0, im = 0;
        for (int i = start; i < start + length; i++)
        {
            double phase = 2 * Math.PI * toneHz * i / SampleRate;
            re += signal[i] * Math.Cos(phase);
            im += signal[i] * Math.Sin(phase);
        }

        return 20 * Math.Log10(2 * Math.Sqrt(re * re + im * im) / length);
    }
}
