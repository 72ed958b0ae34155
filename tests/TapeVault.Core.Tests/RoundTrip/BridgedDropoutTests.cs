using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.RoundTrip;

/// <summary>
/// The biphase decoder bridges a dropout inside a block on its cell clock: the bytes the dropout covered come back
/// as erasures (margin 0) and every byte after it sits where it was written, so that another pass can fill the gap.
/// Ground truth is the channel model's input, the bytes <see cref="BlockWriter"/> laid out.
/// </summary>
public sealed class BridgedDropoutTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    private const string ProfileId = "biphase-1200";
    private const int Target = 1;

    [Theory]
    [InlineData(0.25, 0.010)]
    [InlineData(0.5, 0.030)]
    [InlineData(0.75, 0.060)]
    public void A_dropout_inside_a_block_costs_only_the_bytes_it_covers(double where, double seconds)
    {
        var profile = RoundTrips.Profile(ProfileId);
        var files = RoundTrips.Files(profile);
        var truth = RoundTrips.Truth(profile, BlockWriter.Blocks(profile, files));
        var hit = FirstReading(RoundTrips.SynthAndDecode(folder, profile, files, new ChannelDamage()).Result, Target);
        double start = hit.StartSeconds + (where * (hit.EndSeconds - hit.StartSeconds));
        var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, new ChannelDamage { Dropouts = [new Dropout(start, seconds, 1.0)] });

        var readings = result.Candidates.Where(c => c.Position == Target && !c.Truncated).ToList();
        Assert.NotEmpty(readings);
        double byteSeconds = 8 * profile.Biphase!.CellSeconds;
        foreach (var reading in readings)
        {
            Assert.Equal(truth[Target].Header, reading.Header.ToArray());
            Assert.Equal(truth[Target].Payload.Length, reading.Payload.Length);
            for (int i = 0; i < reading.Payload.Length; i++)
            {
                if (reading.Payload[i] == truth[Target].Payload[i])
                {
                    continue;
                }

                // A wrong byte is one the dropout took (give or take the byte either side), and it says so.
                Assert.True(reading.ByteMargins[i] == 0, $"{reading.SettingName}: byte {i} is wrong with margin {reading.ByteMargins[i]}");
                Assert.InRange(reading.ByteSeconds[i], start - (2 * byteSeconds), start + seconds + (2 * byteSeconds));
            }
        }

        // Nothing is claimed that was not read: the block fails its check unless the erasures happened to be right.
        Assert.DoesNotContain(result.Candidates, c => c.Status == BlockStatus.Clean && !truth.Exists(t => t.Matches(c)));
    }

    [Fact]
    public void Two_passes_with_dropouts_in_different_places_of_one_block_merge_to_the_written_block()
    {
        var profile = RoundTrips.Profile(ProfileId);
        var files = RoundTrips.Files(profile);
        var truth = RoundTrips.Truth(profile, BlockWriter.Blocks(profile, files));
        var hit = FirstReading(RoundTrips.SynthAndDecode(folder, profile, files, new ChannelDamage()).Result, Target);
        double length = hit.EndSeconds - hit.StartSeconds;

        // 40 ms (48 bits) each, a quarter and three quarters of the way into block 1; the decks a little apart in speed.
        var passes = new List<DecodeResult>();
        foreach (var (where, speed) in new[] { (0.25, 1.01), (0.75, 0.99) })
        {
            var damage = new ChannelDamage { Speed = speed, SnrDb = 30, Dropouts = [new Dropout((hit.StartSeconds + (where * length)) / speed, 0.04, 1.0)] };
            var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, damage);
            Assert.DoesNotContain(result.Candidates, c => c.Status == BlockStatus.Clean && truth[Target].Matches(c));
            passes.Add(result);
        }

        var image = TapeMerger.Merge(passes, ["quarter.wav", "three-quarters.wav"]);
        Assert.Equal(truth.Count, image.Blocks.Length);
        for (int i = 0; i < truth.Count; i++)
        {
            var block = image.Blocks[i];
            Assert.Equal(truth[i].Header, block.Header.ToArray());
            Assert.Equal(truth[i].Payload, block.Payload.ToArray());
            Assert.Equal(i == Target ? RecoveryStatus.Voted : RecoveryStatus.Clean, block.Status);
        }

        Assert.True(image.Blocks[Target].Confidence > 0.99, $"voted block confidence {image.Blocks[Target].Confidence}");
    }

    private static BlockCandidate FirstReading(DecodeResult result, int position) =>
        result.Best.Single(b => b.Position == position && b.Status == BlockStatus.Clean);
}
