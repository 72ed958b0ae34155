using TapeVault.Core.Blocks;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.RoundTrip;

/// <summary>
/// A short dropout in a block's lead-in, close enough before the sync that what is left of the lead-in after it is
/// shorter than the profile's minimum (but at least half of it), while the lead-in as written is longer: the lead-in
/// heard on both sides of the break is one lead-in, so the block after it is read. Before, the break started the count again and no setting read
/// that block at all (captures of the trust bench with one block fewer than written, each with a dropout of this kind
/// in the lost block's lead-in). Ground truth is the bytes <see cref="BlockWriter"/> laid out, and a block is clean
/// only where its check holds (biphase-1200: CRC-16/XMODEM, fsk-sync-1200: CRC-16/CMS, both from the CRC catalogue).
/// </summary>
public sealed class DropoutInLeadInTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    private const int Target = 2;

    /// <param name="beforeSync">How long before the target block's sync the dropout ends (seconds).</param>
    /// <param name="seconds">The dropout's length.</param>
    /// <param name="depth">How far it drops the signal (1 = to nothing; 0.99 = −40 dB).</param>
    [Theory]
    // biphase-1200: a lead-in of at least 64 cells (53 ms); 35–40 ms of it left after the dropout.
    [InlineData("biphase-1200", 0.035, 0.020, 1.0)]
    [InlineData("biphase-1200", 0.040, 0.040, 0.99)]
    // fsk-sync-1200: a leader of at least 16 characters of 12 bits (160 ms); 100 ms of it left after the dropout.
    [InlineData("fsk-sync-1200", 0.100, 0.020, 1.0)]
    [InlineData("fsk-sync-1200", 0.120, 0.040, 0.99)]
    public void A_block_whose_lead_in_a_short_dropout_broke_is_read(string profileId, double beforeSync, double seconds, double depth)
    {
        var profile = RoundTrips.Profile(profileId);
        var files = RoundTrips.Files(profile);
        var blocks = BlockWriter.Blocks(profile, files);
        var truth = RoundTrips.Truth(profile, blocks);
        var spans = new List<WrittenSpan>();
        foreach (double _ in FluxWriter.Reversals(profile, blocks, spans))
        {
        }

        // Capture time at nominal speed: the channel's margin, then the tape.
        var damage = new ChannelDamage { SnrDb = 30, Seed = 5 };
        var target = spans.First(s => s.Block == Target);
        double syncAt = damage.MarginSeconds + target.DataSeconds;
        Assert.True(syncAt - beforeSync - seconds > damage.MarginSeconds + target.StartSeconds, "the dropout lies inside the lead-in as written");
        var (_, result) = RoundTrips.SynthAndDecode(folder, profile, files, damage with { Dropouts = [new Dropout(syncAt - beforeSync - seconds, seconds, depth)] });

        Assert.Contains(result.Candidates, c => c.Status == BlockStatus.Clean && truth[Target].Matches(c));
        Assert.DoesNotContain(result.Candidates, c => c.Status == BlockStatus.Clean && !truth.Exists(t => t.Matches(c)));
    }
}
