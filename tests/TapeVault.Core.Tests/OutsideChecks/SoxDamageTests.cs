using System.Collections.Concurrent;
using System.Globalization;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.OutsideChecks;

/// <summary>
/// The minimodem captures of <see cref="KcsCaptures"/> (the Kansas City Standard's tones and framing, BYTE, February
/// 1976, with its two stop bits), written at half amplitude so that resampling never clips, made once per class.
/// </summary>
public sealed class KcsDamageSources : IDisposable
{
    private readonly ConcurrentDictionary<(int Baud, int Rate), Lazy<(string Path, double FirstByteSeconds)>> sources = new();

    public OutsideTempFolder Temp { get; } = new();

    /// <summary>The source capture, and when TapeVault places its first byte (to place the bytes of partial reads).</summary>
    public (string Path, double FirstByteSeconds) Get(int baud, int sampleRate) =>
        sources.GetOrAdd((baud, sampleRate), key => new Lazy<(string, double)>(() =>
        {
            string path = KcsCaptures.Write(Temp.Root, $"source-{key.Baud}-{key.Rate}", key.Baud, key.Rate, stopBits: 2, amplitude: 0.5);
            var clean = CaptureDecoder.Decode(path, ProfileCatalog.BuiltIn.Get($"kcs-{key.Baud}"));
            var best = Assert.Single(clean.Best);
            Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), best.PayloadHex);
            return (path, best.ByteSeconds[0]);
        })).Value;

    public void Dispose() => Temp.Dispose();
}

/// <summary>
/// SoX, a general-purpose audio tool, damages minimodem's Kansas City captures the way decks and transfers do: speed
/// off by 3 %, a 3 kHz low-pass, noise, resampling to 22.05 kHz, a 20 dB drop in level, inverted polarity, 8-bit
/// samples. Mild damage must leave the bytes exact. Heavy damage (noise as strong as the signal or stronger, a brutal
/// 800 Hz low-pass) may lose bytes, but TapeVault must never report wrong bytes with high confidence.
/// </summary>
public sealed class SoxDamageTests : IClassFixture<KcsDamageSources>
{
    private const int StopBits = 2;
    private readonly KcsDamageSources sources;

    public SoxDamageTests(KcsDamageSources sources)
    {
        this.sources = sources;
    }

