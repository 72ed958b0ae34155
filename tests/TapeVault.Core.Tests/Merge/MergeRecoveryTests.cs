using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.RoundTrip;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Merge;

/// <summary>
/// Merges of synthesised passes. Ground truth is our own channel model's input: the blocks we synthesised
/// (<see cref="BlockWriter"/>), compared byte for byte.
/// </summary>
public sealed class MergeRecoveryTests(RoundTripFolder folder, ITestOutputHelper output) : IClassFixture<RoundTripFolder>
{
    public static TheoryData<string> CheckedProfiles() => [.. RoundTrips.CheckedProfileIds];

    [Theory]
    [MemberData(nameof(CheckedProfiles))]
    public void Merge_RecoversEveryBlock_WhenEachIsReadWholeBySomePass(string profileId)
    {
        var profile = RoundTrips.Profile(profileId);
        var files = RoundTrips.Files(profile);
        var truth = RoundTrips.Truth(profile, BlockWriter.Blocks(profile, files));
        var (_, clean) = RoundTrips.SynthAndDecode(folder, profile, files, new ChannelDamage());

        // Pass p loses block p (every copy of it) to a dropout through the middle of each reading.
        var passes = new List<DecodeResult>();
        for (int p = 0; p < 3; p++)
        {
            var damage = new ChannelDamage { Seed = 40 + p, SnrDb = 30, Speed = 1 + (0.01 * (p - 1)), Dropouts = DropoutsThrough(clean, p) };
            var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, damage);
            Assert.DoesNotContain(result.Best, b => b.Position == p && b.Status == BlockStatus.Clean && truth[p].Matches(b));
            passes.Add(result);
        }

        var image = TapeMerger.Merge(passes, ["a.wav", "b.wav", "c.wav"]);
        output.WriteLine(Describe(image, passes));

        Assert.Equal(truth.Count, image.Blocks.Length);
        for (int i = 0; i < truth.Count; i++)
        {
            Assert.Equal(RecoveryStatus.Clean, image.Blocks[i].Status);
            Assert.True(Matches(truth[i], image.Blocks[i]), $"position {i} holds {image.Blocks[i].Key} {image.Blocks[i].PayloadHex}");
        }

