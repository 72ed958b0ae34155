using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Merge;

/// <summary>
/// Where readings go before they are resolved: a capture's positions (one identity over one stretch of tape, read
/// whole once per setting) and each pass's place on the common timeline.
/// </summary>
public sealed class PositionAndTimelineTests
{
    private static readonly FormatProfile Crc16 = ProfileCatalog.BuiltIn.Get("biphase-1200");

    private static byte[] Written(int blockNumber, int seed = 0) => Readings.Written(Crc16, blockNumber, seed);

    [Fact]
    public void Two_whole_readings_by_one_setting_under_one_misread_number_are_two_positions()
    {
        // Block 3 of the first file, its number misread as 0, lies just before block 0 of the next file: one
        // setting read both whole, so they cannot be one block.
        var misread = Written(3);
        misread[1] = 0;
        var readings = new[]
        {
            Readings.Of(Crc16, Written(2), 3.3, 0),
            Readings.Of(Crc16, misread, 4.33, 0),
            Readings.Of(Crc16, Written(0, seed: 5), 5.12, 0),
        };

        var placed = BlockPositioner.Place(readings);
        Assert.Equal(3, placed.Select(c => c.Position).Distinct().Count());
    }

    [Fact]
    public void A_reading_cut_off_after_its_block_number_keeps_that_number_rather_than_a_neighbours()
    {
        // Cut off after the two bytes of the block number (0): the clean block 1 a second later is not its block.
        var cut = Readings.Of(Crc16, Written(0), 1.216, 0, truncateTo: 0) with { Header = [0, 0], Identity = BlockAssembler.ReadIdentity(Crc16.Layout, [0, 0], 0) };
        var placed = BlockPositioner.Place([cut, Readings.Of(Crc16, Written(1), 2.27, 0)]);
        Assert.Equal(2, placed.Select(c => c.Position).Distinct().Count());
        Assert.Equal("0", placed.Single(c => c.StartSeconds < 2).Identity.Key.Split(':')[^1]);
    }

    [Fact]
    public void A_pass_that_shares_no_clean_block_with_the_reference_is_placed_through_a_third_pass()
    {
        // Blocks a second apart. The reference (most clean blocks) shares block 1 with pass 2, which shares block 4
        // with pass 0; pass 0 shares nothing with the reference and lost its first blocks, so lining up the starts
        // of the captures would put it a block and a half off.
        MergePass PassOf(int n, double offset, params int[] clean) =>
            Readings.Pass(n, [.. clean.Select(b => Readings.Of(Crc16, Written(b), offset + b, b))]);

        var reference = PassOf(1, 0.0, 0, 1, 3);
        var middle = PassOf(2, 0.2, 1, 4);
        var late = PassOf(0, 0.5, 4, 5);
        var timelines = TapeMerger.Align([late, reference, middle], Crc16);

        // Block 4 of the late pass at its capture time 4.5 s maps to where the reference would have it: 4 s.
        Assert.Equal(4.0, timelines[0].Map(4.5), precision: 2);
        Assert.Equal(1.0, timelines[2].Map(1.2), precision: 2);
    }
}
