using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Merge;
using TapeVault.Core.Tests.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// A position's stretch of tape is what its readings prove: a checksum that holds proves where a reading ends, a failed
/// reading only where it starts (its length field may be misread, and the reading then runs on over the blocks after
/// it). The profile is the biphase reference profile (block number and length in the header, CRC-16/XMODEM); the
/// timings (blocks half a second long, a second apart) are common practice for such formats.
/// </summary>
public sealed class PositionSpanTests
{
    private static readonly FormatProfile Profile = ProfileCatalog.BuiltIn.Get("biphase-1200");

    [Fact]
    public void A_failed_reading_that_runs_on_does_not_stretch_its_position_over_the_next_file()
    {
        // Two short files whose headers carry only a block number: block 0 of the first, block 1, then block 0 of the
        // second file (other bytes). Setting s1 misread the first block's length and ran on to 4.5 s, past all three.
        var first = Readings.Written(Profile, 0);
        var wrong = new Dictionary<int, byte> { [3] = (byte)(first[Profile.Layout.HeaderBytes + 3] ^ 0x10) };
        var runOn = Readings.Of(Profile, first, 1.001, 0, "s1", changedPayload: wrong) with { EndSeconds = 4.5 };
        var readings = new[]
        {
            Readings.Of(Profile, first, 1.0, 0, "s0"),
            runOn,
            Readings.Of(Profile, Readings.Written(Profile, 1), 2.0, 0, "s0"),
            Readings.Of(Profile, Readings.Written(Profile, 0, seed: 7), 3.0, 0, "s2"),
        };
        Assert.All(readings.Where(c => c != runOn), c => Assert.Equal(BlockStatus.Clean, c.Status));

        var placed = BlockPositioner.Place(readings);

        // Three blocks were written; before, the run-on reading's end made the second file's block 0 the first's.
        Assert.Equal(3, placed.Select(c => c.Position).Distinct().Count());
        Assert.Equal(placed.Single(c => c.SettingName == "s0" && c.StartSeconds == 1.0).Position, placed.Single(c => c.SettingName == "s1").Position);
    }

    [Fact]
    public void A_stray_reading_in_one_pass_does_not_draw_another_pass_s_reading_of_the_next_block_into_its_position()
    {
        // Blocks 0, 1 and 2 a second apart. Pass 0 read 0 and 2 clean, and of block 1 only noise with a header nobody
        // else read, which its positioner joined to block 0's position (a stray reading from the lead-in to 2.9 s).
        // Passes 1 and 2 read 0 and 2 clean and block 1 failed, each with another payload byte wrong.
        BlockCandidate Failed(int block, double start, string setting, int wrongByte, byte? number = null)
        {
            var written = Readings.Written(Profile, block);
            if (number is { } n)
            {
                written[1] = n;
            }

            return Readings.Of(Profile, written, start, 0, setting, changedPayload: new Dictionary<int, byte> { [wrongByte] = (byte)(written[Profile.Layout.HeaderBytes + wrongByte] ^ 0x10) });
        }

        MergePass Pass(int n, params BlockCandidate[] between) => Readings.Pass(
            n,
            [Readings.Of(Profile, Readings.Written(Profile, 0), 1.0, 0), .. between, Readings.Of(Profile, Readings.Written(Profile, 2), 3.0, 2)]);

        var pass0 = Pass(0, Failed(1, 1.6, "s1", 3, number: 0xE7) with { Position = 0, EndSeconds = 2.9 });
        var pass1 = Pass(1, Failed(1, 2.0, "s0", 5) with { Position = 1 });
        var pass2 = Pass(2, Failed(1, 2.0, "s0", 9) with { Position = 1 });

        var image = TapeMerger.Merge([pass0, pass1, pass2], Profile);

        // Block 1's position holds the readings of it; before, the stray reading's end put them into block 0's position.
        Assert.Equal(3, image.Blocks.Length);
        Assert.Contains(image.Blocks[1].Sources, s => s.StartSeconds == 2.0);
    }
}
