using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Tests.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// A position that no two captures proved, kept from one capture's reading whose weak check holds. That reading's
/// confidence is the rate at which such readings are right over all of them, and most of those are of blocks that the
/// other captures read too. A block that is there is read by most passes; a wrong or phantom reading by none. So the
/// passes that read the tape's other blocks clean and not this one weigh against it, and a failed position does not
/// claim the near certainty of a proven one.
/// </summary>
public sealed class UnconfirmedPositionTests
{
    private static readonly FormatProfile Sum8 = Readings.BiphaseWith("sum8");

    /// <summary>Block 1 as one capture read it: its 8-bit sum holds, its decisions are doubtful (a byte in five), nothing corroborates it.</summary>
    private static BlockCandidate Unproven() =>
        Readings.Of(Sum8, Readings.Written(Sum8, 1), 2.0, 1, baseError: 0.2f) with { Status = BlockStatus.Failed, Doubts = BlockDoubts.Uncorroborated, Confidence = 0.9974 };

    private static MergePass Pass(int capture, bool withBlock1) =>
        Readings.Pass(capture, [
            Readings.Of(Sum8, Readings.Written(Sum8, 0), 1.0, 0),
            .. withBlock1 ? new[] { Unproven() } : [],
            Readings.Of(Sum8, Readings.Written(Sum8, 2), 3.0, withBlock1 ? 2 : 1),
        ]);

    [Fact]
    public void A_block_one_capture_of_three_read_under_a_weak_check_is_not_shown_near_certain()
    {
        // Three captures read blocks 0 and 2 clean; only the first read anything of block 1.
        var image = TapeMerger.Merge([Pass(0, withBlock1: true), Pass(1, withBlock1: false), Pass(2, withBlock1: false)], Sum8);

        var block = image.Blocks.Single(b => b.BlockNumber == 1);
        Assert.Equal(RecoveryStatus.Voted, block.Status);
        Assert.True(block.Confidence < 0.99, $"a failed position at {block.Confidence}");

        // By Bayes: each other pass read 2 of the tape's 2 proven blocks, so (2 + 1) / (2 + 2) = 3/4 by the merge's
        // estimate; both missing block 1 is 1/16 as likely if it is there as if it is not.
        double right = 0.9974 / 16;
        Assert.Equal(right / (right + (1 - 0.9974)), block.Confidence, 6);
        Assert.All(image.Blocks.Where(b => b.BlockNumber != 1), b => Assert.Equal(RecoveryStatus.Clean, b.Status));
    }

    [Fact]
    public void A_block_of_a_tape_read_once_keeps_its_reading_s_confidence()
    {
        // No other capture looked: nothing weighs against the reading.
        var image = TapeMerger.Merge([Pass(0, withBlock1: true)], Sum8);

        var block = image.Blocks.Single(b => b.BlockNumber == 1);
        Assert.Equal(RecoveryStatus.Voted, block.Status);
        Assert.Equal(0.9974, block.Confidence, 9);
    }

    [Fact]
    public void A_block_of_a_long_tape_the_passes_read_clean_elsewhere_is_not_shown_near_wrong()
    {
        // Twenty blocks, every one read clean by all three captures but block 10, which only the first read, under its
        // weak check. The passes missed no other block, so the tape shows nothing of how often they miss one together;
        // taking that for never (each other pass then misses a block at 1 / 21, its share of the 19 proven ones with one
        // read and one missed added) put the block at 0.47. Each of the others misses it at 1 / 4 now: the shared misses
        // in four pairs the estimate starts from, as no pair of this tape says otherwise.
        MergePass Capture(int capture) => Readings.Pass(capture, [.. Enumerable.Range(0, 20)
            .Where(b => capture == 0 || b != 10)
            .Select((b, position) => b == 10
                ? Readings.Of(Sum8, Readings.Written(Sum8, b), b + 1.0, position, baseError: 0.2f) with { Status = BlockStatus.Failed, Doubts = BlockDoubts.Uncorroborated, Confidence = 0.9974 }
                : Readings.Of(Sum8, Readings.Written(Sum8, b), b + 1.0, position))]);

        var image = TapeMerger.Merge([Capture(0), Capture(1), Capture(2)], Sum8);

        var block = image.Blocks.Single(b => b.BlockNumber == 10);
        Assert.Equal(RecoveryStatus.Voted, block.Status);
        double right = 0.9974 * 0.25 * 0.25;
        Assert.Equal(right / (right + (1 - 0.9974)), block.Confidence, 6);
        Assert.True(block.Confidence < 0.99, $"a failed position at {block.Confidence}");
    }

    [Fact]
    public void Passes_that_miss_blocks_together_weigh_less_against_a_block_they_missed()
    {
        // Five blocks. The first capture reads block 2 only under its weak check and every other block clean; the
        // other two read blocks 0, 1 and 4 clean and both miss block 3 too: this tape's damage there, which every
        // capture shares, not each pass's own.
        MergePass Other(int capture) => Readings.Pass(capture, [
            Readings.Of(Sum8, Readings.Written(Sum8, 0), 1.0, 0),
            Readings.Of(Sum8, Readings.Written(Sum8, 1), 2.0, 1),
            Readings.Of(Sum8, Readings.Written(Sum8, 4), 5.0, 2),
        ]);
        var first = Readings.Pass(0, [
            Readings.Of(Sum8, Readings.Written(Sum8, 0), 1.0, 0),
            Readings.Of(Sum8, Readings.Written(Sum8, 1), 2.0, 1),
            Readings.Of(Sum8, Readings.Written(Sum8, 2), 3.0, 2, baseError: 0.2f) with { Status = BlockStatus.Failed, Doubts = BlockDoubts.Uncorroborated, Confidence = 0.9974 },
            Readings.Of(Sum8, Readings.Written(Sum8, 3), 4.0, 3),
            Readings.Of(Sum8, Readings.Written(Sum8, 4), 5.0, 4),
        ]);
        var image = TapeMerger.Merge([first, Other(1), Other(2)], Sum8);

        var block = image.Blocks.Single(b => b.BlockNumber == 2);
        Assert.Equal(RecoveryStatus.Voted, block.Status);

        // Each other pass read 3 of the 4 proven blocks, (3 + 1) / (4 + 2): it misses a block at 1/3. But of the pairs of
        // a pass that missed a proven block and another pass (block 3: the second with the first and the third, the third
        // with the first and the second), 2 of 4 missed it too, (2 + 1) / (4 + 4) = 0.375 from one shared miss in four
        // pairs before: a block the first capture did not read clean either is missed by each of the others at 0.375.
        double right = 0.9974 * 0.375 * 0.375;
        Assert.Equal(right / (right + (1 - 0.9974)), block.Confidence, 6);
        Assert.True(block.Confidence < 0.99, $"a failed position at {block.Confidence}");
    }
}
