using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using TapeVault.Core.Tests.RoundTrip;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// A format whose consecutive blocks are separated only by a short run of zeros and the sync (one-cycle-bits: 32
/// short cycles, then the sync byte, no lead-in), with a first block whose length field claims more than it holds (as
/// a header misread under a dropout or garbled by a setting that does not suit the capture does). Whatever becomes of
/// that block, the blocks after it are whole on the tape, each behind its own gap and sync, and must read clean: a
/// length must not carry a block on over the next blocks' gaps and syncs. Ground truth is the bytes we wrote; where
/// the damage is SoX's, SoX is named beside the check.
/// </summary>
public sealed class GapSyncAfterLengthRunOnTests(RoundTripFolder folder, ITestOutputHelper output) : IClassFixture<RoundTripFolder>
{
    private static readonly FormatProfile Profile = ProfileCatalog.BuiltIn.Get("one-cycle-bits");

    // Four files of 40 bytes each: four short blocks, each behind a gap of 32 zeros and the sync.
    private static readonly IReadOnlyList<byte[]> Written = BlockWriter.Blocks(Profile, [.. Enumerable.Range(0, 4).Select(f => new TapeFile($"F{f}", Content(f)))]);

    [Fact]
    public void A_length_field_that_claims_more_than_the_block_holds_ends_the_block_at_the_next_gap_and_sync()
    {
        // The first block's length byte claims 200 payload bytes (its check is worked out over the 40 it holds): read by
        // its length alone, the block would run on over the next three blocks' gaps and syncs.
        var result = RoundTrips.WriteAndDecode(folder, Profile, LengthClaimsMore(), new ChannelDamage { Seed = 71, SnrDb = 30 });

        AssertBlocksAfterTheDamageAreClean(result);
        var first = result.Candidates.Where(c => c.Identity.FileName == "F0").ToList();
        Assert.NotEmpty(first);
        Assert.All(first, c => Assert.True(c.Status == BlockStatus.Failed && c.Truncated, $"{c.SettingName}: {c.Status}, truncated {c.Truncated}"));
    }

    [Theory]
    [InlineData("speed 0.95, highpass 120")]
    [InlineData("lowpass 4500, gain -n -6, 8-bit")]
    public void A_length_field_that_claims_more_ends_its_block_at_the_next_gap_and_sync_under_sox_damage(string effects)
    {
        // Our synthesiser writes the blocks; SoX (the outside reference for the damage) plays them off speed, filters
        // them and re-quantises them.
        string clean = folder.NewCapture("gap-sync-claims-more");
        CaptureSynthesizer.WriteBlocks(clean, Profile, LengthClaimsMore(), new ChannelDamage { Seed = 72, SnrDb = 30 });
        string damaged = SoxDamage(clean, folder.NewCapture("gap-sync-claims-more-damaged"), effects);

        AssertBlocksAfterTheDamageAreClean(CaptureDecoder.Decode(damaged, Profile));
    }

    [Theory]
    [InlineData("none")]
    [InlineData("speed 0.95, highpass 120")]
    [InlineData("lowpass 4500, gain -n -6, 8-bit")]
    public void A_payload_that_holds_the_gap_and_the_sync_is_read_whole_by_its_length(string effects)
    {
        // The second file's payload holds four zero bytes and then the sync byte (zero-filled memory followed by that
        // byte): read bit by bit, exactly the gap's 32 zeros and the sync that begin a block. The block is whole on the
        // tape and its length field is right: it must read clean, and what its payload holds must not become a
        // position of its own. Our synthesiser writes the blocks; SoX (the outside reference for the damage) plays
        // them off speed, filters them and re-quantises them.
        var written = BlockWriter.Blocks(Profile, [new TapeFile("F0", Content(0)), new TapeFile("ZEROS", ZeroRunThenSync()), new TapeFile("F2", Content(2))]);
        string clean = folder.NewCapture("gap-sync-in-payload");
        CaptureSynthesizer.WriteBlocks(clean, Profile, written, new ChannelDamage { Seed = 73, SnrDb = 30 });
        string damaged = effects == "none" ? clean : SoxDamage(clean, folder.NewCapture("gap-sync-in-payload-damaged"), effects);

        var result = CaptureDecoder.Decode(damaged, Profile);
        output.WriteLine(RoundTrips.Describe(result));
        var truth = RoundTrips.Truth(Profile, written);
        foreach (var c in result.Candidates.Where(c => c.Status == BlockStatus.Clean))
        {
            Assert.True(truth.Exists(t => t.Matches(c)), $"{c.SettingName} read a clean block {c.Identity} at {c.StartSeconds:0.000} s that was never written.");
        }

        // Every written block reads clean, each at a position of its own, and there is no other position.
        Assert.Equal(truth.Count, result.Best.Count);
        for (int block = 0; block < truth.Count; block++)
        {
            Assert.True(result.Best[block].Status == BlockStatus.Clean && truth[block].Matches(result.Best[block]), $"block {block} is not read clean at its position: {RoundTrips.Describe(result)}");
        }
    }

    // The capture played through one of the tests' SoX chains (SoX: the outside reference for the damage).
    private static string SoxDamage(string clean, string damaged, string effects)
    {
        switch (effects)
        {
            case "speed 0.95, highpass 120":
                OutsideTool.Sox(clean, damaged, "speed", "0.95", "highpass", "120");
                break;
            case "lowpass 4500, gain -n -6, 8-bit":
                OutsideTool.Sox(clean, "-b", "8", damaged, "lowpass", "4500", "gain", "-n", "-6");
                Assert.Equal("8", OutsideTool.SoxInfo("-b", damaged));
                break;
            default:
                throw new ArgumentOutOfRangeException(nameof(effects), effects, "Unknown damage.");
        }

        return damaged;
    }

    // A payload of 60 bytes whose bytes 20 to 23 are zero and byte 24 the profile's sync byte.
    private static byte[] ZeroRunThenSync()
    {
        var content = Content(1)[..30].Concat(Content(3)[..30]).ToArray();
        Array.Clear(content, 20, 4);
        content[24] = BlockLayoutCodec.For(Profile.Layout).SyncField!.Expected[0][0];
        return content;
    }

    // The written blocks with the first one's length byte (after the sync, the 8-byte name and the block number) at 200.
    private static byte[][] LengthClaimsMore()
    {
        byte[][] written = [.. Written];
        written[0] = (byte[])Written[0].Clone();
        written[0][10] = 200;
        return written;
    }

    private static byte[] Content(int file)
    {
        var random = new Random(20_261_204 + file);
        var content = new byte[40];
        random.NextBytes(content);
        return content;
    }

    private void AssertBlocksAfterTheDamageAreClean(DecodeResult result)
    {
        output.WriteLine(RoundTrips.Describe(result));
        var truth = RoundTrips.Truth(Profile, Written);

        // No reading of any setting is clean unless it is a block as written.
        foreach (var c in result.Candidates.Where(c => c.Status == BlockStatus.Clean))
        {
            Assert.True(truth.Exists(t => t.Matches(c)), $"{c.SettingName} read a clean block {c.Identity} at {c.StartSeconds:0.000} s that was never written.");
        }

        // The blocks after the damaged one are whole on the tape: each reads clean, exactly as written.
        for (int block = 1; block < truth.Count; block++)
        {
            Assert.True(result.Best.Any(b => b.Status == BlockStatus.Clean && truth[block].Matches(b)), $"block {block} is not read clean: {RoundTrips.Describe(result)}");
        }
    }
}
