using System.Globalization;
using TapeVault.Core.Audio;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Synthesis;

/// <summary>
/// The channel model's print-through, converter (drive into clipping, resolution, dither), stereo captures with a
/// dead channel and partial dropouts do what the damage record says, measured where possible by SoX (a
/// general-purpose audio tool that shares no code with TapeVault) on the WAV file written.
/// </summary>
public sealed class ConverterAndPrintThroughTests(SynthesisFolder folder) : IClassFixture<SynthesisFolder>
{
    private const int Rate = 48_000;

    private static string F(double x) => x.ToString("0.######", CultureInfo.InvariantCulture);

    /// <summary>A 1 kHz square-wave recording of one second, rendered and written as a 32-bit float WAV.</summary>
    private string Write(string name, ChannelDamage damage)
    {
        var reversals = ChannelProbe.SquareWave(1000, 1.0);
        var model = new ChannelModel(reversals, damage, reversals[^1]);
        string path = folder.File(name + ".wav");
        using var writer = new CaptureWriterStream(path, damage.SampleRate, CaptureEncoding.Float32, model.Channels);
        var left = new float[4096];
        var right = new float[4096];
        int count;
        while ((count = model.Channels == 1 ? model.Render(left) : model.Render(left, right)) > 0)
        {
            if (model.Channels == 1)
            {
                writer.Write(left.AsSpan(0, count));
            }
            else
            {
                writer.Write(left.AsSpan(0, count), right.AsSpan(0, count));
            }
        }

        return path;
    }

    /// <summary>SoX's RMS of the stretch from <paramref name="start"/> for <paramref name="seconds"/> of one channel (1 or 2) or of a mono file (0).</summary>
    private string Rms(string path, double start, double seconds, int channel, out double rms)
    {
        string part = folder.File($"{Path.GetFileNameWithoutExtension(path)}-{F(start)}-{channel}.wav");
        var effects = new List<string> { "trim", F(start), F(seconds) };
        if (channel > 0)
        {
            effects.AddRange(["remix", channel.ToString(CultureInfo.InvariantCulture)]);
        }

        OutsideTool.Sox([path, "-e", "floating-point", part, .. effects]);
        rms = OutsideTool.SoxRms(part);
        return part;
    }

    [Theory]
    [InlineData(-40.0)]
    [InlineData(-50.0)]
    public void Print_through_puts_an_echo_one_wrap_before_and_after_the_recording_at_its_level(double echoDb)
    {
        // The recording runs from 2.5 s to 3.5 s of the capture; a wrap of 1.7 s puts the pre-echo at 0.8–1.8 s
        // and the post-echo at 4.2–5.2 s, where nothing else is.
        var damage = ChannelProbe.Clean(Rate) with { Chain = ReadChain.LineOutput, MarginSeconds = 2.5, PrintThroughDb = echoDb, PrintThroughSeconds = 1.7, Level = 0.5 };
        string path = Write($"print-through{echoDb}", damage);
        string quiet = Write($"no-print-through{echoDb}", damage with { PrintThroughDb = null });

        // Outside reference: SoX's RMS of the recording and of the stretches where the echoes fall.
        Rms(path, 2.6, 0.8, 0, out double signal);
        Rms(path, 0.9, 0.8, 0, out double pre);
        Rms(path, 4.3, 0.8, 0, out double post);
        Rms(quiet, 0.9, 0.8, 0, out double none);
        Assert.InRange(20 * Math.Log10(pre / signal), echoDb - 1, echoDb + 1);
        Assert.InRange(20 * Math.Log10(post / signal), echoDb - 1, echoDb + 1);
        Assert.True(none < signal * 1e-5, $"Without print-through the stretch before the recording has RMS {none} (signal {signal}).");
    }

    [Fact]
    public void A_drive_past_full_scale_clips_hard_at_full_scale()
    {
        var damage = ChannelProbe.Clean(Rate) with { Chain = ReadChain.LineOutput, Level = 0.3 };
        string clean = Write("unclipped", damage with { ClipDriveDb = 0 });
        string clipped = Write("clipped", damage with { ClipDriveDb = 20 });

        // Outside reference: SoX's stat of the two files. 20 dB of drive makes the peak of about 0.56 about 5.6; the
        // converter stops it at 1, so the peak is exactly full scale and the RMS rises by well under the 20 dB.
        double cleanPeak = MaximumAmplitude(clean);
        double clippedPeak = MaximumAmplitude(clipped);
        Rms(clean, 0.3, 0.8, 0, out double cleanRms);
        Rms(clipped, 0.3, 0.8, 0, out double clippedRms);
        Assert.InRange(cleanPeak, 0.3, 0.8);
        Assert.Equal(1.0, clippedPeak, 6);
        Assert.InRange(20 * Math.Log10(clippedRms / cleanRms), 3, 16);
    }

