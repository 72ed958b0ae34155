using System.Collections.Immutable;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// Positions on a capture where no setting reads any block clean, so no clean reading vouches for a place. A position
/// is still a place on the tape: readings of different settings that start at one sync are one copy of one block, and
/// where the format writes each block twice, consecutive places are the copies of one block. The format is the
/// biphase reference profile written twice (block number and length in the header, CRC-16/XMODEM); block timings are
/// common practice for such formats (copies back to back, half a second apart here).
/// </summary>
public sealed class PositionsWithoutCleanReadingTests
{
    private static readonly FormatProfile Profile = Readings.WrittenTwice();

    /// <summary>Where copy <paramref name="copy"/> of block <paramref name="block"/> starts: copies 0.5 s apart, blocks 1 s apart.</summary>
    private static double Sync(int block, int copy) => 1.5 + block + (0.5 * copy);

    /// <summary>A whole reading whose header (all three bytes) a setting garbled from <paramref name="header"/> and whose payload is wrong too (so it fails).</summary>
    private static BlockCandidate Garbled(int block, int copy, string setting, byte header, double late = 0)
        => Readings.Garbled(Profile, block, Sync(block, copy) + 0.001 + late, setting, header);

    /// <summary>Copy <paramref name="copy"/> of block <paramref name="block"/> read by settings s0 and s1, each garbling every header its own way.</summary>
    private static BlockCandidate[] GarbledByTwoSettings(int block, int copy) =>
    [
        Garbled(block, copy, "s0", (byte)(0x90 + (block * 2) + copy)),
        Garbled(block, copy, "s1", (byte)(0xC0 + (block * 2) + copy)),
    ];

    /// <summary>Blocks 0 to <paramref name="blocks"/> − 1, each copy read by two settings as <see cref="GarbledByTwoSettings"/>, but one copy that neither read.</summary>
    private static List<BlockCandidate> GarbledButOneCopy(int blocks, int unreadBlock, int unreadCopy)
    {
        var readings = new List<BlockCandidate>();
        for (int block = 0; block < blocks; block++)
        {
            for (int copy = 0; copy < 2; copy++)
            {
                if (block != unreadBlock || copy != unreadCopy)
                {
                    readings.AddRange(GarbledByTwoSettings(block, copy));
                }
            }
        }

        return readings;
    }

    /// <summary>Both copies of <paramref name="block"/> read clean by setting s1.</summary>
    private static BlockCandidate[] ReadCleanBySetting1(int block) =>
    [
        Readings.Of(Profile, Readings.Written(Profile, block), Sync(block, 0), 0, "s1"),
        Readings.Of(Profile, Readings.Written(Profile, block), Sync(block, 1), 0, "s1"),
    ];

    /// <summary>A reading cut short after one byte of its header: no field of an identity, nothing of the payload.</summary>
    private static BlockCandidate CutInHeader(int block, int copy, string setting, int ordinal)
    {
        var reading = Readings.Of(Profile, Readings.Written(Profile, block), Sync(block, copy), 0, setting, truncateTo: 0);
        return reading with
        {
            Header = [0xFF],
            Identity = new BlockIdentity(null, null, null, ordinal),
            EndSeconds = reading.StartSeconds + 0.025,
        };
    }

    private static int Positions(IEnumerable<BlockCandidate> readings) =>
        BlockPositioner.Place([.. readings], Profile.Layout.Copies).Select(c => c.Position).Distinct().Count();

    [Fact]
    public void Copies_that_every_setting_garbled_differently_are_one_position_per_block()
    {
        // Four blocks, each written twice; two settings read every copy, each garbling every header its own way. Seen on
        // the Orrin format at random damage: 8 positions for 4 blocks, one per copy, because no identity repeats.
        var readings = new List<BlockCandidate>();
        for (int block = 0; block < 4; block++)
        {
            for (int copy = 0; copy < 2; copy++)
            {
                readings.AddRange(GarbledByTwoSettings(block, copy));
            }
        }

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        Assert.Equal(4, placed.Select(c => c.Position).Distinct().Count());
        for (int block = 0; block < 4; block++)
        {
            // Both copies of one block, read by both settings, share a position, and no other block's reading is there.
            var there = placed.Where(c => c.StartSeconds >= Sync(block, 0) && c.StartSeconds < Sync(block + 1, 0)).Select(c => c.Position).Distinct();
            Assert.Single(there);
        }
    }

