using System.Globalization;
using System.Text;

namespace TapeVault.Core.Synthesis;

/// <summary>
/// Draws one pass's damage from wide ranges, for measuring trust on captures nobody tuned for: speed ±7 %, wow
/// 0–0.5 %, flutter 0–0.3 %, SNR 12–45 dB, 0–60 dropouts a minute of 5–60 ms and −20 to −40 dB, deck band limit
/// 4–14 kHz (below the Nyquist frequency), azimuth error 0–1°, hum, print-through at −40 to −50 dB, clipping,
/// inversion, 8/16/24-bit converters with or without dither, 22.05–96 kHz, a dead channel in a stereo capture, and a
/// line-output or head-amplifier read chain. The ranges are wider than healthy decks (wow and flutter of 0.1–0.3 %
/// and a few percent of speed error are usual, common practice), so that the decoder meets what it was not tuned on.
/// </summary>
public static class RandomDamage
{
    /// <summary>The sample rates a capture may have been made at.</summary>
    public static IReadOnlyList<int> SampleRates { get; } = [22_050, 32_000, 44_100, 48_000, 88_200, 96_000];

    /// <summary>One pass's damage; every draw comes from <paramref name="rng"/>, so a seed repeats it exactly.</summary>
    public static ChannelDamage Draw(Random rng)
    {
        ArgumentNullException.ThrowIfNull(rng);
        int sampleRate = SampleRates[rng.Next(SampleRates.Count)];
        bool clip = rng.NextDouble() < 0.2;
        bool hum = rng.NextDouble() < 0.4;
        bool printThrough = rng.NextDouble() < 0.5;
        int bits = rng.NextDouble() switch
        {
            < 0.2 => 8,
            < 0.8 => 16,
            _ => 24,
        };
        var channels = rng.NextDouble() switch
        {
            < 0.7 => CaptureChannels.Mono,
            < 0.8 => CaptureChannels.Stereo,
            < 0.9 => CaptureChannels.LeftDead,
            _ => CaptureChannels.RightDead,
        };
        bool deadNoise = rng.NextDouble() < 0.5;
        return new ChannelDamage
        {
            SampleRate = sampleRate,
            Speed = 1 + Between(rng, -0.07, 0.07),
            WowPercent = Between(rng, 0, 0.5),
            WowHz = Between(rng, 0.3, 2),
            FlutterPercent = Between(rng, 0, 0.3),
            FlutterHz = Between(rng, 5, 20),
            Pw50Microseconds = Between(rng, 25, 55),
            Chain = rng.NextDouble() < 0.5 ? ReadChain.LineOutput : ReadChain.HeadAmplifier,
            Invert = rng.NextDouble() < 0.5,

            // Most passes are near the right azimuth and a few far off: the square of an even draw over 0–1°.
            AzimuthDegrees = Math.Pow(rng.NextDouble(), 2),
            DeckLowPassHz = Math.Min(Between(rng, 4_000, 14_000), 0.45 * sampleRate),

            // A quiet capture (0.05 of full scale) to a loud one; with clipping, a loud one driven 0–12 dB past full scale.
            Level = clip ? Between(rng, 0.5, 0.9) : 0.05 * Math.Pow(16, rng.NextDouble()),
            ClipDriveDb = clip ? Between(rng, 0, 12) : null,
            SnrDb = Between(rng, 12, 45),
            HumLevel = hum ? 0.001 * Math.Pow(30, rng.NextDouble()) : 0,
            HumHz = rng.NextDouble() < 0.5 ? 50 : 60,
            RandomDropoutsPerMinute = Between(rng, 0, 60),
            RandomDropoutDepthDb = (20, 40),
            PrintThroughDb = printThrough ? Between(rng, -50, -40) : null,
            PrintThroughSeconds = Between(rng, 1.5, 2.0),
            QuantizeBits = bits,
            Dither = rng.NextDouble() < 0.5,
            Channels = channels,
            DeadChannelNoiseDbfs = deadNoise ? Between(rng, -75, -50) : null,
            Seed = rng.Next(),
        };
    }

    /// <summary>The damage in one line, for a failure message or a report: every field the drawer sets.</summary>
    public static string Describe(ChannelDamage damage)
    {
        ArgumentNullException.ThrowIfNull(damage);
        var d = damage;
        var text = new StringBuilder();
        text.Append(CultureInfo.InvariantCulture, $"{d.SampleRate} Hz {d.QuantizeBits?.ToString(CultureInfo.InvariantCulture) ?? "-"}-bit{(d.Dither ? " dithered" : string.Empty)} {d.Channels}");
        if (d.DeadChannelNoiseDbfs is { } dead && d.Channels is CaptureChannels.LeftDead or CaptureChannels.RightDead)
        {
            text.Append(CultureInfo.InvariantCulture, $" (dead noise {dead:0} dBFS)");
        }

        text.Append(CultureInfo.InvariantCulture, $", {d.Chain}{(d.Invert ? " inverted" : string.Empty)}, speed {d.Speed:0.0000}, wow {d.WowPercent:0.00} % at {d.WowHz:0.0} Hz, flutter {d.FlutterPercent:0.00} % at {d.FlutterHz:0.0} Hz");
        text.Append(CultureInfo.InvariantCulture, $", PW50 {d.Pw50Microseconds:0} µs, azimuth {d.AzimuthDegrees:0.00}°, deck low-pass {d.DeckLowPassHz:0} Hz, level {d.Level:0.000}");
        if (d.ClipDriveDb is { } drive)
        {
            text.Append(CultureInfo.InvariantCulture, $", clipped at +{drive:0.0} dB drive");
        }

        text.Append(CultureInfo.InvariantCulture, $", SNR {d.SnrDb:0.0} dB, hum {d.HumLevel:0.0000} at {d.HumHz:0} Hz, {d.RandomDropoutsPerMinute:0.0} dropouts/min");
        if (d.RandomDropoutDepthDb is var (shallowest, deepest))
        {
            text.Append(CultureInfo.InvariantCulture, $" of {shallowest:0}–{deepest:0} dB");
        }

        if (d.PrintThroughDb is { } echo)
        {
            text.Append(CultureInfo.InvariantCulture, $", print-through {echo:0.0} dB at ±{d.PrintThroughSeconds:0.00} s");
        }

        text.Append(CultureInfo.InvariantCulture, $", seed {d.Seed}");
        return text.ToString();
    }

    private static double Between(Random rng, double low, double high) => low + ((high - low) * rng.NextDouble());
}