    [Theory]
    [InlineData(8, false)]
    [InlineData(8, true)]
    [InlineData(16, false)]
    [InlineData(16, true)]
    public void The_converter_rounds_to_its_resolution_with_the_error_of_plain_or_dithered_rounding(int bits, bool dither)
    {
        var damage = ChannelProbe.Clean(Rate) with { Chain = ReadChain.LineOutput, Level = 0.5, SnrDb = 30, MarginSeconds = 0.05 };
        var reversals = ChannelProbe.SquareWave(1000, 1.0);
        float[] exact = ChannelProbe.Render(reversals, damage);
        float[] rounded = ChannelProbe.Render(reversals, damage with { QuantizeBits = bits, Dither = dither });
        double step = Math.Pow(2, 1 - bits);
        double sum = 0;
        for (int i = 0; i < exact.Length; i++)
        {
            Assert.Equal(0, Math.IEEERemainder(rounded[i], step), 9);
            sum += (rounded[i] - exact[i]) * (double)(rounded[i] - exact[i]);
        }

        // Rounding a busy signal leaves an error of RMS step/√12; TPDF dither (two uniform values of ±½ step summed)
        // adds step²/6 of variance, so the total RMS is step/2 (Lipshitz, Wannamaker and Vanderkooy, "Quantization
        // and dither: a theoretical survey", J. Audio Eng. Soc. 1992; from memory).
        double rms = Math.Sqrt(sum / exact.Length);
        double expected = dither ? step / 2 : step / Math.Sqrt(12);
        Assert.InRange(rms, expected * 0.9, expected * 1.1);
    }

    [Theory]
    [InlineData(8, "8")]
    [InlineData(16, "16")]
    [InlineData(24, "24")]
    public void The_synthesiser_writes_the_converters_resolution(int bits, string soxBits)
    {
        var profile = TapeVault.Core.Formats.ProfileCatalog.BuiltIn.Get("biphase-1200");
        string path = folder.File($"resolution-{bits}.wav");
        CaptureSynthesizer.Write(path, profile, [new("RES", [1, 2, 3, 4])], new ChannelDamage { QuantizeBits = bits, SampleRate = 22_050, SnrDb = 30 });

        // Outside reference: SoX's reading of the header.
        Assert.Equal(soxBits, OutsideTool.SoxInfo("-b", path));
        Assert.Equal(22_050, OutsideTool.SoxSampleRate(path));
    }

    [Theory]
    [InlineData(CaptureChannels.LeftDead, 1, 2)]
    [InlineData(CaptureChannels.RightDead, 2, 1)]
    public void A_dead_channel_holds_only_its_noise_and_the_other_one_the_signal(CaptureChannels channels, int dead, int live)
    {
        var damage = ChannelProbe.Clean(Rate) with { Chain = ReadChain.LineOutput, Level = 0.5, Channels = channels, DeadChannelNoiseDbfs = -60 };
        string path = Write($"dead-{channels}", damage);
        string silent = Write($"dead-silent-{channels}", damage with { DeadChannelNoiseDbfs = null });

        // Outside reference: SoX counts the channels and measures each one's RMS.
        Assert.Equal(2, OutsideTool.SoxChannels(path));
        Rms(path, 0.3, 0.8, dead, out double deadRms);
        Rms(path, 0.3, 0.8, live, out double liveRms);
        Rms(silent, 0.3, 0.8, dead, out double silentRms);
        Assert.InRange(20 * Math.Log10(deadRms), -61, -59);
        Assert.InRange(liveRms, 0.1, 0.6);
        Assert.Equal(0, silentRms, 9);
    }

    [Theory]
    [InlineData(20.0)]
    [InlineData(40.0)]
    public void A_partial_dropout_drops_the_signal_by_its_depth(double depthDb)
    {
        // A steady tone on the head chain (no integrator to smear the level) with many random dropouts of one depth:
        // the quietest 1 ms window (two whole cycles of the tone) sits that far below the loudest, by RMS.
        var damage = ChannelProbe.Clean(Rate) with { RandomDropoutsPerMinute = 120, RandomDropoutDepthDb = (depthDb, depthDb), Seed = 5 };
        float[] samples = ChannelProbe.Render(ChannelProbe.SquareWave(1000, 4.0), damage);
        int window = Rate / 1000;
        int start = (int)(0.3 * Rate), end = (int)(3.9 * Rate);
        double loudest = 0, quietest = double.MaxValue;
        for (int s = start; s + window <= end; s += window)
        {
            double sum = 0;
            for (int i = s; i < s + window; i++)
            {
                sum += samples[i] * (double)samples[i];
            }

            double peak = Math.Sqrt(sum / window);

            loudest = Math.Max(loudest, peak);
            quietest = Math.Min(quietest, peak);
        }

        Assert.InRange(20 * Math.Log10(quietest / loudest), -depthDb - 1, -depthDb + 1);
    }

    private static double MaximumAmplitude(string path)
    {
        string report = OutsideTool.Run(OutsideTool.SoxPath, [path, "-n", "stat"]).StandardError;
        string line = report.Split('\n').First(l => l.StartsWith("Maximum amplitude:", StringComparison.Ordinal));
        return double.Parse(line["Maximum amplitude:".Length..].Trim(), CultureInfo.InvariantCulture);
    }
}
