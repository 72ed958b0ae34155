using TapeVault.Core.Blocks;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// Positions on captures where every setting garbles every header, checked against where each copy of each block was
/// written. A format that writes each block twice writes the copies back to back, one length each, after the same
/// gap: the span from a copy's sync to the next sync is the same for both copies of a block, which tells the copies
/// apart from the next block where no header does. The cases are readings the trust benchmark saved
/// (`TAPEVAULT_TRUST_CANDIDATES=folder`: one pass of our channel model, its readings by every setting, the blocks
/// written, and where the synthesiser wrote each copy, on the capture's time base: the written layout's times fitted
/// to the readings' starts by offset and scale, the capture's playback speed).
/// </summary>
public sealed class PositionCopySpacingTests
{
    [Fact]
    public void Copies_no_setting_read_past_the_header_s_first_byte_are_one_position_per_block()
    {
        // orrin-80 (each block written twice), tuning seed 12000, pass 0 (our channel model): 22 written blocks, two
        // settings read at 42 of the 44 copies' syncs; 74 of the 80 readings stop inside the header and the other six
        // garble it and read no payload, so no reading names a block and none is clean. Before, nearly every sync read
        // was a position of its own (36 positions): the run of lone places was not a multiple of two (two copies
        // were not read), so no two places were taken for copies.
        var (capture, placed) = SavedCapture.PlaceAgain("orrin-80-no-header-read-one-pass.json");

        // Each block whose two copies were read, with the next sync read after them, is one position.
        var syncs = placed.Select(c => capture.WrittenAt(c)).Where(w => w is not null).Select(w => w!.Value).ToList();
        foreach (var block in syncs.GroupBy(w => w.Block))
        {
            bool bothCopies = block.Any(w => w.Copy == 0) && block.Any(w => w.Copy == 1);
            bool nextRead = syncs.Exists(w => w.Block == block.Key + 1 && w.Copy == 0);
            if (bothCopies && nextRead)
            {
                var positions = placed.Where(c => capture.WrittenAt(c) is { } w && w.Block == block.Key).Select(c => c.Position).Distinct().ToList();
                Assert.True(positions.Count == 1, $"block {block.Key}'s copies are at positions {string.Join(", ", positions)}");
            }
        }
    }

    [Fact]
    public void Readings_cut_inside_their_first_field_at_two_blocks_are_not_one_block_by_their_settings_counts()
    {
        // The same capture: at 9.380 s (block 10's second copy) one setting, and at 9.797 s (block 11's first) the
        // other, stopped inside the header; each setting counts its readings, and both were its 21st, so the two
        // readings carried the same identity (#21), and block 11's first copy joined block 10's position.
        var (capture, placed) = SavedCapture.PlaceAgain("orrin-80-no-header-read-one-pass.json");

        var tenth = placed.Where(c => capture.WrittenAt(c) is { Block: 10 }).Select(c => c.Position).Distinct().ToList();
        var eleventh = placed.Where(c => capture.WrittenAt(c) is { Block: 11 }).Select(c => c.Position).Distinct().ToList();
        Assert.NotEmpty(tenth);
        Assert.NotEmpty(eleventh);
        Assert.Empty(tenth.Intersect(eleventh));
    }
}
