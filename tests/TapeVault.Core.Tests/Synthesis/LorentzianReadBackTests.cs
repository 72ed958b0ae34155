using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.Synthesis;

/// <summary>
/// The read-back of an isolated flux reversal follows the Lorentzian V(t) = V0 / (1 + (2t/PW50)²)
/// (Mee and Daniel, Magnetic Recording Technology): peak V0 at the reversal, half height at ±PW50/2.
/// </summary>
public sealed class LorentzianReadBackTests
{
    private const int SampleRate = 192_000;

    // 62.5 µs is 12 samples at 192 kHz, so the peak and every offset below fall exactly on a sample.
    private const double Pw50 = 62.5e-6;
    private const double Reversal = 0.01;

    [Theory]
    [InlineData(0.0)]
    [InlineData(0.5)]
    [InlineData(-0.5)]
    [InlineData(1.0)]
    [InlineData(-1.0)]
    [InlineData(2.0)]
    [InlineData(-2.0)]
    [InlineData(4.0)]
    public void An_isolated_reversal_through_the_head_chain_reads_back_as_a_lorentzian(double offsetInPw50)
    {
        var damage = ChannelProbe.Clean(SampleRate) with { Pw50Microseconds = Pw50 * 1e6 };
        var samples = ChannelProbe.Render([Reversal, Reversal + 0.05], damage);
        double t = offsetInPw50 * Pw50;
        int index = SampleIndex(damage, Reversal + t);

        double expected = 1 / (1 + Math.Pow(2 * t / Pw50, 2));

        // Mee and Daniel, Magnetic Recording Technology: V(t) = V0 / (1 + (2t/PW50)²), with V0 = Level = 1.
        Assert.Equal(expected, samples[index], 4);
    }

    [Fact]
    public void The_pulse_is_half_its_peak_exactly_pw50_apart()
    {
        var damage = ChannelProbe.Clean(SampleRate) with { Pw50Microseconds = Pw50 * 1e6 };
        var samples = ChannelProbe.Render([Reversal, Reversal + 0.05], damage);
        int peak = SampleIndex(damage, Reversal);
        int halfSamples = (int)Math.Round(Pw50 / 2 * SampleRate);

        // Mee and Daniel: PW50 is the pulse's width at 50 % of its amplitude.
        Assert.Equal(0.5, samples[peak - halfSamples] / samples[peak], 4);
        Assert.Equal(0.5, samples[peak + halfSamples] / samples[peak], 4);
        Assert.Equal(peak, MaxIndex(samples));
    }

    [Fact]
    public void Successive_reversals_read_back_with_alternating_polarity()
    {
        var damage = ChannelProbe.Clean(SampleRate) with { Pw50Microseconds = Pw50 * 1e6 };
        double second = Reversal + 0.002;
        var samples = ChannelProbe.Render([Reversal, second, second + 0.05], damage);

        // Faraday's law (DESIGN §1): the head voltage follows −dΦ/dt, so opposite reversals give opposite pulses.
        Assert.Equal(1, samples[SampleIndex(damage, Reversal)], 3);
        Assert.Equal(-1, samples[SampleIndex(damage, second)], 3);
    }

    [Fact]
    public void An_inverted_chain_and_a_lower_level_scale_the_pulse()
    {
        var damage = ChannelProbe.Clean(SampleRate) with { Pw50Microseconds = Pw50 * 1e6, Invert = true, Level = 0.25 };
        var samples = ChannelProbe.Render([Reversal, Reversal + 0.05], damage);

        Assert.Equal(-0.25, samples[SampleIndex(damage, Reversal)], 5);
        Assert.Equal(-0.125, samples[SampleIndex(damage, Reversal + Pw50 / 2)], 5);
    }

    [Fact]
    public void At_playback_speed_the_pulse_arrives_earlier_and_narrower_in_capture_time()
    {
        const double speed = 1.2;
        var damage = ChannelProbe.Clean(SampleRate) with { Pw50Microseconds = Pw50 * 1e6, Speed = speed };
        var samples = ChannelProbe.Render([0.015, 0.065], damage);

        // Capture time = margin + tape time / speed; the tape-time width PW50 shrinks by the same factor.
        int peak = (int)Math.Round((damage.MarginSeconds + 0.015 / speed) * SampleRate);
        Assert.Equal(peak, MaxIndex(samples));
        double halfWidthCapture = Pw50 / 2 / speed;
        double atHalf = samples[peak + (int)Math.Round(halfWidthCapture * SampleRate)];
        Assert.Equal(0.5, atHalf, 4);
    }

    private static int SampleIndex(ChannelDamage damage, double tapeSeconds) =>
        (int)Math.Round((damage.MarginSeconds + tapeSeconds / damage.Speed) * damage.SampleRate);

    private static int MaxIndex(float[] samples)
    {
        int best = 0;
        for (int i = 1; i < samples.Length; i++)
        {
            if (samples[i] > samples[best])
            {
                best = i;
            }
        }

        return best;
    }
}
