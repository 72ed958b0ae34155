using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// Positions of the copies of a block that readings name only in part, or that no setting read clean, checked against
/// where each copy of each block was written. Readings cut short at a sync before any field that names a block are
/// readings of that place, like the readings of other settings that start there and name it alike: they must not take
/// the identity of a clean block nearby, which would carry the copy's place into that block's position. And a copy read
/// only as far as its file's name (not which block of the file) is the copy of the clean block beside it whose
/// identity agrees, where only one does. The cases are readings the trust benchmark saved (`TAPEVAULT_TRUST_CANDIDATES=folder`: one pass of our channel model, its readings
/// by every setting, the blocks written, and where the synthesiser wrote each copy, on the capture's time base).
/// </summary>
public sealed class PositionCopiesReadNamedTests
{
    [Fact]
    public void The_copies_of_a_block_read_named_but_never_clean_are_one_position()
    {
        // three-class-pairs, tuning seed 15002, pass 2 (our channel model), the readings that start from block 28 to the
        // first copy of block 31. Block 29 (a data block) is read at both copies by three settings that name it and stop
        // a few bytes into its payload; the other settings stop inside the countdown and name nothing. Blocks 28 and 30
        // are read clean, both copies. Before, block 29's copies were two positions: the cut readings at each copy's
        // sync took the identity of the clean block nearest to them (28 before the first copy, 30 after the second).
        AssertOnePositionPerBlock("three-class-pairs-data-copies-cut-one-pass.json", block: 29);
    }

    [Fact]
    public void A_copy_read_as_far_as_its_file_name_is_the_position_of_the_clean_copy_beside_it()
    {
        // orrin-80, tuning seed 15001, pass 0 (our channel model), the readings that start from block 9 to the first copy
        // of block 12. Block 10's first copy is read clean; at its second copy four settings lose the signal after the
        // file's name, before the block number. Before, that copy was a position of its own (its file name read alike by
        // four settings kept it from the clean copy's identity).
        AssertOnePositionPerBlock("orrin-80-copy-cut-after-file-name-one-pass.json", block: 10);
    }

    [Fact]
    public void A_reading_that_runs_on_over_the_next_block_stays_with_the_copy_it_was_read_from()
    {
        // orrin-80, seed 138003, pass 1 (our channel model), the readings that start from block 9 to block 10's second
        // copy. At block 9's second copy two settings read its header alike (not clean) and a third reads on, on a
        // misread length, over block 10's first copy, which is read clean. Before, that run-on took block 10's identity
        // and carried the whole place (the two settings' readings too) into block 10's position; block 10's second copy,
        // read clean, then made a position of its own (3 positions for 2 blocks, block 9 in two, block 10 in two). The
        // reference is where the synthesiser wrote each copy; readings of one sync are one copy (common practice: every
        // setting reads the same capture).
        AssertOnePositionPerBlock("orrin-80-run-on-over-next-block-one-pass.json", block: 9);
    }

    /// <summary>
    /// Placed again, the case's readings of each written block (where the synthesiser wrote its copies) lie in one
    /// position, no two blocks share one, and <paramref name="block"/> is among those read.
    /// </summary>
    internal static void AssertOnePositionPerBlock(string caseFile, int block)
    {
        var (capture, placed) = SavedCapture.PlaceAgain(caseFile);

        var positionsOf = placed.Where(c => capture.WrittenAt(c) is not null)
            .GroupBy(c => capture.WrittenAt(c)!.Value.Block)
            .ToDictionary(g => g.Key, g => g.Select(c => c.Position).Distinct().ToList());
        Assert.Contains(block, positionsOf.Keys);
        foreach (var (written, positions) in positionsOf)
        {
            Assert.True(positions.Count == 1, $"block {written}'s readings lie in positions {string.Join(", ", positions)}");
        }

        // One position per block: no two blocks share one.
        Assert.Equal(positionsOf.Count, positionsOf.Values.Select(p => p[0]).Distinct().Count());
    }
}
