using TapeVault.Core.Blocks;
using TapeVault.Core.Synthesis;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.RoundTrip;

/// <summary>
/// Under heavy damage blocks are lost, but a checksum format must never call a wrong block Clean. Over a grid of
/// seeds at 6–10 dB SNR with many dropouts, wow and off-speed decks, every Clean candidate of every detector setting
/// is compared with the blocks as written.
/// </summary>
public sealed class HeavyDamageTests(RoundTripFolder folder, ITestOutputHelper output) : IClassFixture<RoundTripFolder>
{
    private const int Seeds = 20;

    public static TheoryData<string> CheckedProfiles() => [.. RoundTrips.CheckedProfileIds];

    public static TheoryData<string> StreamProfiles() => [.. RoundTrips.ProfileIds.Where(id => RoundTrips.Profile(id).Layout.IsStream)];

    [Theory]
    [MemberData(nameof(CheckedProfiles))]
    public void A_block_whose_bytes_differ_from_the_truth_never_comes_out_clean(string profileId)
    {
        var profile = RoundTrips.Profile(profileId);
        var files = RoundTrips.Files(profile);
        var truth = RoundTrips.Truth(profile, BlockWriter.Blocks(profile, files));
        int candidates = 0, clean = 0, failed = 0, right = 0;
        var wrongClean = new List<string>();

        for (int seed = 1; seed <= Seeds; seed++)
        {
            var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, Heavy(seed));
            foreach (var c in result.Candidates)
            {
                candidates++;
                if (c.Status == BlockStatus.Clean)
                {
                    clean++;
                    if (truth.Exists(t => t.Matches(c)))
                    {
                        right++;
                    }
                    else
                    {
                        wrongClean.Add($"seed {seed}: {c.Identity} by {c.SettingName} at {c.StartSeconds:0.00} s");
                    }
                }
                else
                {
                    failed++;
                }
            }
        }

        string summary = $"{candidates} candidates over {Seeds} seeds: {clean} clean ({right} right), {failed} not clean";
        output.WriteLine(summary);

        // The damage is heavy enough that a good share of the candidates fail, or the test would prove nothing.
        Assert.True(failed > 0 && clean > 0, summary);
        Assert.True(wrongClean.Count == 0, $"{summary}; clean but wrong: {string.Join("; ", wrongClean)}");
    }

    [Theory]
    [MemberData(nameof(StreamProfiles))]
    public void A_stream_without_checksum_is_never_called_clean_whatever_the_damage(string profileId)
    {
        var profile = RoundTrips.Profile(profileId);
        var files = RoundTrips.Files(profile);
        int candidates = 0;

        for (int seed = 1; seed <= 3; seed++)
        {
            var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, Heavy(seed));
            candidates += result.Candidates.Count;

            // Without a checksum nothing can be verified: Unchecked, or Failed when cut short.
            Assert.All(result.Candidates, c => Assert.NotEqual(BlockStatus.Clean, c.Status));
        }

        Assert.True(candidates > 0, "no candidates at all");
    }

    [Theory]
    [MemberData(nameof(CheckedProfiles))]
    public void The_best_candidate_of_every_position_is_clean_and_right_or_not_clean(string profileId)
    {
        var profile = RoundTrips.Profile(profileId);
        var files = RoundTrips.Files(profile);
        var truth = RoundTrips.Truth(profile, BlockWriter.Blocks(profile, files));
        int positions = 0, recovered = 0;

        for (int seed = 1; seed <= Seeds; seed++)
        {
            var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, Heavy(seed) with { SnrDb = 12 });
            foreach (var best in result.Best)
            {
                positions++;
                if (best.Status == BlockStatus.Clean)
                {
                    Assert.True(truth.Exists(t => t.Matches(best)), $"seed {seed}: position {best.Position} is Clean but wrong");
                    recovered++;
                }
                else
                {
                    // A checksum format has no Unchecked blocks: what did not check out is Failed.
                    Assert.Equal(BlockStatus.Failed, best.Status);
                }
            }
        }

        output.WriteLine($"{recovered} of {positions} positions recovered clean");
        Assert.True(recovered > 0, $"nothing recovered over {positions} positions");
    }

    /// <summary>Heavy damage: 6–10 dB SNR, 40 dropouts a minute, wow, flutter, a deck a little off speed; the seed varies all.</summary>
    private static ChannelDamage Heavy(int seed) => new()
    {
        SnrDb = 6 + (seed % 3) * 2,
        RandomDropoutsPerMinute = 40,
        WowPercent = 0.3,
        FlutterPercent = 0.1,
        Speed = 1 + ((seed % 5) - 2) * 0.01,
        Chain = seed % 2 == 0 ? ReadChain.HeadAmplifier : ReadChain.LineOutput,
        Invert = seed % 4 == 3,
        Seed = 1000 + seed,
    };
}
