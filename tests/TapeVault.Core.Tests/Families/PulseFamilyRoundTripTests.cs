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
        foreach (string id in new[] { "one-cycle-bits" })
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
        ["azimuth 0.4°, hum"] = new ChannelDamage { AzimuthDegrees = 0.4, HumLevel = 0.1, SnrDb = 24, Seed = 43 },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void Every_block_comes_back_clean_with_the_written_bytes(string profileId, string damageName)
    {
        var profile = ProfileCatalog.BuiltIn.Get(profileId);
        var files = Files();
        var blocks = BlockWriter.Blocks(profile, files);

        var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, Damage[damageName]);

        AssertExact(profile, blocks, result);
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
