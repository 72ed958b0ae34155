using TapeVault.Core.Blocks;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.RoundTrip;

/// <summary>
/// Synthesise → decode over every built-in profile and the damage a healthy deck and a fair tape give: every block
/// comes back, in order, Clean (Unchecked for a stream without checksum) and with exactly the bytes that were written.
/// The ground truth is <see cref="BlockWriter.Blocks"/>, the files laid out before any channel touched them.
/// </summary>
public sealed class MildDamageRoundTripTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    public static TheoryData<string, string> Cases()
    {
        var data = new TheoryData<string, string>();
        foreach (string id in RoundTrips.ProfileIds)
        {
            foreach (string damage in MildDamage.Keys)
            {
                data.Add(id, damage);
            }
        }

        return data;
    }

    /// <summary>
    /// Mild damage. Consumer decks run a few percent off speed with 0.1–0.3 % wow (common practice); 0.3° of azimuth
    /// costs 2.4 dB at 2.4 kHz (Mee and Daniel). The dropouts are shallow (−10 dB) and short, placed in the data.
    /// </summary>
    private static readonly Dictionary<string, Func<double, ChannelDamage>> MildDamage = new()
    {
        ["clean"] = _ => new ChannelDamage(),
        ["noise at 20 dB SNR"] = _ => new ChannelDamage { SnrDb = 20, Seed = 3 },
        ["3 % slow"] = _ => new ChannelDamage { Speed = 0.97 },
        ["3 % fast"] = _ => new ChannelDamage { Speed = 1.03 },
        ["0.3 % wow"] = _ => new ChannelDamage { WowPercent = 0.3 },
        ["head amplifier"] = _ => new ChannelDamage { Chain = ReadChain.HeadAmplifier },
        ["inverted"] = _ => new ChannelDamage { Invert = true },
        ["inverted head amplifier"] = _ => new ChannelDamage { Chain = ReadChain.HeadAmplifier, Invert = true },
        ["azimuth 0.3°"] = _ => new ChannelDamage { AzimuthDegrees = 0.3 },
        ["a few shallow dropouts"] = seconds => new ChannelDamage
        {
            Dropouts =
            [
                new Dropout(0.2 + 0.35 * seconds, 0.012, 0.68),
                new Dropout(0.2 + 0.6 * seconds, 0.020, 0.68),
                new Dropout(0.2 + 0.85 * seconds, 0.008, 0.68),
            ],
        },
        ["mixed: 24 dB SNR, 2 % fast, 0.2 % wow, head amplifier"] = _ => new ChannelDamage { SnrDb = 24, Speed = 1.02, WowPercent = 0.2, Chain = ReadChain.HeadAmplifier, Seed = 8 },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void Every_block_comes_back_with_exactly_the_written_bytes_under_mild_damage(string profileId, string damageName)
    {
        var profile = RoundTrips.Profile(profileId);
        var files = RoundTrips.Files(profile);
        var blocks = BlockWriter.Blocks(profile, files);
        var truth = RoundTrips.Truth(profile, blocks);
        double tapeSeconds = FluxWriter.Reversals(profile, blocks).Last();

        var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, MildDamage[damageName](tapeSeconds));

        var expectedStatus = profile.Layout.Checksum is null ? BlockStatus.Unchecked : BlockStatus.Clean;
        string got = RoundTrips.Describe(result);
        Assert.True(truth.Count == result.Best.Count, $"{truth.Count} blocks written, {result.Best.Count} positions found: {got}");
        for (int i = 0; i < truth.Count; i++)
        {
            var best = result.Best[i];
            Assert.True(best.Status == expectedStatus, $"block {i} is {best.Status}: {got}");
            Assert.True(truth[i].Matches(best), $"block {i} differs from what was written: {got}");
            Assert.Equal(i, best.Position);
        }
    }

    [Theory]
    [MemberData(nameof(ProfilesOnly))]
    public void The_files_put_together_again_from_the_blocks_are_the_files_that_were_written(string profileId)
    {
        var profile = RoundTrips.Profile(profileId);
        var files = RoundTrips.Files(profile);

        var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, new ChannelDamage { SnrDb = 26, Seed = 2 });

        // Blocks of a file follow one another; a new file starts where the layout's block number starts again (or,
        // for streams, with every block).
        var rebuilt = new List<List<byte>>();
        foreach (var block in result.Best)
        {
            if (rebuilt.Count == 0 || profile.Layout.IsStream || block.Identity.BlockNumber == 0)
            {
                rebuilt.Add([]);
            }

            rebuilt[^1].AddRange(block.Payload);
        }

        Assert.Equal(files.Count, rebuilt.Count);
        for (int f = 0; f < files.Count; f++)
        {
            Assert.Equal(files[f].Content, rebuilt[f].ToArray());
        }
    }

    public static TheoryData<string> ProfilesOnly() => [.. RoundTrips.ProfileIds];

    [Fact]
    public void The_demo_format_gives_every_block_its_file_name_and_number()
    {
        var profile = RoundTrips.Profile("orrin-80");
        var files = RoundTrips.Files(profile);

        var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, new ChannelDamage());

        Assert.Equal(["BINFILE:0", "BINFILE:1", "NOTES:0"], result.Best.Select(b => b.Identity.Key));
        Assert.All(result.Best, b => Assert.Equal(1.0, b.Confidence, 3));
    }

    [Fact]
    public void A_block_written_twice_is_read_at_one_position_from_both_copies()
    {
        var profile = RoundTrips.Profile("orrin-80");
        Assert.Equal(2, profile.Layout.Copies);
        var files = RoundTrips.Files(profile);

        var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, new ChannelDamage());

        var first = result.Candidates.Where(c => c.Position == 0 && c.SettingName == result.Best[0].SettingName).ToList();
        Assert.Equal(2, first.Count);
        Assert.True(first[1].StartSeconds > first[0].EndSeconds);
        Assert.All(first, c => Assert.Equal(BlockStatus.Clean, c.Status));
    }
}