    [Theory]
    [InlineData(300, 44_100, "speed 1.03")]
    [InlineData(300, 44_100, "speed 0.97")]
    [InlineData(300, 44_100, "lowpass 3000")]
    [InlineData(300, 44_100, "rate 22050")]
    [InlineData(300, 44_100, "gain -20")]
    [InlineData(300, 44_100, "invert")]
    [InlineData(300, 44_100, "8-bit")]
    [InlineData(300, 44_100, "noise 20 dB")]
    [InlineData(300, 44_100, "hiss from a second before the lead-in")]
    [InlineData(300, 44_100, "all mild at once")]
    [InlineData(300, 48_000, "speed 1.03")]
    [InlineData(300, 48_000, "speed 0.97")]
    [InlineData(300, 48_000, "lowpass 3000")]
    [InlineData(300, 48_000, "rate 22050")]
    [InlineData(300, 48_000, "gain -20")]
    [InlineData(300, 48_000, "invert")]
    [InlineData(300, 48_000, "8-bit")]
    [InlineData(300, 48_000, "noise 20 dB")]
    [InlineData(300, 48_000, "hiss from a second before the lead-in")]
    [InlineData(300, 48_000, "all mild at once")]
    [InlineData(1200, 44_100, "speed 1.03")]
    [InlineData(1200, 44_100, "speed 0.97")]
    [InlineData(1200, 44_100, "lowpass 3000")]
    [InlineData(1200, 44_100, "rate 22050")]
    [InlineData(1200, 44_100, "gain -20")]
    [InlineData(1200, 44_100, "invert")]
    [InlineData(1200, 44_100, "8-bit")]
    [InlineData(1200, 44_100, "noise 20 dB")]
    [InlineData(1200, 44_100, "hiss from a second before the lead-in")]
    [InlineData(1200, 44_100, "all mild at once")]
    [InlineData(1200, 48_000, "speed 1.03")]
    [InlineData(1200, 48_000, "speed 0.97")]
    [InlineData(1200, 48_000, "lowpass 3000")]
    [InlineData(1200, 48_000, "rate 22050")]
    [InlineData(1200, 48_000, "gain -20")]
    [InlineData(1200, 48_000, "invert")]
    [InlineData(1200, 48_000, "8-bit")]
    [InlineData(1200, 48_000, "noise 20 dB")]
    [InlineData(1200, 48_000, "hiss from a second before the lead-in")]
    [InlineData(1200, 48_000, "all mild at once")]
    public void Decode_KeepsMinimodemBytesExact_UnderMildSoxDamage(int baud, int sampleRate, string damage)
    {
        var (source, firstByte) = sources.Get(baud, sampleRate);
        var (damaged, timing) = Damage(source, baud, sampleRate, damage);

        var result = CaptureDecoder.Decode(damaged, ProfileCatalog.BuiltIn.Get($"kcs-{baud}"));

        // Outside reference: the bytes minimodem was given to send.
        var best = Assert.Single(result.Best);
        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), best.PayloadHex);
        AssertNoConfidentWrongBytes(result, baud, firstByte, timing);
    }

    [Theory]
    [InlineData(300, 44_100, "noise 0 dB")]
    [InlineData(300, 44_100, "noise -6 dB")]
    [InlineData(300, 44_100, "lowpass 800")]
    [InlineData(300, 44_100, "lowpass 800 twice")]
    [InlineData(300, 44_100, "noise 0 dB and lowpass 800")]
    [InlineData(300, 44_100, "dropout of 0.1 s")]
    [InlineData(300, 48_000, "noise 0 dB")]
    [InlineData(300, 48_000, "noise -6 dB")]
    [InlineData(300, 48_000, "lowpass 800")]
    [InlineData(300, 48_000, "lowpass 800 twice")]
    [InlineData(300, 48_000, "noise 0 dB and lowpass 800")]
    [InlineData(300, 48_000, "dropout of 0.1 s")]
    [InlineData(1200, 44_100, "noise 0 dB")]
    [InlineData(1200, 44_100, "noise -6 dB")]
    [InlineData(1200, 44_100, "lowpass 800")]
    [InlineData(1200, 44_100, "lowpass 800 twice")]
    [InlineData(1200, 44_100, "noise 0 dB and lowpass 800")]
    [InlineData(1200, 44_100, "dropout of 0.1 s")]
    [InlineData(1200, 48_000, "noise 0 dB")]
    [InlineData(1200, 48_000, "noise -6 dB")]
    [InlineData(1200, 48_000, "lowpass 800")]
    [InlineData(1200, 48_000, "lowpass 800 twice")]
    [InlineData(1200, 48_000, "noise 0 dB and lowpass 800")]
    [InlineData(1200, 48_000, "dropout of 0.1 s")]
    public void Decode_NeverReportsWrongBytesWithHighConfidence_UnderHeavySoxDamage(int baud, int sampleRate, string damage)
    {
        var (source, firstByte) = sources.Get(baud, sampleRate);
        var (damaged, timing) = Damage(source, baud, sampleRate, damage);

        var result = CaptureDecoder.Decode(damaged, ProfileCatalog.BuiltIn.Get($"kcs-{baud}"));

        AssertNoConfidentWrongBytes(result, baud, firstByte, timing);
        foreach (var best in result.Best)
        {
            if (!HasRightBytes(best, baud, firstByte, timing))
            {
                Assert.True(
                    best.Status == BlockStatus.Failed || best.Confidence < 0.5,
                    $"Position {best.Position} ({best.SettingName}) has wrong bytes but status {best.Status} and confidence {best.Confidence:0.000}.");
            }
        }
    }

    [Theory]
    [InlineData(300, 44_100, 0.97)]
    [InlineData(300, 44_100, 1.03)]
    [InlineData(300, 48_000, 0.97)]
    [InlineData(300, 48_000, 1.03)]
    [InlineData(1200, 44_100, 0.97)]
    [InlineData(1200, 44_100, 1.03)]
    [InlineData(1200, 48_000, 0.97)]
    [InlineData(1200, 48_000, 1.03)]
    public void Decode_MeasuresThePlaybackSpeedThatSoxSet(int baud, int sampleRate, double factor)
    {
        var (source, _) = sources.Get(baud, sampleRate);
        var (damaged, _) = Damage(source, baud, sampleRate, string.Create(CultureInfo.InvariantCulture, $"speed {factor}"));

        var result = CaptureDecoder.Decode(damaged, ProfileCatalog.BuiltIn.Get($"kcs-{baud}"));

        // Outside reference: SoX's speed factor (its speed effect plays the audio that much faster, pitch and tempo
        // together). Every setting's measurement, not only the winner's, must be within 0.2 % of it.
        Assert.NotEmpty(result.Candidates);
        foreach (var candidate in result.Candidates)
        {
            Assert.True(
                Math.Abs(candidate.Speed - factor) <= 0.002,
                $"{candidate.SettingName} measured speed {candidate.Speed:0.0000}; SoX played the capture at {factor}.");
        }
    }

    /// <summary>
    /// The property that matters for an unchecked stream: a block of any setting reported at confidence 0.9 or more
    /// holds exactly the bytes minimodem sent at its place in the text.
    /// </summary>
    private static void AssertNoConfidentWrongBytes(DecodeResult result, int baud, double firstByte, Timing timing)
    {
        foreach (var candidate in result.Candidates)
        {
            if (candidate.Confidence >= 0.9)
            {
                Assert.True(
                    HasRightBytes(candidate, baud, firstByte, timing),
                    $"{candidate.SettingName} reported {candidate.Payload.Length} bytes at confidence {candidate.Confidence:0.000} " +
                    $"({candidate.Status}, {candidate.FramingErrors} framing errors), but they are not the bytes minimodem sent.");
            }
        }
    }

    /// <summary>The block's payload is the slice of the text that starts at the character its first byte's time names.</summary>
    private static bool HasRightBytes(BlockCandidate block, int baud, double firstByte, Timing timing)
    {
        if (block.Payload.IsEmpty)
        {
            return false;
        }

        double frame = KcsCaptures.FrameSeconds(baud, StopBits);
        int offset = (int)Math.Round((((block.ByteSeconds[0] - timing.ShiftSeconds) * timing.Scale) - firstByte) / frame);
        byte[] text = KcsCaptures.Text;
        return offset >= 0 && offset + block.Payload.Length <= text.Length
            && block.Payload.AsSpan().SequenceEqual(text.AsSpan(offset, block.Payload.Length));
    }

    /// <summary>
    /// Applies one named damage with SoX; returns the damaged file and how its times map to the source's: how far
    /// SoX moved the tape on, and how much it sped it up.
    /// </summary>
    private (string Path, Timing Timing) Damage(string source, int baud, int sampleRate, string damage)
    {
        string name = $"{baud}-{sampleRate}-{damage.Replace(' ', '-')}";
        string output = sources.Temp.File($"{name}.wav");
        double timeScale = 1;
        double shift = 0;
        switch (damage)
        {
            case "speed 1.03" or "speed 0.97":
                // SoX's speed effect relabels the rate and then resamples back to the input rate (its rate effect).
                string factor = damage["speed ".Length..];
                OutsideTool.Sox(source, output, "speed", factor);
                Assert.Equal(sampleRate, OutsideTool.SoxSampleRate(output));
                timeScale = double.Parse(factor, CultureInfo.InvariantCulture);
                break;
            case "lowpass 3000":
                OutsideTool.Sox(source, output, "lowpass", "3000");
                break;
            case "rate 22050":
                OutsideTool.Sox(source, output, "rate", "22050");
                Assert.Equal(22_050, OutsideTool.SoxSampleRate(output));
                break;
            case "gain -20":
                OutsideTool.Sox(source, output, "gain", "-20");
                break;
            case "invert":
                OutsideTool.Sox(source, output, "vol", "-1");
                break;
            case "8-bit":
                OutsideTool.Sox(source, "-b", "8", output);
                Assert.Equal("8", OutsideTool.SoxInfo("-b", output));
                Assert.Equal("Unsigned Integer PCM", OutsideTool.SoxInfo("-e", output));
                break;
            case "noise 20 dB":
                AddNoise(source, output, sampleRate, 20);
                break;
            case "hiss from a second before the lead-in":
                // Tape hiss alone comes first, as on a real capture: nothing learnt from it may bias the read.
                string padded = sources.Temp.File($"{name}.padded.wav");
                OutsideTool.Sox(source, padded, "pad", "1", "0");
                AddNoise(padded, output, sampleRate, 20);
                shift = 1;
                break;
            case "all mild at once":
                string noisy = sources.Temp.File($"{name}.noisy.wav");
                AddNoise(source, noisy, sampleRate, 20);
                OutsideTool.Sox(noisy, "-b", "8", output, "speed", "0.97", "lowpass", "3000", "vol", "-1");
                timeScale = 0.97;
                break;
            case "noise 0 dB":
                AddNoise(source, output, sampleRate, 0);
                break;
            case "noise -6 dB":
                AddNoise(source, output, sampleRate, -6);
                break;
            case "lowpass 800":
                // One second-order low-pass: the mark tone (2400 Hz) comes out about 19 dB down, the space tone (1200 Hz) about 8 dB.
                OutsideTool.Sox(source, output, "lowpass", "800");
                break;
            case "lowpass 800 twice":
                // Two second-order low-passes: the mark tone (2400 Hz) comes out about 38 dB down, the space tone about 16 dB.
                OutsideTool.Sox(source, output, "lowpass", "800", "lowpass", "800");
                break;
            case "noise 0 dB and lowpass 800":
                string loud = sources.Temp.File($"{name}.noisy.wav");
                AddNoise(source, loud, sampleRate, 0);
                OutsideTool.Sox(loud, output, "lowpass", "800");
                break;
            case "dropout of 0.1 s":
                // SoX cuts the capture 4 s in and puts 0.1 s of silence in place of the next 0.1 s of tape.
                OutsideTool.SoxSilence(source, output, 4, 0.1);
                break;
            default:
                throw new ArgumentOutOfRangeException(nameof(damage), damage, "Unknown damage.");
        }

        return (output, new Timing(shift, timeScale));
    }

    /// <summary>A time t in a damaged file is the source's time (t − ShiftSeconds) × Scale.</summary>
    private readonly record struct Timing(double ShiftSeconds, double Scale);

    /// <summary>
    /// Mixes in SoX's white noise, band-limited to 300–4000 Hz (the band of the two tones, so all of it competes with
    /// them), at <paramref name="snrDb"/> below the signal by SoX's RMS measurements of both; the sum peaks well
    /// below full scale, so the mix does not clip.
    /// </summary>
    private void AddNoise(string source, string output, int sampleRate, double snrDb)
    {
        string noise = sources.Temp.File($"{Path.GetFileNameWithoutExtension(output)}.noise.wav");
        string duration = OutsideTool.SoxInfo("-D", source);
        OutsideTool.Sox("-n", "-r", sampleRate.ToString(CultureInfo.InvariantCulture), "-b", "16", "-c", "1", noise,
            "synth", duration, "whitenoise", "sinc", "300-4000");
        double signalRms = OutsideTool.SoxRms(source);
        double noiseRms = OutsideTool.SoxRms(noise);
        double signalGain = 0.1 / signalRms;
        double noiseGain = 0.1 * Math.Pow(10, -snrDb / 20) / noiseRms;
        OutsideTool.Sox("-m",
            "-v", signalGain.ToString("R", CultureInfo.InvariantCulture), source,
            "-v", noiseGain.ToString("R", CultureInfo.InvariantCulture), noise,
            output);
    }
}
