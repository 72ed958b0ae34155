using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// A format that writes each block k times writes the copies back to back, so a copy starts within k − 1 copy spacings
/// of any other copy of its block: a reading further from a clean copy than that is another block, however alike its
/// header. The format is the biphase reference profile written twice (block number and length in the header,
/// CRC-16/XMODEM); blocks of half a second with a gap of 0.2 s before each copy, as the pulse-width demo format
/// records them (its profile's recording gap), are common practice for such formats.
/// </summary>
public sealed class PositionCopyOrderTests
{
    private static readonly FormatProfile Profile = Readings.WrittenTwice();

    /// <summary>The length of a reading of 64 payload bytes as <see cref="Readings.Of"/> times it, and the gap after it.</summary>
    private static readonly double Spacing = Readings.Of(Profile, Readings.Written(Profile, 0), 0, 0).EndSeconds + 0.2;

    /// <summary>Where copy <paramref name="copy"/> of block <paramref name="block"/> starts: copies one spacing apart.</summary>
    private static double Sync(int block, int copy) => 1.5 + (Spacing * ((2 * block) + copy));

    [Fact]
    public void Readings_cut_short_at_the_next_block_s_sync_are_not_a_copy_of_the_block_before()
    {
        // Block 0's first copy read clean, its second not at all; block 1 only cut short after one header byte by three
        // settings (each counting its readings its own way); both copies of block 2 clean, which shows the gap between
        // copies. Seen on the Orrin format at random damage: the cut readings took block 0's identity (a clean block
        // near them whose header agrees over the byte they have) and block 1 had no position.
        var readings = new List<BlockCandidate>
        {
            Readings.Of(Profile, Readings.Written(Profile, 0), Sync(0, 0), 0, "s0"),
            Readings.Of(Profile, Readings.Written(Profile, 2), Sync(2, 0), 0, "s0"),
            Readings.Of(Profile, Readings.Written(Profile, 2), Sync(2, 1), 0, "s0"),
        };
        int[] ordinals = [5, 7, 7];
        for (int setting = 0; setting < 3; setting++)
        {
            var cut = Readings.Of(Profile, Readings.Written(Profile, 1), Sync(1, 0) + (0.001 * setting), 0, $"s{setting + 1}", truncateTo: 0);
            readings.Add(cut with
            {
                Header = [0xFF],
                Identity = new BlockIdentity(null, null, null, ordinals[setting]),
                EndSeconds = cut.StartSeconds + 0.025,
            });
        }

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        Assert.Equal(3, placed.Select(c => c.Position).Distinct().Count());
        Assert.Single(placed.Where(c => c.Truncated).Select(c => c.Position).Distinct());
    }
}
