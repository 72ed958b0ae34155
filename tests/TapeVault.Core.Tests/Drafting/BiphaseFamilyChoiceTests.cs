using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// Biphase captures after an alternating preamble that the draft proposed as another family. Ground truth is the
/// profile the capture was written with and the blocks written (<see cref="DraftTrials"/>); the confirmation replaces
/// only the fields the draft marked as guesses, so a draft of the wrong family reads nothing. The claim: the draft is
/// biphase and, confirmed, reads at least nine tenths of what the truth reads. Seeds from the draft figure's tuning
/// range (below 20000).
/// </summary>
public sealed class BiphaseFamilyChoiceTests(OutsideTempFolder folder, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    /// <summary>
    /// Tuning seed 10017: biphase at 426 µs a cell after a preamble of alternating bits, a line-output capture at
    /// 22.05 kHz, 24.7 dB SNR; the sync word holds ten 0 bits in a row. Two faults made it an unproven pulse-width
    /// draft that read none of the truth's 13 blocks: (1) the wholes' runs were scored with the preambles in them (a
    /// preamble is one long run of wholes), so their mean run length passed 3 and biphase scored 0.1 against
    /// pulse-width's 0.3; (2) with no check found (edges the survey's setting misses break most blocks), the sync
    /// drafted was the preamble's last bit alone, which the preamble plays too, so the draft did not load.
    /// </summary>
    [Fact]
    public void An_alternating_preamble_capture_whose_check_the_survey_cannot_find_is_drafted_as_biphase()
    {
        var result = DraftTrials.Run("biphase-alternating", 10017, folder.Root);
        output.WriteLine($"{result.Family} seed {result.Seed}: drafted {result.DraftedFamily}, {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} ({result.Written} written); guessed {string.Join(", ", result.Guessed)}; {result.Damage}; {result.Failure}");
        Assert.True(result.RecoveredByTruth >= 10, $"the truth read {result.RecoveredByTruth}: the damage is beyond the read path, not a test of the draft");
        Assert.Equal("biphase", result.DraftedFamily);
        Assert.DoesNotContain("family", result.Guessed);
        Assert.True(result.RecoveredByBoth >= 0.9 * result.RecoveredByTruth, $"the confirmed draft read {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} blocks");
    }
}