    [Fact]
    public void Copies_before_a_block_whose_first_copy_nobody_read_are_one_position()
    {
        // Six blocks, each written twice, every header garbled its own way by two settings, and block 3's first copy
        // read by neither; a seventh block read clean ends the run. Block 2's second copy
        // then spans to block 3's second copy's sync, twice its first copy's span. Seen on the Orrin format at random
        // damage: block 2's copies stood in two positions, and from there on each block's second copy was paired with
        // the next block's first.
        var readings = GarbledButOneCopy(6, 3, 0);
        readings.AddRange(ReadCleanBySetting1(6));

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        AssertEachBlockOnePosition(placed, 7);
    }

    [Fact]
    public void A_last_copy_read_on_over_the_next_blocks_first_copy_does_not_take_that_copy()
    {
        // Five blocks, each written twice, every header garbled its own way by two settings; a third setting misread both
        // copies of block 1 alike (so its header is read at two places), the second on a misread length that runs on over the whole of block 2's first copy. A length nobody
        // proved says nothing of where a block ends: the place it runs over may be the next block's first copy as well
        // as its own block's other copy, and the syncs' timing tells which. Seen on the Orrin format at random damage:
        // block 1's second copy and block 2's first stood in one position, block 1's first and block 2's second alone.
        var readings = new List<BlockCandidate>();
        for (int block = 0; block < 5; block++)
        {
            for (int copy = 0; copy < 2; copy++)
            {
                if (block == 2 && copy == 0)
                {
                    // Block 2's first copy: one setting's reading, cut short after its garbled header.
                    var cut = GarbledByTwoSettings(block, copy)[0];
                    readings.Add(cut with { Truncated = true, Payload = [], StoredChecksum = null, EndSeconds = cut.StartSeconds + 0.1 });
                    continue;
                }

                readings.AddRange(GarbledByTwoSettings(block, copy));
            }
        }

        readings.Add(Garbled(1, 0, "s2", 0x70));
        readings.Add(Garbled(1, 1, "s2", 0x70) with { EndSeconds = Garbled(2, 0, "s2", 0x70).EndSeconds });

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        AssertEachBlockOnePosition(placed, 5);
    }

    [Fact]
    public void A_captures_last_block_read_only_garbled_is_one_position()
    {
        // Five blocks, each written twice, every header garbled its own way by two settings; block 1's second copy read
        // by neither, so the places do not pair off from the capture's start and each block's copies are told by the
        // spans between syncs. The last block's second copy has no sync after it to give its span. Seen on the
        // three-class-pairs and Orrin formats at random damage: the capture's last block in two positions.
        var readings = GarbledButOneCopy(5, 1, 1);

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        AssertEachBlockOnePosition(placed, 5);
    }

    [Fact]
    public void A_number_that_every_block_of_a_kind_carries_names_no_place()
    {
        // Four blocks, each written twice, read only garbled by two settings, whose headers give nothing but the number a
        // format of several kinds gives every block of one kind (each kind numbered by its place in the file), alike at
        // every copy; block 1's first copy read by neither; a fifth block read clean ends the run. Such a number is read
        // at every place: it tells no block from the next. Seen on the three-class-pairs format at random damage: one
        // block's second copy and the next block's first in one position, the copies of the blocks around alone.
        var readings = GarbledButOneCopy(4, 1, 0).ConvertAll(c => c with { Identity = new BlockIdentity(null, null, 1, c.Identity.Ordinal) });
        readings.AddRange(ReadCleanBySetting1(4));

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        AssertEachBlockOnePosition(placed, 5);
    }

