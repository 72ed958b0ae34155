using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// A pulse-width format whose sync is one long pulse a block, right after the lead-in: a cycle in a couple of
/// thousand, too rare for a group of cycle lengths. Ground truth is the profile the capture was written with and the
/// blocks written (<see cref="DraftTrials"/>); the confirmation replaces only the fields the draft marked as guesses.
/// </summary>
public sealed class RareSyncClassTests(OutsideTempFolder folder, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    /// <summary>
    /// Tuning seed 11004 of the draft figure: a head-amplifier capture, then the figure's SoX chain for that seed (a
    /// one-pole low-pass at 7.8 kHz, a 474 Hz high-pass, a speed change, inversion, a gain, 22.05 kHz, dithered to 16
    /// bits: sox(1), a general-purpose audio tool that shares no code with TapeVault). The settings that time whole
    /// cycles from the format's edge read the two bit classes alone; every block began with the sync cycle in no class,
    /// no sync was found, and the confirmed draft read none of the truth's 12 blocks.
    /// </summary>
    [Fact]
    public void A_sync_pulse_once_a_block_after_the_lead_in_is_a_class_of_the_draft()
    {
        var result = DraftTrials.Run("pulse-width", 11004, folder.Root,
            DraftFromCaptureSox.Printed("lowpass", "-1", "7810.4248", "highpass", "473.6372", "speed", "1.0665", "vol", "-1", "gain", "-15.0687", "rate", "22050", "dither"));
        output.WriteLine($"{result.Family} seed {result.Seed}: drafted {result.DraftedFamily}, {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} ({result.Written} written); guessed {string.Join(", ", result.Guessed)}; {result.Damage}; {result.Failure}");
        Assert.True(result.RecoveredByTruth >= 8, $"the truth read {result.RecoveredByTruth}: the damage is beyond the read path, not a test of the draft");
        Assert.Equal("pulse-width", result.DraftedFamily);
        Assert.True(result.RecoveredByBoth >= 0.9 * result.RecoveredByTruth, $"the confirmed draft read {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} blocks");
    }

    /// <summary>
    /// Tuning seed 14007 of the draft figure (an odd seed: no SoX chain): a 335 µs 0, a 723 µs 1, a 1213 µs sync
    /// pulse then a 1, bytes of nine bits with odd parity, a head-amplifier capture at 96 kHz. The one setting whose
    /// reading a check proved times the lead-in's last cycle, before the sync pulse, as 423 µs, a group of its own, and
    /// wrote it as the sync's first class: the read path, which reads that cycle as a lead-in cycle, found no sync, its
    /// check held on none of the blocks, and an FSK draft with the baud a guess won (confirmed, it did not load). The
    /// truth profile itself and the written blocks are the ground truth (<see cref="DraftTrials"/>).
    /// </summary>
    [Fact]
    public void The_lead_in_cycle_before_a_sync_pulse_read_long_is_left_out_of_the_sync()
    {
        var result = DraftTrials.Run("pulse-width", 14007, folder.Root);
        output.WriteLine($"{result.Family} seed {result.Seed}: drafted {result.DraftedFamily}, {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} ({result.Written} written); guessed {string.Join(", ", result.Guessed)}; {result.Damage}; {result.Failure}");
        output.WriteLine(result.DraftJson);
        Assert.True(result.RecoveredByTruth >= 12, $"the truth read {result.RecoveredByTruth}: the damage is beyond the read path, not a test of the draft");
        Assert.Equal("pulse-width", result.DraftedFamily);
        Assert.DoesNotContain("family", result.Guessed);
        Assert.True(result.RecoveredByBoth >= 0.95 * result.RecoveredByTruth, $"the confirmed draft read {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} blocks");
    }
}
