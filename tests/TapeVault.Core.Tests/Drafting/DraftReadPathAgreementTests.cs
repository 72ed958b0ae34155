using System.Text.Json.Nodes;
using TapeVault.Core.Drafting;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// A pulse-width draft whose check holds inside the drafter but whose profile the read path reads otherwise: the
/// drafter read the cycles with a class it then left out, or with a framing that does not hold after its sync, or
/// through a setting that reads the sync's first cycles unevenly. Ground truth is the profile each capture was written
/// with and the blocks written (<see cref="DraftTrials"/>: the bytes read are compared with the bytes written); the
/// confirmation replaces only the fields the draft marked as guesses, and these drafts marked none but the recording.
/// </summary>
public sealed class DraftReadPathAgreementTests(OutsideTempFolder folder, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    /// <summary>
    /// Seed 174001 of the draft figure (no SoX chain): short 301, long 710, a 1483 µs sync pulse, mains hum at 60 Hz.
    /// The hum's cycles in the silence between blocks (16.6 ms) made a rare group whose boundary with the long class
    /// lay at their geometric mean (3.4 ms), so the sync pulse read as a long cycle and the draft's sync was `long`;
    /// the hum's group was left out of the profile, the read path read the sync pulse as no class, and its check held
    /// on none of the blocks: the confirmed draft read 0 of the truth's 15.
    /// </summary>
    [Fact]
    public void A_class_left_out_of_the_draft_no_longer_reads_the_sync_pulse_as_a_bit()
    {
        AssertDraftReadsWhatTheTruthReads(174001, leastTruth: 12);
    }

    /// <summary>
    /// Seed 174003 (no SoX chain; inverted line output): sync long long short, start bit 0, stop bit 1, an XOR check,
    /// text in every header. A sync a pulse short holds the complemented framing (start 1, stop 0: the stop bit before
    /// each byte read as its start and the text's top bit, always 0, as its stop), and the sync a pulse longer was
    /// then read with that framing, which gave the right bytes inside the drafter (bytes are cut by position) but a
    /// start bit the read path never finds: 0 of the truth's 14.
    /// </summary>
    [Fact]
    public void A_longer_sync_is_drafted_with_the_framing_that_holds_after_it()
    {
        AssertDraftReadsWhatTheTruthReads(174003, leastTruth: 12);
    }

    /// <summary>
    /// Seed 174007 (no SoX chain; 22.05 kHz, 8-bit): a 1205 µs sync pulse then a 1. The setting drafted first (the
    /// most cycles in a group) times the lead-in's last cycle before the sync pulse now as a lead-in cycle, now as a 0
    /// bit, so its reading held its check on 12 of 16 blocks with a sync `medium long medium` the read path does not
    /// find (0 of the truth's 18); the setting that times the format's edge reads every block alike.
    /// </summary>
    [Fact]
    public void A_proven_reading_that_fails_on_some_blocks_gives_way_to_one_that_holds_on_more()
    {
        AssertDraftReadsWhatTheTruthReads(174007, leastTruth: 15);
    }

    /// <summary>
    /// Seed 184006 of the draft figure: short 247.4 and long 505.6 µs, a line capture at 48 kHz played 2.3 % slow, then
    /// the figure's SoX chain for that seed (a 287 Hz high-pass, an 8.6 dB dip at 514 Hz, 2.8 % slower again, 24 bits:
    /// sox(1), a general-purpose audio tool that shares no code with TapeVault). No check held inside the drafter, so
    /// every class was kept: beside noise's groups, the long pulses crowded by their neighbours made a group of their
    /// own at 414 µs, between the short (260) and the long (527) as the tape plays. The classes were marked measured,
    /// so confirming the guesses (bits, sync, framing, layout) kept that group, which took most long pulses from the
    /// long class on the read path: 4 of the truth's 21. Classes no check proves are a guess; confirmed, they are the
    /// format's own (the truth profile's two), and the lead-in class the draft measured is the confirmed class nearest it.
    /// </summary>
    [Fact]
    public void Classes_no_check_proves_are_a_guess_that_confirming_replaces()
    {
        var result = AssertDraftReadsWhatTheTruthReads(184006, leastTruth: 18,
            DraftFromCaptureSox.PrintedAt(24, "highpass", "286.7", "equalizer", "513.8331", "0.7626q", "-8.5659", "speed", "0.9716", "gain", "-0.6272"));

        // Source: the truth profile the capture was written with (RandomFormats). Classes marked measured must be as
        // many as the format's; a draft that grouped otherwise marks them a guess.
        int truthClasses = JsonNode.Parse(result.TruthJson)!["pulseWidth"]!["classes"]!.AsArray().Count;
        int drafted = JsonNode.Parse(result.DraftProfileJson!)!["pulseWidth"]!["classes"]!.AsArray().Count;
        Assert.True(drafted == truthClasses || result.Guessed.Contains("pulseWidth.classes"), $"{drafted} classes marked measured where the format has {truthClasses}");
    }

    /// <summary>
    /// Classes kept 0 and 2 of three: a cycle of class 1 (left out) now in class 0 reads otherwise, and so does a
    /// cycle of class 2 now in none; cycles of no class, or of class 1, now in none, read alike.
    /// </summary>
    [Fact]
    public void The_classes_kept_read_otherwise_only_where_a_kept_class_gains_or_loses_a_cycle()
    {
        List<int> kept = [0, 2];
        Assert.False(PulseWidthDrafter.ReadsOtherwise([0, 2, 1, -1], [0, 1, -1, -1], kept));
        Assert.True(PulseWidthDrafter.ReadsOtherwise([0, 2, 1, -1], [0, 1, 0, -1], kept));
        Assert.True(PulseWidthDrafter.ReadsOtherwise([0, 2, 1, -1], [0, -1, -1, -1], kept));
    }

    /// <summary>
    /// A sync `extra-long medium short … long` where medium (1.27 times short, a rare group no bit uses) comes once
    /// right after the long pulse: the medium cycle is the 0 bit (short) read long; a medium cycle after a shorter
    /// one, or one 1.6 times short, stays.
    /// </summary>
    [Fact]
    public void A_bit_read_long_after_the_sync_pulse_is_its_bit_class()
    {
        List<IntervalCluster> classes = [new(544e-6, 0.74, 740), new(692e-6, 0.002, 20), new(1176e-6, 0.24, 240), new(2165e-6, 0.002, 20)];
        var mapping = new BitMapping("lead-in class is 0", 0, 2);
        Assert.Equal([3, 0, 0, 0, 2], PulseWidthDrafter.BitsReadLongInSync([3, 1, 0, 0, 2], mapping, classes));
        Assert.Equal([3, 0, 1, 0, 2], PulseWidthDrafter.BitsReadLongInSync([3, 0, 1, 0, 2], mapping, classes));
        List<IntervalCluster> farther = [classes[0], new(870e-6, 0.002, 20), classes[2], classes[3]];
        Assert.Equal([3, 1, 0, 0, 2], PulseWidthDrafter.BitsReadLongInSync([3, 1, 0, 0, 2], mapping, farther));
    }

    private DraftTrialResult AssertDraftReadsWhatTheTruthReads(int seed, int leastTruth, Func<string, Random, (string Path, string Description)>? sox = null)
    {
        var result = DraftTrials.Run("pulse-width", seed, folder.Root, sox);
        output.WriteLine($"{result.Family} seed {result.Seed}: drafted {result.DraftedFamily}, {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} ({result.Written} written); guessed {string.Join(", ", result.Guessed)}; {result.Damage}; {result.Failure}");
        output.WriteLine(result.DraftJson);
        Assert.True(result.RecoveredByTruth >= leastTruth, $"the truth read {result.RecoveredByTruth}: the damage is beyond the read path, not a test of the draft");
        Assert.Equal("pulse-width", result.DraftedFamily);

        // The blocks as written are the outside reference (RandomFormats.RecoveredBlocks compares the bytes read with
        // the bytes written): the confirmed draft reads at least 95 % of what the truth reads (the figure's goal).
        Assert.True(result.RecoveredByBoth >= 0.95 * result.RecoveredByTruth, $"the confirmed draft read {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} blocks");
        return result;
    }
}
