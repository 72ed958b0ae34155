using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.Synthesis;

/// <summary>
/// The draft figure's sums tell the read path's loss (blocks the truth profile itself does not read) from the draft's
/// (blocks the truth reads and the confirmed draft does not), and count apart the captures the truth reads little of.
/// The figures below are worked by hand from the trials' counts (plain arithmetic: no outside source applies).
/// </summary>
public sealed class DraftTallyTests
{
    [Theory]
    [InlineData(16, 0, TruthReading.None)]
    [InlineData(16, 7, TruthReading.Little)]
    [InlineData(16, 8, TruthReading.Enough)]
    [InlineData(16, 16, TruthReading.Enough)]
    [InlineData(0, 0, TruthReading.None)]
    public void A_capture_is_one_the_truth_reads_little_of_under_half_its_blocks(int written, int truth, TruthReading expected)
    {
        Assert.Equal(expected, DraftTally.Classify(written, truth));
    }

    [Fact]
    public void Losses_are_split_between_the_read_path_and_the_draft_and_captures_the_truth_reads_little_of_are_set_apart()
    {
        var tally = new DraftTally()
            .Add(written: 20, truthRead: 18, draftRead: 15, both: 15)   // the draft loses 3, the read path 2
            .Add(written: 10, truthRead: 0, draftRead: 0, both: 0)      // the truth reads none: 10 lost to the read path
            .Add(written: 12, truthRead: 3, draftRead: 4, both: 3)      // the truth reads little; the draft one block more
            .Add(written: 8, truthRead: 8, draftRead: 0, both: 0);      // the draft loses every block

        Assert.Equal(4, tally.Trials);
        Assert.Equal(50, tally.Written);
        Assert.Equal(29, tally.Truth);
        Assert.Equal(19, tally.Draft);
        Assert.Equal(18, tally.Both);
        Assert.Equal(21, tally.LostByReadPath);   // 2 + 10 + 9 + 0
        Assert.Equal(11, tally.LostByDraft);      // 3 + 0 + 0 + 8
        Assert.Equal(2, tally.TruthLittleTrials);
        Assert.Equal(1, tally.TruthNoneTrials);
        Assert.Equal(28, tally.WrittenWhereTruthReads);
        Assert.Equal(26, tally.TruthWhereTruthReads);
        Assert.Equal(15, tally.BothWhereTruthReads);

        var whole = tally.Plus(new DraftTally().Add(written: 5, truthRead: 5, draftRead: 5, both: 5));
        Assert.Equal(55, whole.Written);
        Assert.Equal(34, whole.Truth);
        Assert.Equal(23, whole.Both);
        Assert.Equal(20, whole.BothWhereTruthReads);
        Assert.Equal(31, whole.TruthWhereTruthReads);
        Assert.Equal(5, whole.Trials);
    }

    [Fact]
    public void A_trial_cannot_read_more_alike_than_either_profile_read()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new DraftTally().Add(written: 10, truthRead: 4, draftRead: 6, both: 5));
        Assert.Throws<ArgumentOutOfRangeException>(() => new DraftTally().Add(written: 10, truthRead: 11, draftRead: 0, both: 0));
    }
}