    [Fact]
    public void A_setting_that_locks_on_the_sync_late_reads_the_copy_the_others_read_there()
    {
        // Three blocks, each written twice and read only garbled: at every copy one setting stops after one byte of the
        // header, another reads the copy whole, and a third locks on the sync 45 ms after them (a fixed threshold needs
        // more of the sync's pulses), so its reading starts inside theirs. Copies lie half a second apart, so a reading
        // that starts inside another setting's, that soon after its sync, can be of no other copy. Seen on the
        // three-class-pairs format at random damage: the late setting's readings in positions of their own.
        var readings = new List<BlockCandidate>();
        for (int block = 0; block < 3; block++)
        {
            for (int copy = 0; copy < 2; copy++)
            {
                readings.Add(CutInHeader(block, copy, "s0", (block * 2) + copy));
                readings.Add(Garbled(block, copy, "s1", (byte)(0xC0 + (block * 2) + copy)));
                readings.Add(Garbled(block, copy, "s2", (byte)(0x90 + (block * 2) + copy), late: 0.045));
            }
        }

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        AssertEachBlockOnePosition(placed, 3);
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
    public void Spans_over_several_unread_copies_that_add_up_by_chance_do_not_make_two_blocks_one()
    {
        // Blocks 0 and 1 read only at their first and second copies, then nothing until block 3's second copy: the span
        // from block 0's copy (1.5 s, over two unread copies) and that of block 3's (0.5 s) add up to block 1's (2 s,
        // over three), as a last copy's span and the next block's do where one copy between them was not read. Seen on
        // the three-class-pairs format at random damage: two blocks in one position.
        var readings = new List<BlockCandidate>();
        foreach (var (block, copy) in new[] { (0, 0), (1, 1), (3, 1), (4, 0), (4, 1), (5, 0), (5, 1), (6, 0), (6, 1) })
        {
            readings.AddRange(GarbledByTwoSettings(block, copy));
        }

        readings.AddRange(ReadCleanBySetting1(7));

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        var first = placed.Where(c => c.StartSeconds < Sync(1, 0)).Select(c => c.Position).Distinct().ToList();
        var second = placed.Where(c => c.StartSeconds >= Sync(1, 0) && c.StartSeconds < Sync(2, 0)).Select(c => c.Position).Distinct().ToList();
        Assert.Empty(first.Intersect(second));
    }

    [Fact]
    public void Readings_cut_short_at_a_sync_join_the_block_read_there_even_when_their_ordinals_agree()
    {
        // Two blocks, each written twice. One setting misreads both copies of each block alike (a header that two
        // readings share); three settings stop after one byte of every header, and as each counts its readings alike
        // their keys agree too (#0 at the first sync of all three, #1 at the second...). Seen on the Orrin format: such
        // cut readings made a position at every sync beside the block's own.
        var readings = new List<BlockCandidate>();
        for (int block = 0; block < 2; block++)
        {
            for (int copy = 0; copy < 2; copy++)
            {
                readings.Add(Garbled(block, copy, "s3", (byte)(0xA0 + block)));
                for (int setting = 0; setting < 3; setting++)
                {
                    readings.Add(CutInHeader(block, copy, $"s{setting}", (block * 2) + copy));
                }
            }
        }

        Assert.Equal(2, Positions(readings));
    }

    [Fact]
    public void Places_whose_headers_two_settings_read_alike_as_different_blocks_are_not_taken_for_copies()
    {
        // Two blocks whose second copies nobody read: two settings read each first copy's header alike (block numbers 0
        // and 1), the payloads wrong. Two lone places in a row are not the copies of one block when their headers,
        // vouched for by two settings each, name two blocks.
        var readings = new List<BlockCandidate>();
        for (int block = 0; block < 2; block++)
        {
            var written = Readings.Written(Profile, block);
            var wrong = new Dictionary<int, byte> { [5] = (byte)(written[Profile.Layout.HeaderBytes + 5] ^ 0x08) };
            readings.Add(Readings.Of(Profile, written, Sync(block, 0), 0, "s0", changedPayload: wrong));
            readings.Add(Readings.Of(Profile, written, Sync(block, 0) + 0.002, 0, "s1", changedPayload: wrong));
        }

        Assert.Equal(2, Positions(readings));
    }

    [Fact]
    public void A_clean_block_keeps_its_own_position_beside_garbled_places()
    {
        // Block 1 was read clean at its first copy; blocks 0 and 2 only garbled. The clean block's position holds
        // nothing read at another block's sync, and the garbled blocks' copies pair up around it.
        var readings = new List<BlockCandidate>();
        foreach (int block in new[] { 0, 2 })
        {
            for (int copy = 0; copy < 2; copy++)
            {
                readings.Add(GarbledByTwoSettings(block, copy)[0]);
            }
        }

        readings.AddRange(ReadCleanBySetting1(1));

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        Assert.Equal(3, placed.Select(c => c.Position).Distinct().Count());
        var clean = placed.Where(c => c.Status == BlockStatus.Clean).Select(c => c.Position).Distinct().Single();
        Assert.All(placed.Where(c => c.Position == clean), c => Assert.Equal(BlockStatus.Clean, c.Status));
    }

    /// <summary>
    /// A false mark in a lead-in taken for the sync by <paramref name="setting"/>, and the lead-in's run after it read as an
    /// empty block's header: all zero bits (the lead-in's; common practice for such formats), length 0, the check failed,
    /// 45 ms long.
    /// </summary>
    private static BlockCandidate EmptyHeader(double start, string setting)
    {
        var zeros = new byte[Profile.Layout.HeaderBytes];
        var reading = Readings.Of(Profile, Readings.Written(Profile, 0), start, 0, setting);
        return reading with
        {
            Identity = BlockAssembler.ReadIdentity(Profile.Layout, zeros, 0),
            Header = [.. zeros],
            Payload = [],
            Status = BlockStatus.Failed,
            Confidence = 0,
            ByteMargins = [],
            ByteErrorOdds = [],
            ByteSeconds = [],
            EndSeconds = start + 0.045,
        };
    }

    /// <summary>
    /// Blocks 0 to <paramref name="blocks"/> − 1, every copy read garbled by setting s1 alone, each copy 0.25 s long and
    /// the lead-in before the next as long (copies 0.5 s apart as <see cref="Sync"/> places them).
    /// </summary>
    private static List<BlockCandidate> GarbledByOneSetting(int blocks)
    {
        var readings = new List<BlockCandidate>();
        for (int block = 0; block < blocks; block++)
        {
            for (int copy = 0; copy < 2; copy++)
            {
                var reading = Garbled(block, copy, "s1", (byte)(0xC0 + (block * 2) + copy));
                readings.Add(reading with { EndSeconds = reading.StartSeconds + 0.25 });
            }
        }

        return readings;
    }

    [Fact]
    public void A_lead_in_read_as_an_empty_header_before_a_sync_is_no_position()
    {
        // Four blocks, each written twice, every copy read garbled by one setting alone; in the lead-in before block 2's
        // first copy another setting takes a false mark for the sync and reads the lead-in after it as an empty header,
        // ending 55 ms before the sync. A copy read whole is followed by the whole lead-in of the next, so a reading that
        // ends that far inside it is no copy. Seen on the Orrin format at random damage: such readings stood in
        // positions of their own and broke the run of lone copies that the syncs' timing pairs.
        var readings = GarbledByOneSetting(4);
        readings.Add(EmptyHeader(Sync(2, 0) - 0.1, "s2"));

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        AssertEachBlockOnePosition(placed, 4);
    }

    [Fact]
    public void A_copy_read_as_an_empty_header_at_its_own_sync_keeps_its_place()
    {
        // The same empty header read at block 2's first copy's own sync by the only setting that read it: the next sync
        // follows after the copy's whole length and lead-in, so it is that copy, and pairs with block 2's second copy.
        var readings = GarbledByOneSetting(4);
        readings.RemoveAll(c => Math.Abs(c.StartSeconds - Sync(2, 0)) < 0.01);
        readings.Add(EmptyHeader(Sync(2, 0), "s2"));

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        AssertEachBlockOnePosition(placed, 4);
    }
}
