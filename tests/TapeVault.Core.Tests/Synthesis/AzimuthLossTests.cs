using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.Synthesis;

/// <summary>
/// Azimuth error loses high frequencies as 20·log10|sin x / x| with x = π·w·tan θ / λ (Mee and Daniel, Magnetic
/// Recording Technology). A steady square-wave recording is rendered with and without the error and the fundamental
/// measured by a single-bin DFT; the ratio must follow the closed form.
/// </summary>
public sealed class AzimuthLossTests
{
    private const int SampleRate = 192_000;

    // At 192 kHz the sampled moving average is within a few thousandths of a dB of the continuous one; at 44.1 kHz
    // the sampled average departs from sin x / x by (π·f/fs)²/6 relative, under 0.2 dB at 4.8 kHz.
    [Theory]
    [InlineData(1200, 0.3, SampleRate, 0.1)]
    [InlineData(2400, 0.3, SampleRate, 0.1)]
    [InlineData(4800, 0.3, SampleRate, 0.1)]
    [InlineData(2400, 0.6, SampleRate, 0.1)]
    [InlineData(1200, 1.0, SampleRate, 0.1)]
    [InlineData(1200, 0.3, 44_100, 0.5)]
    [InlineData(4800, 0.3, 44_100, 0.5)]
    public void The_fundamental_of_a_square_wave_falls_by_the_sinc_azimuth_loss(int frequencyHz, double azimuthDegrees, int sampleRate, double toleranceDb)
    {
        var straight = ChannelProbe.Clean(sampleRate) with { Chain = ReadChain.LineOutput };
        var skewed = straight with { AzimuthDegrees = azimuthDegrees };

        double measured = 20 * Math.Log10(Fundamental(skewed, frequencyHz) / Fundamental(straight, frequencyHz));

        // Mee and Daniel: loss = 20·log10|sin x / x|, x = π·w·tan θ / λ, λ = v / f.
        double x = Math.PI * skewed.TrackWidthMm * 0.1 * Math.Tan(azimuthDegrees * Math.PI / 180) / (skewed.TapeSpeedCmPerSecond / frequencyHz);
        double expected = 20 * Math.Log10(Math.Abs(Math.Sin(x) / x));
        Assert.InRange(measured, expected - toleranceDb, expected + toleranceDb);
    }

    [Theory]
    [InlineData(1200, 0.3)]
    [InlineData(4800, 0.3)]
    [InlineData(2400, 0.6)]
    public void The_published_loss_formula_of_the_model_matches_the_handbook(int frequencyHz, double azimuthDegrees)
    {
        var damage = new ChannelDamage { AzimuthDegrees = azimuthDegrees };
        double x = Math.PI * 0.15 * Math.Tan(azimuthDegrees * Math.PI / 180) * frequencyHz / 4.76;

        // Mee and Daniel: 20·log10|sin x / x| with w = 1.5 mm and v = 4.76 cm/s (IEC 60094, compact cassette).
        Assert.Equal(20 * Math.Log10(Math.Abs(Math.Sin(x) / x)), ChannelModel.AzimuthLossDb(damage, frequencyHz), 9);
    }

    [Fact]
    public void Without_azimuth_error_there_is_no_loss_and_no_smear()
    {
        var damage = new ChannelDamage();

        Assert.Equal(0, ChannelModel.AzimuthLossDb(damage, 4800));
        Assert.Equal(0, ChannelModel.AzimuthSmearSeconds(damage));
    }

    [Fact]
    public void The_smear_is_the_time_the_tape_takes_to_cross_the_skew_of_the_gap()
    {
        var damage = new ChannelDamage { AzimuthDegrees = 0.3, TrackWidthMm = 1.5, TapeSpeedCmPerSecond = 4.76 };

        // Geometry (Mee and Daniel): one edge of a track of width w sees the tape w·tan θ later than the other.
        Assert.Equal(0.15 * Math.Tan(0.3 * Math.PI / 180) / 4.76, ChannelModel.AzimuthSmearSeconds(damage), 12);
    }

    [Fact]
    public void Azimuth_error_leaves_the_level_of_a_slow_signal_alone()
    {
        var straight = ChannelProbe.Clean(SampleRate) with { Chain = ReadChain.LineOutput };
        var skewed = straight with { AzimuthDegrees = 0.6 };

        double ratio = Fundamental(skewed, 100) / Fundamental(straight, 100);

        // Mee and Daniel: sin x / x → 1 as x → 0 (x = 0.10 at 100 Hz and 0.6°, a loss of 0.016 dB).
        Assert.Equal(1, ratio, 2);
    }

    private static double Fundamental(ChannelDamage damage, int frequencyHz)
    {
        var samples = ChannelProbe.Render(ChannelProbe.SquareWave(frequencyHz, 0.4), damage);

        // Skip the margin and 0.1 s of settling; measure over 0.2 s, a whole number of periods of every test tone.
        int rate = damage.SampleRate;
        int start = (int)((damage.MarginSeconds + 0.11) * rate);
        return ChannelProbe.ToneAmplitude(samples, start, rate / 5, frequencyHz, rate);
    }
}
