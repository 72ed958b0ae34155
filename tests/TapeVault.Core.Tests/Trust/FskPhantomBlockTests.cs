using TapeVault.Core.Blocks;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.RoundTrip;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// A loss of signal inside an FSK block followed by a run of zero bytes. Framed asynchronously, every zero byte is a
/// start bit, eight spaces and the stop bits, so a decoder that takes the first start bit after the loss for the
/// start of a block reads a header of zeros (block 0, length 0) and a CRC-16/XMODEM of zeros, which holds: a phantom
/// block, "clean" with no payload. A block may begin only where the format says blocks begin (after a lead-in or an
/// idle line of mark tone). Ground truth is the bytes we wrote.
/// </summary>
public sealed class FskPhantomBlockTests(RoundTripFolder folder, ITestOutputHelper output) : IClassFixture<RoundTripFolder>
{
    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    public void A_dropout_before_a_run_of_zero_bytes_makes_no_phantom_clean_block(int seed)
    {
        var profile = FskBlockFormat.Profile;
        byte[] payload = [.. FskBlockFormat.Text(0, 24), .. new byte[40]];
        byte[][] written = [FskBlockFormat.Block(0, payload), FskBlockFormat.Block(1, FskBlockFormat.Text(1, 60))];

        // Where the zero bytes begin, from a clean read of the same blocks.
        var clean = RoundTrips.WriteAndDecode(folder, profile, written, new ChannelDamage { Seed = seed });
        var first = clean.Best.Single(b => b.Identity.BlockNumber == 0 && b.Status == BlockStatus.Clean);
        double zeros = first.ByteSeconds[24];

        // 30 ms of nothing, ending just before the first zero byte.
        var damage = new ChannelDamage { Seed = seed, SnrDb = 30, Dropouts = [new Dropout(zeros - 0.032, 0.03, 1.0)] };
        var result = RoundTrips.WriteAndDecode(folder, profile, written, damage);
        output.WriteLine(RoundTrips.Describe(result));

        // No setting's reading is clean unless it is a block we wrote: above all no clean block of no bytes.
        foreach (var c in result.Candidates.Where(c => c.Status == BlockStatus.Clean))
        {
            Assert.True(
                FskBlockFormat.IsWritten(c, written),
                $"{c.SettingName} read a clean block {c.Identity} of {c.Payload.Length} bytes at {c.StartSeconds:0.000} s that was never written.");
        }

        // The block after the damage is whole and clean: its own lead-in begins it.
        Assert.Contains(result.Best, b => b.Status == BlockStatus.Clean && FskBlockFormat.IsWritten(b, written[1..]));
    }
}
