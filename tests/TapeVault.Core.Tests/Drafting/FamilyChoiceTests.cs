using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// The family a draft proposes, on captures of the tone families whose half-cycle runs mislead the interval survey
/// (a low-passed lower tone read in runs of 1, an alternating preamble that looks like two pulse classes), and on
/// biphase after an alternating preamble that the survey's runs made look like another family. Ground
/// truth is the profile the capture was written with and the blocks written (<see cref="DraftTrials"/>); the
/// confirmation replaces only the fields the draft marked as guesses, so a draft of the wrong family reads nothing.
/// The claim: the draft proposes the family written and, confirmed, reads at least nine tenths of what the truth
/// reads. Seeds from the draft figure's tuning range (below 20000), each failing before every family was drafted
/// and checked.
/// </summary>
public sealed class FamilyChoiceTests(OutsideTempFolder folder, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    /// <summary>
    /// Tuning seed 10003: fsk-sync at 1023 baud, a head-amplifier capture through a 7.1 kHz deck low-pass, 22.05 kHz.
    /// The survey finds the lower tone's half cycles in runs of 1 and scored FSK 0; the draft was an unproven
    /// pulse-width reading with the family a guess.
    /// </summary>
    [Fact]
    public void A_low_passed_tone_capture_is_drafted_as_fsk()
    {
        var result = DraftTrials.Run("fsk-sync", 10003, folder.Root);
        AssertDraftedAs(result, "fsk", truthAtLeast: 10);
    }

    /// <summary>
    /// Tuning seed 10000: fsk-sync through a SoX effect chain (a band-pass, a gain, a new sample rate: sox(1), a
    /// general-purpose audio tool that shares no code with TapeVault) on top of the drawn damage (a head-amplifier
    /// capture at 0.94 of nominal speed, 32 kHz). The draft was an unproven pulse-width reading.
    /// </summary>
    [Fact]
    public void A_tone_capture_through_sox_is_drafted_as_fsk()
    {
        var result = DraftTrials.Run("fsk-sync", 10000, folder.Root, DraftFromCaptureSox.Chain);
        AssertDraftedAs(result, "fsk", truthAtLeast: 10);
    }

    /// <summary>
    /// Tuning seed 10005: fsk at 812 baud, tones of two and four cycles a bit, a line-output capture 5 % fast. Half
    /// cycles between the tones (a change of tone through the deck) break the tones' runs, which then step by 5 and 3
    /// half cycles: read as one cycle of the lower tone a bit, no framing held, and the draft was an unproven
    /// pulse-width reading. The lower tone's cycles a bit are now tried until one frames cleanly.
    /// </summary>
    [Fact]
    public void Tones_whose_runs_mislead_the_baud_are_drafted_at_the_baud_that_frames()
    {
        var result = DraftTrials.Run("fsk", 10005, folder.Root);
        AssertDraftedAs(result, "fsk", truthAtLeast: 5);
    }

    /// <summary>
    /// Tuning seed 10007: fsk at 855 baud, a head-amplifier capture with hum, 48 kHz. The second largest group of half
    /// cycles (near 2.9 kHz) is no tone, and the lower tone's group was never paired with the mark's: FSK scored 0 and
    /// the draft was an unproven pulse-width reading. The pairs of the main groups that the spectrum shows are now tried.
    /// </summary>
    [Fact]
    public void A_tone_pair_behind_a_group_that_is_no_tone_is_drafted_as_fsk()
    {
        var result = DraftTrials.Run("fsk", 10007, folder.Root);
        AssertDraftedAs(result, "fsk", truthAtLeast: 10);
    }

    /// <summary>
    /// Tuning seed 12003: fsk-sync at 811 baud (a mark of two cycles a bit at 1622 Hz, a space of one cycle at 811 Hz),
    /// a head-amplifier capture through a 5.3 kHz deck low-pass, 22.05 kHz. The half cycles at each change of tone
    /// make a group near 1.08 kHz that holds more intervals than the space tone's, the spectrum shows it, and the pair
    /// it makes with the mark was the only one tried: at the bauds that pair allows (550 and under) nothing framed, and
    /// the draft was biphase with the family a guess, reading none of the truth's 12 blocks. The next pairs of main
    /// groups are now tried where the first frames nothing cleanly.
    /// </summary>
    [Fact]
    public void Tones_behind_a_group_of_half_cycles_at_the_changes_of_tone_are_drafted_as_fsk()
    {
        var result = DraftTrials.Run("fsk-sync", 12003, folder.Root);
        AssertDraftedAs(result, "fsk", truthAtLeast: 10);
    }

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
        AssertDraftedAs(result, "biphase", truthAtLeast: 10);
        Assert.DoesNotContain("family", result.Guessed);
    }

    /// <summary>
    /// Tuning seed 10002: biphase after a preamble of alternating bits, a line-output capture clipped at +12 dB drive,
    /// then the draft figure's SoX chain for that seed (a 294 Hz high-pass, a dip at 3.2 kHz, inversion, a gain, 96 kHz,
    /// dithered to 16 bits: sox(1), a general-purpose audio tool that shares no code with TapeVault). The crossing after
    /// a whole cell reads a quarter cell late, so a half then a whole read as two lengths between them, and the
    /// drafter's walk, which took each interval's class, broke every block within its first bits: no check was found,
    /// biphase scored 0.1 and an unproven pulse-width draft that read none of the truth's 8 blocks was proposed. The
    /// walk now keeps a cell clock, as the read path's decoder does.
    /// </summary>
    [Fact]
    public void Biphase_whose_transitions_read_a_quarter_cell_late_is_drafted_as_biphase()
    {
        var result = DraftTrials.Run("biphase-alternating", 10002, folder.Root,
            DraftFromCaptureSox.Printed("highpass", "294.2222", "equalizer", "3170.1285", "0.6579q", "-11.8819", "vol", "-1", "gain", "-7.2354", "rate", "96000", "dither"));
        AssertDraftedAs(result, "biphase", truthAtLeast: 5);
    }

    /// <summary>
    /// Tuning seed 13002: fsk-sync at 817 baud after a leader of 0x55 characters (8E1), a head-amplifier capture 1.5 %
    /// slow, then the draft figure's SoX chain for that seed (a band-pass, a one-pole low-pass, inversion, a gain,
    /// dithered to 16 bits: sox(1), a general-purpose audio tool that shares no code with TapeVault). The trial
    /// decode that framed best misread one bit of one block's sync characters, which its check does not cover, so the
    /// sync was not alike in every block whose check held: no leader was proposed, the draft was an unchecked stream
    /// with the baud a guess, and, confirmed, it did not load (tones measured 1.5 % slow, the baud nominal). The sync
    /// is now the characters three in four of those blocks share.
    /// </summary>
    [Fact]
    public void A_character_leader_whose_sync_one_block_misread_is_drafted_with_its_check()
    {
        var result = DraftTrials.Run("fsk-sync", 13002, folder.Root,
            DraftFromCaptureSox.Printed("sinc", "352.5824-9922.5", "lowpass", "-1", "9031.0348", "vol", "-1", "gain", "-7.1435", "dither"));
        AssertDraftedAs(result, "fsk", truthAtLeast: 10);
        Assert.DoesNotContain("layout", result.Guessed);
    }

    /// <summary>
    /// Tuning seed 14009 (an odd seed: no SoX chain): biphase at 417 µs a cell after a preamble of alternating bits, a
    /// CRC-16 over header and payload, a line-output capture 4 % slow at 44.1 kHz. The first survey (a setting counting
    /// both edges of a head-amplifier chain) reads the halves in runs of one, so biphase scored 0.1 and its draft there
    /// found no check: the family was never drafted through the next survey, whose setting reads the check holding on
    /// 12 of 13 blocks, and an unproven pulse-width draft with the family a guess read none of the truth's 13.
    /// </summary>
    [Fact]
    public void Biphase_whose_first_survey_finds_no_check_is_drafted_through_the_survey_that_finds_it()
    {
        var result = DraftTrials.Run("biphase-alternating", 14009, folder.Root);
        AssertDraftedAs(result, "biphase", truthAtLeast: 10);
        Assert.DoesNotContain("family", result.Guessed);
    }

    /// <summary>
    /// Seed 152009 (an odd seed: no SoX chain; an earlier held-out seed, examined here and no longer held out): biphase
    /// after a lead-in of zeros, 335 µs a cell, a head-amplifier capture at 32 kHz, 1.3 % slow, SNR 18 dB. The survey
    /// whose intervals group best (both edges of the line chain) has a group at one and a half halves between the
    /// halves and the wholes, which breaks the halves' pairs into odd runs: biphase fits it at 0.1, and its reading
    /// there finds no check. The next survey (both edges of the head chain) fits biphase at 0.85, but its reading found
    /// no check either, so the first reading and its fit were kept, below pulse-width's 0.3: an unproven pulse-width
    /// draft with the family a guess read none of the truth's 10. Where no reading is proven, the one through the
    /// survey the family fits best is drafted.
    /// </summary>
    [Fact]
    public void Biphase_whose_first_survey_blurs_the_halves_pairs_is_drafted_by_the_survey_that_shows_them()
    {
        var result = DraftTrials.Run("biphase", 152009, folder.Root);
        AssertDraftedAs(result, "biphase", truthAtLeast: 8);
    }

    /// <summary>
    /// Tuning seed 13007 (an odd seed: no SoX chain): FSK at 1187 baud, 8E2, a leader of 0x16 characters and three
    /// sync characters the check (CRC-16/CCITT-FALSE of the CRC catalogue) leaves out, a line-output capture 4 % slow.
    /// The FSK reading's blocks hold a check of the catalogue two bytes in, and the two bytes before it read 16 16 in
    /// every block: drafted as the sync, which no profile may expect (one value repeated), so the FSK draft could not
    /// load and a pulse-width draft with the family a guess read none of the truth's 14.
    /// </summary>
    [Fact]
    public void Bytes_of_one_value_before_the_check_are_no_sync_and_leave_the_fsk_draft_loadable()
    {
        var result = DraftTrials.Run("fsk-sync", 13007, folder.Root);
        AssertDraftedAs(result, "fsk", truthAtLeast: 10);
        Assert.DoesNotContain("family", result.Guessed);
    }

    /// <summary>
    /// Tuning seed 16007 (an odd seed: no SoX chain): fsk-sync from a head amplifier at a level of 0.065 with 50 Hz hum
    /// of 0.025, 88.2 kHz. The setting whose intervals grouped best heard the hum alone (one group of long half
    /// cycles), and the draft stopped there: "hold no groups of interval lengths", none of the truth's 9.
    /// </summary>
    [Fact]
    public void A_faint_capture_under_hum_is_drafted_through_a_setting_that_hears_the_tones()
    {
        var result = DraftTrials.Run("fsk-sync", 16007, folder.Root);
        AssertDraftedAs(result, "fsk", truthAtLeast: 8);
    }

    /// <summary>
    /// Tuning seed 18004: fsk-sync at 801 baud (a mark of two cycles a bit, a space of one), 8E2 after a leader of 0xAA
    /// characters, a line-output capture 3.6 % fast, then the draft figure's SoX chain for that seed (a band-pass, a
    /// gain, 96 kHz, dithered: sox(1), a general-purpose audio tool that shares no code with TapeVault). The tones'
    /// groups of half cycles measure 1632 Hz and 851 Hz, 782 Hz apart, while the runs time the bit at 833 baud; the
    /// baud was cut to the tones' distance, 6 % slow, so that characters of twelve bits spaced like eleven and one stop
    /// bit was drafted as measured: confirmed, the draft read none of the truth's 12 blocks.
    /// </summary>
    [Fact]
    public void Tones_measured_nearer_than_the_baud_the_runs_time_keep_that_baud_and_the_stop_bits_it_spaces()
    {
        var result = DraftTrials.Run("fsk-sync", 18004, folder.Root, DraftFromCaptureSox.Printed("sinc", "308.3968-7416.904", "gain", "-4.5009", "rate", "96000", "dither", "-s"));
        AssertDraftedAs(result, "fsk", truthAtLeast: 10);
        Assert.DoesNotContain("framing.stopBits", result.Guessed);
    }

    /// <summary>
    /// Seed 166007 (an odd seed: no SoX chain; an earlier held-out seed, examined here and no longer held out): fsk at
    /// 1186 baud, a mark of four cycles a bit and a space of two, 8E2, a CRC-16 over header and payload, a line-output
    /// capture 5.5 % fast at 44.1 kHz, SNR 36 dB. The tones' runs break (the survey steps them by 5 and 1 half cycles),
    /// so FSK scored under pulse-width; the FSK reading framed 91 % of 1650 characters (8E1: random bits fit a decided
    /// parity and stop bit a quarter of the time), too few for the clean framing that proves a stream, and its single
    /// setting's bytes held no block's check. The pulse-width reading framed nothing and found no check, yet it was
    /// drafted on the survey's fit: confirmed, it read none of the truth's 11.
    /// </summary>
    [Fact]
    public void Tones_whose_framing_holds_above_chance_are_drafted_as_fsk_before_a_pulse_reading_that_holds_nothing()
    {
        var result = DraftTrials.Run("fsk", 166007, folder.Root);
        AssertDraftedAs(result, "fsk", truthAtLeast: 8);
    }

    /// <summary>
    /// Seed 70001 (an odd seed: no SoX chain; an earlier held-out seed, examined before): three-class pulse pairs with a marker before each byte and an odd
    /// parity bit after, an XOR check. A bit is two pulses of one length either way round (short+medium or
    /// medium+short), so the signal has one bit time, and an FSK reading at 956 baud framed 99.6 % of 1349 characters:
    /// the markers and parity bits around each byte give it start, parity and stop bits that hold. That clean framing
    /// came before the pulse-width reading, whose XOR check held on every one of its 4 blocks (one block in sixteen by
    /// chance), and an FSK stream was drafted with the family a guess.
    /// </summary>
    [Fact]
    public void Pulse_pairs_whose_check_holds_on_every_block_are_not_drafted_as_a_framed_fsk_stream()
    {
        var result = DraftTrials.Run("three-class-pairs", 70001, folder.Root);
        AssertDraftedAs(result, "pulse-width", truthAtLeast: 3);
    }

    /// <summary>
    /// The truth profile read at least <paramref name="truthAtLeast"/> blocks (else the damage, not the draft, is
    /// tested), the draft is of <paramref name="family"/>, and once confirmed it reads 90 % of the truth's blocks.
    /// </summary>
    private void AssertDraftedAs(DraftTrialResult result, string family, int truthAtLeast)
    {
        Report(result);
        Assert.True(result.RecoveredByTruth >= truthAtLeast, $"the truth read {result.RecoveredByTruth}: the damage is beyond the read path, not a test of the draft");
        Assert.Equal(family, result.DraftedFamily);
        Assert.True(result.RecoveredByBoth >= 0.9 * result.RecoveredByTruth, $"the confirmed draft read {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} blocks");
    }

    private void Report(DraftTrialResult result) =>
        output.WriteLine($"{result.Family} seed {result.Seed}: drafted {result.DraftedFamily}, {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} ({result.Written} written); guessed {string.Join(", ", result.Guessed)}; {result.Damage}; {result.Failure}");
}
