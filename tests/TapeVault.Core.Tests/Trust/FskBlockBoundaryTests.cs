using System.Globalization;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using TapeVault.Core.Tests.RoundTrip;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// Three checked FSK blocks with 0.3 s of mark tone between them, and damage inside the first. Whatever becomes of the
/// first block, the other two are whole on the tape and must read clean: block boundaries come from the signal (the
/// idle line between blocks, the lead-in of the next), never only from a length field that the damage may have
/// changed. Ground truth is the bytes we wrote; where the damage is SoX's, SoX is named beside the check.
/// </summary>
public sealed class FskBlockBoundaryTests(RoundTripFolder folder, ITestOutputHelper output) : IClassFixture<RoundTripFolder>
{
    private static readonly byte[][] Written =
        [FskBlockFormat.Block(0, FskBlockFormat.Text(0, 120)), FskBlockFormat.Block(1, FskBlockFormat.Text(1, 120)), FskBlockFormat.Block(2, FskBlockFormat.Text(2, 120))];

    [Theory]
    [InlineData(11)]
    [InlineData(12)]
    [InlineData(13)]
    [InlineData(14)]
    public void A_dropout_inside_the_first_block_leaves_the_blocks_after_it_clean(int seed)
    {
        double at = PayloadByteSeconds(seed, 40);
        var damage = new ChannelDamage { Seed = seed, SnrDb = 30, Dropouts = [new Dropout(at, 0.015, 1.0)] };
        var result = RoundTrips.WriteAndDecode(folder, FskBlockFormat.Profile, Written, damage);

        AssertBlocksAfterTheDamageAreClean(result);
    }

    [Fact]
    public void A_damaged_length_field_ends_its_block_at_the_idle_line_and_the_next_lead_in_begins_the_next()
    {
        // The first block's length byte claims 255 payload bytes (the CRC was worked out over the true 120): read by
        // its length alone, the block would run on through the mark tone after it into the next block's bytes.
        byte[][] written = [.. Written];
        written[0] = (byte[])Written[0].Clone();
        written[0][2] = 255;
        var result = RoundTrips.WriteAndDecode(folder, FskBlockFormat.Profile, written, new ChannelDamage { Seed = 21, SnrDb = 30 });
        output.WriteLine(RoundTrips.Describe(result));

        AssertBlocksAfterTheDamageAreClean(result);
        var first = result.Candidates.Where(c => c.Identity.BlockNumber == 0).ToList();
        Assert.NotEmpty(first);
        Assert.All(first, c => Assert.True(c.Status == BlockStatus.Failed && c.Truncated, $"{c.SettingName}: {c.Status}, truncated {c.Truncated}"));
    }

    [Theory]
    [InlineData("lowpass 3000, gain -n -3, white noise at -30 dB")]
    [InlineData("speed 1.04")]
    [InlineData("speed 0.96, lowpass 3000")]
    public void A_dropout_made_by_sox_inside_the_first_block_leaves_the_blocks_after_it_clean_under_sox_damage(string effects)
    {
        // Our synthesiser writes the three blocks clean; SoX (the outside reference for the damage) silences 15 ms
        // inside the first block's payload and then applies the effect chain.
        double at = PayloadByteSeconds(31, 40);
        string clean = folder.NewCapture("boundary-clean");
        CaptureSynthesizer.WriteBlocks(clean, FskBlockFormat.Profile, Written, new ChannelDamage { Seed = 31, SnrDb = 40 });
        string cut = folder.NewCapture("cut");
        string damaged = folder.NewCapture("damaged");
        OutsideTool.SoxSilence(clean, cut, at, 0.015);
        switch (effects)
        {
            case "lowpass 3000, gain -n -3, white noise at -30 dB":
                string filtered = folder.NewCapture("filtered");
                string noise = folder.NewCapture("noise");
                OutsideTool.Sox(cut, filtered, "lowpass", "3000", "gain", "-n", "-3");
                OutsideTool.Sox("-n", "-r", "44100", "-b", "16", "-c", "1", noise, "synth", OutsideTool.SoxInfo("-D", filtered), "whitenoise", "vol", "0.03");
                OutsideTool.Sox("-m", filtered, noise, damaged);
                break;
            case "speed 1.04":
                OutsideTool.Sox(cut, damaged, "speed", "1.04");
                break;
            case "speed 0.96, lowpass 3000":
                OutsideTool.Sox(cut, damaged, "speed", "0.96", "lowpass", "3000");
                break;
            default:
                throw new ArgumentOutOfRangeException(nameof(effects), effects, "Unknown damage.");
        }

        var result = CaptureDecoder.Decode(damaged, FskBlockFormat.Profile);
        AssertBlocksAfterTheDamageAreClean(result);
    }

    /// <summary>When payload byte <paramref name="index"/> of the first block is read, from a clean read of the same tape.</summary>
    private double PayloadByteSeconds(int seed, int index)
    {
        var clean = RoundTrips.WriteAndDecode(folder, FskBlockFormat.Profile, Written, new ChannelDamage { Seed = seed });
        var first = clean.Best.Single(b => b.Identity.BlockNumber == 0 && b.Status == BlockStatus.Clean);
        return first.ByteSeconds[index];
    }

    private void AssertBlocksAfterTheDamageAreClean(DecodeResult result)
    {
        output.WriteLine(RoundTrips.Describe(result));

        // No reading of any setting is clean unless it is a block as written.
        foreach (var c in result.Candidates.Where(c => c.Status == BlockStatus.Clean))
        {
            Assert.True(FskBlockFormat.IsWritten(c, Written), $"{c.SettingName} read a clean block {c.Identity} of {c.Payload.Length} bytes that was never written.");
        }

        // Blocks 1 and 2 are whole on the tape: each reads clean, exactly as written.
        foreach (int number in new[] { 1, 2 })
        {
            Assert.Contains(result.Best, b => b.Status == BlockStatus.Clean && FskBlockFormat.IsWritten(b, [Written[number]]));
        }
    }
}
