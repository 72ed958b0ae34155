using TapeVault.Core.Checksums;
using TapeVault.Core.Drafting;
using Xunit;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// The block-kind search on blocks built byte by byte (<see cref="DraftBlockSamples"/>): a sync per copy, two copies,
/// a header kind whose start and end address give the data kind's length, and a CRC after the sync.
/// </summary>
public sealed class BlockKindSearchTests
{
    private static IBlockChecksum Xmodem()
    {
        var crc = ChecksumCatalog.Get("CRC-16/XMODEM");

        // Source: CRC catalogue (reveng), CRC-16/XMODEM, check = 0x31c3: the blocks below carry this model's values.
        Assert.Equal(0x31C3u, crc.Compute("123456789"u8));
        return crc;
    }

    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public void Finds_the_sync_of_each_copy_the_check_and_the_header_field_that_gives_the_data_length(bool bigEndian)
    {
        var crc = Xmodem();
        var blocks = DraftBlockSamples.Blocks(crc, bigEndian, 1);

        var found = BlockKindSearch.Search(blocks);

        Assert.NotNull(found);
        Assert.Equal(2, found.Copies);
        Assert.Equal(1.0, found.CopiesShare);
        Assert.Equal([DraftBlockSamples.FirstCopySync, DraftBlockSamples.SecondCopySync], found.SyncPerCopy);
        Assert.Equal(ChecksumCatalog.ParametersOf(crc), ChecksumCatalog.ParametersOf(found.Checksum));
        Assert.Equal(bigEndian, found.ChecksumBigEndian);
        Assert.Equal(12, found.HeaderBodyBytes);
        Assert.Equal((0, 8), found.Name);
        Assert.Equal(new LengthSource(8, 2, false, 10, false), found.Length);
        Assert.Equal(3, found.Files);
        Assert.False(found.LengthApproximate);
        Assert.Equal(12, found.BlocksHolding);

        // The same finding as a layout: the check covers what follows the sync, on every block read.
        Assert.Equal(9, found.Layout.CoverageStart);
        Assert.Equal(2, found.Layout.ChecksumBytes);
        Assert.Equal(12, found.Layout.BlocksHolding);
        Assert.Equal(9 + 12, found.Layout.HeaderBytes);
        Assert.Contains(found.Layout.Fields, f => f.Role == "file-name" && f.Offset == 9 && f.Bytes == 8);
        Assert.Equal(blocks.Count, found.Layout.Blocks.Count);
    }

    /// <summary>
    /// Damage lost one copy of most blocks (12 written, 7 read: one whole pair, five lone copies of either copy): runs
    /// of alike blocks count more lone blocks than pairs, yet each copy still carries its own countdown, as the
    /// format's description says (a countdown sync that differs between the first and second copy, each block recorded
    /// twice). Before, the copies were drafted as 1 with the first copy's sync alone, so every second copy was lost.
    /// </summary>
    [Fact]
    public void Copies_told_by_their_syncs_where_damage_left_most_blocks_without_their_twin()
    {
        var blocks = DraftBlockSamples.Blocks(Xmodem(), false, 4);
        List<byte[]> read = [blocks[1], blocks[2], blocks[4], blocks[5], blocks[7], blocks[8], blocks[11]];

        var found = BlockKindSearch.Search(read);

        Assert.NotNull(found);
        Assert.Equal(2, found.Copies);
        Assert.Equal([DraftBlockSamples.FirstCopySync, DraftBlockSamples.SecondCopySync], found.SyncPerCopy);
        Assert.Equal(1.0, found.CopiesShare);
        Assert.Equal(new LengthSource(8, 2, false, 10, false), found.Length);
    }

    /// <summary>A sync that differs between the two block kinds, each block written once, tells no copies.</summary>
    [Fact]
    public void Syncs_that_differ_with_the_block_kind_alone_tell_no_copies()
    {
        var bodies = DraftBlockSamples.Bodies(Xmodem(), false, 5);
        var read = bodies.Select((b, i) => (byte[])[.. i % 2 == 0 ? DraftBlockSamples.FirstCopySync : DraftBlockSamples.SecondCopySync, .. b]).ToList();

        var found = BlockKindSearch.Search(read);

        Assert.NotNull(found);
        Assert.Equal(1, found.Copies);
    }

    [Fact]
    public void A_block_whose_check_fails_is_left_out_and_the_rest_still_tell_the_kinds()
    {
        var blocks = DraftBlockSamples.Blocks(Xmodem(), true, 2);
        blocks[4][^5] ^= 0x10;

        var found = BlockKindSearch.Search(blocks);

        Assert.NotNull(found);
        Assert.Equal(11, found.BlocksHolding);
        Assert.Equal(new LengthSource(8, 2, false, 10, false), found.Length);
        Assert.DoesNotContain(found.Layout.Blocks, b => ReferenceEquals(b, blocks[4]));
    }

    [Fact]
    public void Blocks_whose_check_value_no_catalogue_checksum_computes_have_no_kinds()
    {
        var blocks = DraftBlockSamples.Blocks(Xmodem(), true, 3);
        foreach (var block in blocks)
        {
            block[^1] ^= 0x5A;
            block[^2] ^= 0xA5;
        }

        Assert.Null(BlockKindSearch.Search(blocks));
    }

    [Fact]
    public void One_byte_repeated_at_the_start_of_every_block_is_no_sync()
    {
        // A run of one value is what a lead-in or a stuck line reads as: the bytes after it begin the block here.
        var crc = Xmodem();
        var blocks = DraftBlockSamples.Bodies(crc, true, 4).Select(b => (byte[])[0x55, 0x55, 0x55, 0x55, .. b]).ToList();

        var found = BlockKindSearch.Search(blocks);

        Assert.True(found is null || found.SyncBytes == 1, $"a sync of {found?.SyncBytes} bytes of one value");
    }
}
