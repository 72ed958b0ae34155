using TapeVault.Core.Blocks;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.RoundTrip;

/// <summary>
/// A dropout that takes the signal away in the middle of a block is beyond a single pass, unless the format wrote
/// the block twice. The honest outcome is asserted: the copy recovers it, or the block is Failed or missing, never
/// Clean with wrong bytes, and the blocks around it are untouched.
/// </summary>
public sealed class DeepDropoutTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    private const int Target = 1;

    public static TheoryData<string> Profiles() => [.. RoundTrips.ProfileIds];

    [Theory]
    [MemberData(nameof(Profiles))]
    public void A_dropout_through_a_block_loses_that_block_honestly_and_no_other(string profileId)
    {
        var profile = RoundTrips.Profile(profileId);
        var files = RoundTrips.Files(profile);
        var truth = RoundTrips.Truth(profile, BlockWriter.Blocks(profile, files));
        var (_, clean) = RoundTrips.SynthAndDecode(folder, profile, files, new ChannelDamage());
        var hit = FirstReading(clean, Target);

        // 60 ms of nothing (depth 1) in the middle of the first reading of block 1.
        double middle = (hit.StartSeconds + hit.EndSeconds) / 2;
        var damage = new ChannelDamage { Dropouts = [new Dropout(middle - 0.03, 0.06, 1.0)] };
        var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, damage);
        string got = RoundTrips.Describe(result);

        bool checkedFormat = profile.Layout.Checksum is not null;
        var good = checkedFormat ? BlockStatus.Clean : BlockStatus.Unchecked;
        for (int i = 0; i < truth.Count; i++)
        {
            bool back = result.Best.Any(b => b.Status == good && truth[i].Matches(b));
            if (i != Target || profile.Layout.Copies > 1)
            {
                // Untouched blocks come back; a block written twice comes back from its other copy.
                Assert.True(back, $"block {i} did not come back: {got}");
            }
            else
            {
                Assert.False(back, $"block {i} came back whole through a 60 ms dropout, which this synthesis cannot allow: {got}");
            }
        }

        Assert.DoesNotContain(result.Candidates, c => c.Status == BlockStatus.Clean && !truth.Exists(t => t.Matches(c)));
        var inDropout = result.Candidates.Where(c => c.StartSeconds < middle && middle < c.EndSeconds).ToList();
        Assert.All(inDropout, c => Assert.NotEqual(BlockStatus.Clean, c.Status));
    }

    [Theory]
    [InlineData(0.005)]
    [InlineData(0.02)]
    [InlineData(0.04)]
    public void A_dropout_in_a_first_copys_header_adds_no_position_when_the_second_copy_is_clean(double offsetSeconds)
    {
        // The demo format writes every block twice (its profile's layout.copies), so the readings of a damaged first
        // copy belong with the clean second one, not at a position of their own.
        var profile = RoundTrips.Profile("orrin-80");
        var files = RoundTrips.Files(profile);
        var truth = RoundTrips.Truth(profile, BlockWriter.Blocks(profile, files));
        var (_, clean) = RoundTrips.SynthAndDecode(folder, profile, files, new ChannelDamage());
        var hit = FirstReading(clean, Target);

        var damage = new ChannelDamage { Dropouts = [new Dropout(hit.StartSeconds + offsetSeconds, 0.03, 1.0)] };
        var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, damage);
        string got = RoundTrips.Describe(result);

        Assert.True(result.Best.Count == truth.Count, $"{result.Best.Count} positions for {truth.Count} blocks: {got}");
        for (int i = 0; i < truth.Count; i++)
        {
            Assert.True(result.Best.Any(b => b.Position == i && b.Status == BlockStatus.Clean && truth[i].Matches(b)), $"block {i} is not clean at position {i}: {got}");
        }
    }

    private static BlockCandidate FirstReading(TapeVault.Core.Decoding.DecodeResult result, int position) =>
        result.Candidates.Where(c => c.Position == position).MinBy(c => c.StartSeconds)
        ?? throw new InvalidOperationException($"No candidate at position {position}.");
}
