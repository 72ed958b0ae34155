using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.Synthesis;

/// <summary>The damage drawer stays inside the ranges the trust measurement asks for, and reaches across them.</summary>
public sealed class RandomDamageDrawTests
{
    [Fact]
    public void Draws_cover_the_wide_ranges_and_stay_inside_them()
    {
        var rng = new Random(20261203);
        var draws = Enumerable.Range(0, 2000).Select(_ => RandomDamage.Draw(rng)).ToList();

        // The ranges of the trust measurement (TapeVault issue 12): speed ±7 %, wow 0–0.5 %, flutter 0–0.3 %, SNR
        // 12–45 dB, 0–60 dropouts a minute of −20 to −40 dB, deck band limit 4–14 kHz, azimuth 0–1°, print-through
        // −40 to −50 dB, 8/16/24-bit, 22.05–96 kHz.
        AssertSpans(draws.Select(d => d.Speed), 0.93, 1.07);
        AssertSpans(draws.Select(d => d.WowPercent), 0, 0.5);
        AssertSpans(draws.Select(d => d.FlutterPercent), 0, 0.3);
        AssertSpans(draws.Select(d => d.SnrDb!.Value), 12, 45);
        AssertSpans(draws.Select(d => d.RandomDropoutsPerMinute), 0, 60);
        AssertSpans(draws.Select(d => d.AzimuthDegrees), 0, 1);
        AssertSpans(draws.Where(d => d.PrintThroughDb is not null).Select(d => d.PrintThroughDb!.Value), -50, -40);
        Assert.All(draws, d => Assert.Equal((20.0, 40.0), d.RandomDropoutDepthDb));
        Assert.All(draws, d => Assert.InRange(d.DeckLowPassHz!.Value, 4_000, Math.Min(14_000, 0.45 * d.SampleRate)));
        Assert.All(draws, d => Assert.InRange(d.SampleRate, 22_050, 96_000));
        Assert.Equal([8, 16, 24], draws.Select(d => d.QuantizeBits!.Value).Distinct().Order());
        Assert.Equal(4, draws.Select(d => d.Channels).Distinct().Count());
        Assert.Equal(2, draws.Select(d => d.Chain).Distinct().Count());
        Assert.Contains(draws, d => d.Invert);
        Assert.Contains(draws, d => d.Dither);
        Assert.Contains(draws, d => d.HumLevel > 0);
        Assert.Contains(draws, d => d.ClipDriveDb > 6 && d.Level >= 0.5);
    }

    [Fact]
    public void A_seed_repeats_its_draw()
    {
        Assert.Equal(RandomDamage.Describe(RandomDamage.Draw(new Random(7))), RandomDamage.Describe(RandomDamage.Draw(new Random(7))));
        Assert.NotEqual(RandomDamage.Describe(RandomDamage.Draw(new Random(7))), RandomDamage.Describe(RandomDamage.Draw(new Random(8))));
    }

    /// <summary>Every value inside [low, high], and the draws reaching within a tenth of the span of both ends.</summary>
    private static void AssertSpans(IEnumerable<double> values, double low, double high)
    {
        var list = values.ToList();
        Assert.All(list, v => Assert.InRange(v, low, high));
        Assert.InRange(list.Min(), low, low + ((high - low) / 10));
        Assert.InRange(list.Max(), high - ((high - low) / 10), high);
    }
}
