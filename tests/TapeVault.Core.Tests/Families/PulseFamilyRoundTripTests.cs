using System.Globalization;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using TapeVault.Core.Tests.RoundTrip;
using Xunit;

namespace TapeVault.Core.Tests.Families;

/// <summary>
/// The two pulse-width families of the format language's worked examples (docs/profiles.md), round-tripped with
/// exact bytes: written by the synthesiser from the profile alone, read back through the channel model and through
/// SoX effect chains.
/// </summary>
public sealed class PulseFamilyRoundTripTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    public static TheoryData<string, string> Cases()
    {
        var data = new TheoryData<string, string>();
        foreach (string id in new[] { "one-cycle-bits", "three-class-pairs" })
        {
            foreach (string damage in Damage.Keys)
            {
                data.Add(id, damage);
            }
        }

        return data;
    }

    private static readonly Dictionary<string, ChannelDamage> Damage = new()
    {
        ["clean"] = new ChannelDamage(),
        ["18 dB SNR, 4 % slow, 0.3 % wow"] = new ChannelDamage { SnrDb = 18, Speed = 0.96, WowPercent = 0.3, Seed = 41 },
        ["head amplifier, inverted, 5 % fast, flutter"] = new ChannelDamage { Chain = ReadChain.HeadAmplifier, Invert = true, Speed = 1.05, FlutterPercent = 0.2, SnrDb = 22, Seed = 42 },
        // 0.25° of azimuth error costs about 4 dB at the short class's 3.6 kHz (20·log10|sin x / x|, Mee and Daniel).
        ["azimuth 0.25°, hum"] = new ChannelDamage { AzimuthDegrees = 0.25, HumLevel = 0.1, SnrDb = 24, Seed = 43 },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void Every_block_comes_back_clean_with_the_written_bytes(string profileId, string damageName)
    {
        var profile = FamilyProfiles.Get(profileId);
        var files = Files();
        var blocks = BlockWriter.Blocks(profile, files);

        var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, Damage[damageName]);

        AssertExact(profile, blocks, result);
    }

    public static TheoryData<string, string> SoxCases()
    {
        var data = new TheoryData<string, string>();
        foreach (string id in new[] { "one-cycle-bits", "three-class-pairs" })
        {
            data.Add(id, "hiss at 20 dB, speed 0.96, lowpass 6000, vol -1");
            data.Add(id, "speed 1.05, highpass 150, 8-bit");
        }

        return data;
    }

    /// <summary>
    /// Damage made outside the project: SoX (a general-purpose audio tool) adds band-limited hiss from its own noise
    /// generator, plays the capture off speed (its speed effect), filters, inverts and re-quantises it.
    /// </summary>
    [Theory]
    [MemberData(nameof(SoxCases))]
    public void Every_block_comes_back_clean_through_a_sox_effect_chain(string profileId, string chain)
    {
        var profile = FamilyProfiles.Get(profileId);
        var files = Files();
        string source = folder.NewCapture("sox-source");
        var capture = CaptureSynthesizer.Write(source, profile, files, new ChannelDamage { SnrDb = 30, Seed = 44 });
        string damaged = folder.NewCapture("sox-damaged");
        switch (chain)
        {
            case "hiss at 20 dB, speed 0.96, lowpass 6000, vol -1":
                string noisy = folder.NewCapture("sox-noisy");
                AddHiss(source, noisy, 20);
                OutsideTool.Sox(noisy, damaged, "speed", "0.96", "lowpass", "6000", "vol", "-1");
                break;
            default:
                OutsideTool.Sox(source, "-b", "8", damaged, "speed", "1.05", "highpass", "150");
                Assert.Equal("8", OutsideTool.SoxInfo("-b", damaged));
                break;
        }

        var result = CaptureDecoder.Decode(damaged, profile);

        AssertExact(profile, capture.Blocks, result);
    }

    // SoX's white noise, band-limited to 300–4000 Hz, mixed at the given ratio of RMS levels (both measured by SoX).
    private void AddHiss(string source, string output, double snrDb)
    {
        string noise = folder.NewCapture("sox-hiss");
        string duration = OutsideTool.SoxInfo("-D", source);
        OutsideTool.Sox("-n", "-r", OutsideTool.SoxSampleRate(source).ToString(CultureInfo.InvariantCulture), "-b", "16", "-c", "1", noise,
            "synth", duration, "whitenoise", "sinc", "300-4000");
        double signalGain = 0.1 / OutsideTool.SoxRms(source);
        double noiseGain = 0.1 * Math.Pow(10, -snrDb / 20) / OutsideTool.SoxRms(noise);
        OutsideTool.Sox("-m",
            "-v", signalGain.ToString("R", CultureInfo.InvariantCulture), source,
            "-v", noiseGain.ToString("R", CultureInfo.InvariantCulture), noise,
            output);
    }

    private static void AssertExact(FormatProfile profile, IReadOnlyList<byte[]> blocks, DecodeResult result)
    {
        var truth = RoundTrips.Truth(profile, blocks);
        string got = RoundTrips.Describe(result);
        Assert.True(truth.Count == result.Best.Count, $"{truth.Count} blocks written, {result.Best.Count} positions found: {got}");
        for (int i = 0; i < truth.Count; i++)
        {
            Assert.True(result.Best[i].Status == BlockStatus.Clean, $"block {i} is {result.Best[i].Status}: {got}");
            Assert.True(truth[i].Matches(result.Best[i]), $"block {i} differs from what was written: {got}");
        }
    }

    // A binary file of every byte value, longer than one 256-byte block, and a short text file.
    private static IReadOnlyList<TapeFile> Files()
    {
        var random = new Random(20_261_203);
        var binary = new byte[700];
        random.NextBytes(binary);
        for (int i = 0; i < 256; i++)
        {
            binary[i * 2] = (byte)i;
        }

        return [new("PROGRAM", binary), new("README", System.Text.Encoding.ASCII.GetBytes("THE QUICK BROWN FOX JUMPS OVER THE LAZY DOG 0123456789"))];
    }
}
