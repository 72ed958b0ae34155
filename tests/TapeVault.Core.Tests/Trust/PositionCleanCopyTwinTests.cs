using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// A block written twice whose copies were read one clean and the other only failed, each at its own sync: the failed
/// copy is the clean one's twin where the timing says so. Copies are written back to back, one length apart with the
/// lead-in between them (common practice for formats that write each block twice), so the clean copy's length and the
/// gap the capture shows between copies tell where the twin lies. The format is the biphase reference profile written
/// twice (block number and length in the header, CRC-16/XMODEM); the lengths and the gap are chosen here.
/// </summary>
public sealed class PositionCleanCopyTwinTests
{
    private static readonly FormatProfile Profile = Readings.WrittenTwice();

    /// <summary>Each block's copies' length (seconds), each block its own (block 5, read by no one, only bounds block 4), and the lead-in after every copy.</summary>
    private static readonly double[] Lengths = [0.30, 0.20, 0.35, 0.25, 0.28, 0.30];
    private const double Gap = 0.2;

    /// <summary>Where copy <paramref name="copy"/> of block <paramref name="block"/> starts: every copy after the one before, its length and the gap later.</summary>
    private static double Sync(int block, int copy)
    {
        double at = 1.0;
        for (int b = 0; b < block; b++)
        {
            at += 2 * (Lengths[b] + Gap);
        }

        return at + (copy * (Lengths[block] + Gap));
    }

    private static BlockCandidate Clean(int block, int copy, string setting)
    {
        var reading = Readings.Of(Profile, Readings.Written(Profile, block), Sync(block, copy), 0, setting);
        return reading with { EndSeconds = reading.StartSeconds + Lengths[block] };
    }

    /// <summary>A whole reading whose header (all three bytes) a setting garbled from <paramref name="header"/> and whose payload is wrong too (so it fails).</summary>
    private static BlockCandidate Garbled(int block, int copy, string setting, byte header)
    {
        var reading = Readings.Garbled(Profile, block, Sync(block, copy) + 0.001, setting, header);
        return reading with { EndSeconds = reading.StartSeconds + Lengths[block] };
    }

    /// <summary>Copy <paramref name="copy"/> of <paramref name="block"/> read by settings s0 and s2, each garbling the header its own way, and by no one clean.</summary>
    private static BlockCandidate[] OnlyFailed(int block, int copy) =>
    [
        Garbled(block, copy, "s0", (byte)(0x90 + (block * 2) + copy)),
        Garbled(block, copy, "s2", (byte)(0xC0 + (block * 2) + copy)),
    ];

    /// <summary>Both copies of blocks 0 to 4: those in <paramref name="clean"/> read clean by s1, none of <paramref name="unread"/>, the rest as <see cref="OnlyFailed"/>.</summary>
    private static List<BlockCandidate> ReadAs((int Block, int Copy)[] clean, (int Block, int Copy)[] unread)
    {
        var readings = new List<BlockCandidate>();
        for (int block = 0; block < 5; block++)
        {
            for (int copy = 0; copy < 2; copy++)
            {
                if (clean.Contains((block, copy)))
                {
                    readings.Add(Clean(block, copy, "s1"));
                }
                else if (!unread.Contains((block, copy)))
                {
                    readings.AddRange(OnlyFailed(block, copy));
                }
            }
        }

        return readings;
    }

    /// <summary>As many positions as blocks; every reading of one block's copies shares a position, and no other block's reading is there.</summary>
    private static void AssertEachBlockOnePosition(IReadOnlyList<BlockCandidate> placed, int blocks)
    {
        Assert.Equal(blocks, placed.Select(c => c.Position).Distinct().Count());
        for (int block = 0; block < blocks; block++)
        {
            var there = placed.Where(c => c.StartSeconds >= Sync(block, 0) && c.StartSeconds < Sync(block + 1, 0)).Select(c => c.Position).Distinct().ToList();
            Assert.True(there.Count == 1, $"block {block}'s copies are at positions {string.Join(", ", there)}");
            Assert.All(placed.Where(c => c.Position == there[0]), c => Assert.InRange(c.StartSeconds, Sync(block, 0), Sync(block + 1, 0)));
        }
    }

    [Fact]
    public void A_failed_copy_where_the_clean_copys_twin_lies_shares_its_position()
    {
        // Five blocks of different lengths, each written twice. Setting s1 reads blocks 0 and 4 clean both times, block 1's
        // first copy and block 2's second; the other copies of blocks 1, 2 and 3 only two other settings read, garbling
        // every header its own way. Block 1's second copy follows its clean first by the copy's length and the gap
        // (0.4 s), and block 2's first copy precedes its clean second by as much (0.55 s); the block before and after
        // lie otherwise. Seen on the Orrin format at random damage: the failed copy stood alone beside the clean one.
        var readings = ReadAs(clean: [(0, 0), (0, 1), (1, 0), (2, 1), (4, 0), (4, 1)], unread: []);

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        AssertEachBlockOnePosition(placed, 5);
    }

    [Fact]
    public void The_next_blocks_first_copy_after_a_clean_second_copy_is_not_its_twin()
    {
        // Block 1's first copy read by no one, its second read clean; block 2's copies only failed. The sync after the
        // clean copy follows it by its length and the gap, as any copy's next sync does, but block 2's first copy spans
        // its own length (0.55 s) to the next, not block 1's (0.4 s): it is no copy of block 1, and stays apart.
        var readings = ReadAs(clean: [(0, 0), (0, 1), (1, 1), (4, 0), (4, 1)], unread: [(1, 0)]);

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        var ofBlock1 = placed.Where(c => c.StartSeconds >= Sync(1, 0) && c.StartSeconds < Sync(2, 0)).Select(c => c.Position).Distinct().Single();
        Assert.All(placed.Where(c => c.Position == ofBlock1), c => Assert.InRange(c.StartSeconds, Sync(1, 0), Sync(2, 0)));
    }
}
