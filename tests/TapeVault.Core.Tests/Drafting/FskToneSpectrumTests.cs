using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// The tones of an FSK draft where the half cycles of one tone are smeared. Seed 156000 of the draft figure (seen
/// before, not a held-out seed): fsk-sync at 586 baud, a mark of two cycles a bit at 1172 Hz and a space of one cycle
/// at 586 Hz, a head-amplifier capture 3.8 % fast at 32 kHz, then the figure's SoX chain for that seed (a band-pass,
/// inversion, a gain of −17.9 dB, 48 kHz, written at 8 bits: sox(1), a general-purpose audio tool that shares no code
/// with TapeVault). A lone space cycle between mark cycles reads as a short and a long half of no one length (525 to
/// 1000 µs, no peak at the 822 µs of 608 Hz), so the group of those half cycles centres at 664 µs, 753 Hz; the space
/// tone was drafted there, no baud near 608 was tried, no framing held and nothing was drafted. The tone spectrum
/// (Goertzel) peaks at the tone as played.
/// Ground truth: the profile the capture was written with and the blocks written (<see cref="DraftTrials"/>).
/// </summary>
public sealed class FskToneSpectrumTests(OutsideTempFolder folder, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    [Fact]
    public void A_space_tone_whose_half_cycles_are_smeared_is_drafted_at_the_spectrum_peak_and_reads_the_blocks()
    {
        var result = DraftTrials.Run("fsk-sync", 156000, folder.Root, (path, _) =>
        {
            // The chain the draft figure printed for this seed; -R so that SoX's dither repeats (sox(1)).
            string damaged = Path.ChangeExtension(path, ".sox.wav");
            string[] effects = ["sinc", "244.5628-9206.4489", "vol", "-1", "gain", "-17.8514", "rate", "48000"];
            OutsideTool.Sox(["-R", "-V1", path, "-b", "8", damaged, .. effects]);
            return (damaged, "sox " + string.Join(' ', effects));
        });
        output.WriteLine($"drafted {result.DraftedFamily}, {result.RecoveredByConfirmedDraft}/{result.Written} by the confirmed draft, {result.RecoveredByTruth}/{result.Written} by the truth; guessed {string.Join(", ", result.Guessed)}; {result.Damage}; {result.Failure}");
        output.WriteLine(result.DraftJson ?? string.Empty);
        Assert.True(result.RecoveredByTruth >= 4, "the truth itself reads too little back: the damage is beyond the read path, not a test of the draft");
        Assert.Null(result.Failure);
        Assert.Equal("fsk", result.DraftedFamily);

        // The space tone as the tape plays: the written tone times the speed (within 6 %, as the draft's other timing
        // checks allow), not the 753 Hz of its half cycles' group.
        var truth = ProfileLoader.Parse(result.TruthJson, "truth");
        var draft = ProfileLoader.Parse(result.DraftProfileJson!, "draft");
        double spaceAsPlayed = truth.Fsk!.SpaceHz * result.Speed;
        Assert.True(Math.Abs(Math.Log(draft.Fsk!.SpaceHz / spaceAsPlayed)) < 0.06, $"space {draft.Fsk.SpaceHz} Hz against {spaceAsPlayed} Hz as played");
        Assert.True(result.RecoveredByConfirmedDraft >= 0.9 * result.RecoveredByTruth, $"the confirmed draft read {result.RecoveredByConfirmedDraft} blocks, the truth {result.RecoveredByTruth}");
    }
}