        Assert.Equal(files.Count, image.Files.Length);
        Assert.All(image.Files, f => Assert.True(f.Complete));
        Assert.Equal(files.Select(f => (long)f.Content.Length), image.Files.Select(f => f.Length));
    }

    [Fact]
    public void Merge_FlagsMissing_WhereEveryPassLostTheSameBlock_AndKeepsTheRest()
    {
        var profile = RoundTrips.Profile("biphase-1200");
        var files = RoundTrips.Files(profile);
        var truth = RoundTrips.Truth(profile, BlockWriter.Blocks(profile, files));
        var (_, clean) = RoundTrips.SynthAndDecode(folder, profile, files, new ChannelDamage());
        var passes = new List<DecodeResult>();
        for (int p = 0; p < 3; p++)
        {
            var damage = new ChannelDamage { Seed = 50 + p, SnrDb = 30, Dropouts = DropoutsThrough(clean, 1) };
            passes.Add(RoundTrips.SynthAndDecode(folder, profile, files, damage).Result);
        }

        var image = TapeMerger.Merge(passes, ["a.wav", "b.wav", "c.wav"]);
        output.WriteLine(Describe(image, passes));

        Assert.Equal(truth.Count, image.Blocks.Length);
        Assert.Equal(RecoveryStatus.Missing, image.Blocks[1].Status);
        Assert.True(image.Blocks[1].Payload.IsEmpty);
        Assert.Equal(0, image.Blocks[1].Confidence);
        Assert.False(image.Files[0].Complete);
        for (int i = 0; i < truth.Count; i++)
        {
            if (i != 1)
            {
                Assert.Equal(RecoveryStatus.Clean, image.Blocks[i].Status);
                Assert.True(Matches(truth[i], image.Blocks[i]), $"position {i}");
            }
        }
    }

    [Theory]
    [MemberData(nameof(CheckedProfiles))]
    public void Merge_NeverMarksAWrongBlockClean_OverAGridOfSeedsAndDamage(string profileId)
    {
        var profile = RoundTrips.Profile(profileId);
        var files = RoundTrips.Files(profile);
        var truth = RoundTrips.Truth(profile, BlockWriter.Blocks(profile, files));
        int recovered = 0, missing = 0, repairedOrVoted = 0, positions = 0;
        foreach (double snr in new[] { 8.0, 14.0 })
        {
            for (int seed = 1; seed <= 3; seed++)
            {
                var passes = new List<DecodeResult>();
                for (int p = 0; p < 3; p++)
                {
                    var damage = new ChannelDamage
                    {
                        SnrDb = snr,
                        RandomDropoutsPerMinute = 40,
                        WowPercent = 0.3,
                        Speed = 1 + (((seed + p) % 3) - 1) * 0.01,
                        Seed = (100 * seed) + (10 * (int)snr) + p,
                    };
                    passes.Add(RoundTrips.SynthAndDecode(folder, profile, files, damage).Result);
                }

                var image = TapeMerger.Merge(passes, ["a.wav", "b.wav", "c.wav"]);
                foreach (var block in image.Blocks)
                {
                    positions++;
                    bool right = truth.Exists(t => Matches(t, block));
                    switch (block.Status)
                    {
                        case RecoveryStatus.Missing:
                            missing++;
                            Assert.True(block.Payload.IsEmpty);
                            break;
                        case RecoveryStatus.Clean:
                            Assert.True(right, $"SNR {snr}, seed {seed}: position {block.Position} ({block.Key}) is clean but not a block that was written.");
                            recovered++;
                            break;
                        default:
                            repairedOrVoted++;
                            Assert.True(right || block.Confidence < 0.9, $"SNR {snr}, seed {seed}: position {block.Position} is {block.Status} at {block.Confidence:0.000} but wrong.");
                            recovered += right ? 1 : 0;
                            break;
                    }
                }
            }
        }

        output.WriteLine($"{positions} positions: {recovered} right, {repairedOrVoted} voted or repaired, {missing} missing");
        Assert.True(recovered > positions / 2, $"only {recovered} of {positions} recovered");
    }

    /// <summary>60 ms of nothing through the middle of every clean reading of <paramref name="position"/> (each copy once).</summary>
    private static List<Dropout> DropoutsThrough(DecodeResult clean, int position)
    {
        var dropouts = new List<Dropout>();
        foreach (var c in clean.Candidates.Where(c => c.Position == position && c.Status == BlockStatus.Clean).OrderBy(c => c.StartSeconds))
        {
            double middle = (c.StartSeconds + c.EndSeconds) / 2;
            if (!dropouts.Exists(d => Math.Abs(d.StartSeconds + 0.03 - middle) < 0.1))
            {
                dropouts.Add(new Dropout(middle - 0.03, 0.06, 1.0));
            }
        }

        Assert.NotEmpty(dropouts);
        return dropouts;
    }

    private static string Describe(TapeImage image, List<DecodeResult> passes) =>
        string.Join("\n", passes.Select(r => string.Join("; ", r.Candidates.GroupBy(c => c.Position).Select(g => $"#{g.Key} {g.Min(c => c.StartSeconds):0.000}-{g.Max(c => c.EndSeconds):0.000} {string.Join(",", g.Select(c => $"{c.Status}/{c.Truncated}/{c.Payload.Length}"))}")))) + "\n" +
        string.Join(" ", TapeMerger.Align([.. passes.Select(p => MergePass.From(p, "x"))], passes[0].Profile)) + "\n" +
        string.Join("\n", passes.Select(RoundTrips.Describe)) + "\n=> " +
        string.Join("; ", image.Blocks.Select(b => $"{b.Position} {b.Key} {b.Status} {b.Confidence:0.###} {b.Payload.Length} B"));

    private static bool Matches(TruthBlock truth, ImageBlock block) =>
        block.Payload.AsSpan().SequenceEqual(truth.Payload) && block.Header.AsSpan().SequenceEqual(truth.Header);
}
