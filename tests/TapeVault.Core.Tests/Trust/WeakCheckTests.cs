using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Tests.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// An 8-bit sum or xor passes about one randomly damaged block in 256 (common practice: 2^-8 for an 8-bit check), so
/// with eight detector settings reading each of several passes, damaged readings that pass it are expected. Such a
/// check makes a block clean only beside other evidence: decisions that vouch for the bytes, or a second capture that
/// reads the same bytes.
/// </summary>
public sealed class WeakCheckTests
{
    private static FormatProfile With(string checksum) => Readings.BiphaseWith(checksum);

    /// <summary>A written block fed to an assembler after a lead-in and sync, each decision at <paramref name="distance"/> from its boundary with <paramref name="residual"/> from nominal.</summary>
    private static BlockCandidate Read(FormatProfile profile, float distance, float residual, int badFrame = -1) =>
        Readings.Assembled(profile, Readings.Written(profile, 3), BlockStartEvidence.LeadInAndSync, (_, _) => (distance, residual), badFrame);

    [Theory]
    [InlineData("sum8")]
    [InlineData("xor8")]
    public void A_weak_check_over_decisions_that_do_not_vouch_for_the_bytes_is_not_clean(string checksum)
    {
        // Every decision a third of the scale from nominal: under the block's own spread each one may well be
        // wrong, so only the check speaks for the bytes.
        var noisy = Read(With(checksum), 0.6f, 0.35f);

        Assert.NotEqual(BlockStatus.Clean, noisy.Status);
        Assert.True(noisy.Doubts.HasFlag(BlockDoubts.Uncorroborated), $"doubts {noisy.Doubts}");

        // Its confidence is the rate at which such readings (failed, their check holding but unproven) were right
        // on the tuning seeds, not the model's figure: one formula, through the calibration map (the profile's own curve
        // where the map has one, as the product picks it).
        Assert.Equal(ConfidenceMap.Default.Map(With(checksum).Id, FormatFamily.Biphase, ConfidenceGroup.HoldsUnproven, noisy.ModelConfidence), noisy.Confidence, 9);

        // The same decisions read well: the weak check and the margins together make it clean.
        var sure = Read(With(checksum), 0.9f, 0.02f);
        Assert.Equal(BlockStatus.Clean, sure.Status);
    }

    [Fact]
    public void A_strong_check_proves_the_same_noisy_block()
    {
        // CRC-16/XMODEM passes a random error with odds 2^-16 (CRC catalogue width 16, common practice).
        var noisy = Read(With("crc16-xmodem"), 0.6f, 0.35f);

        Assert.Equal(BlockStatus.Clean, noisy.Status);
        Assert.False(noisy.Doubts.HasFlag(BlockDoubts.Uncorroborated));
    }

    [Fact]
    public void A_weak_check_over_a_framing_error_is_not_clean_and_says_how_likely_it_is()
    {
        var slipped = Read(With("sum8"), 0.9f, 0.02f, badFrame: 20);

        Assert.NotEqual(BlockStatus.Clean, slipped.Status);
        Assert.True(slipped.Doubts.HasFlag(BlockDoubts.Uncorroborated), $"doubts {slipped.Doubts}");

        // Prior odds 0.06 that a block with one framing error is right, times 256 for a holding 8-bit check: 0.94 as
        // the model says; what it shows is the calibrated rate of such readings.
        Assert.Equal(0.06 * 256 / (1 + (0.06 * 256)), slipped.ModelConfidence, 2);
        Assert.Equal(ConfidenceMap.Default.Map(With("sum8").Id, FormatFamily.Biphase, ConfidenceGroup.HoldsUnproven, slipped.ModelConfidence), slipped.Confidence, 9);
    }

    [Fact]
    public void A_strong_check_that_holds_across_a_framing_error_is_not_clean_on_its_own()
    {
        // Thousands of damaged readings give CRC-16 (odds 2^-16 each, common practice) its chance matches; a reading
        // with a broken character is one of them until a second capture reads the same bytes. Before, such a reading
        // was clean at confidence 0.5 (an empty FSK block on a head-rise setting, benchmark seed 20263).
        var slipped = Read(With("crc16-xmodem"), 0.9f, 0.02f, badFrame: 2);

        Assert.NotEqual(BlockStatus.Clean, slipped.Status);
        Assert.True(slipped.Doubts.HasFlag(BlockDoubts.Uncorroborated), $"doubts {slipped.Doubts}");
    }

    [Fact]
    public void A_real_block_of_zeros_after_a_lead_in_and_sync_is_failed_and_no_surer_than_its_known_doubts()
    {
        // Zeros are CRC-16/XMODEM's own codeword (init 0, CRC catalogue), so the check proves nothing; begun on a lead-in
        // and sync, such a block is mostly a real run of zeros, and the decision model alone (near 0 over noisy
        // decisions) made it look like noise.
        var crc = With("crc16-xmodem");
        var profile = crc with { Layout = crc.Layout with { Checksum = crc.Layout.Checksum! with { Covers = ChecksumCoverage.Payload } } };
        var zeros = BlockWriter.Build(profile.Layout, string.Empty, 0, 3, new byte[32]);
        var output = new List<BlockCandidate>();
        var assembler = new BlockAssembler(profile, 0, "s0", 44_100, output);
        assembler.Begin(0, BlockStartEvidence.LeadInAndSync);
        for (int b = 0; b < zeros.Length; b++)
        {
            int first = assembler.DecisionCount;
            for (int k = 0; k < 8; k++)
            {
                assembler.AddDecision(0.6f, 0.35f, 1);
            }

            if (assembler.AddByte(zeros[b], first, framingOk: true, sample: 100 * (b + 1)))
            {
                break;
            }
        }

        assembler.End(100 * (zeros.Length + 1));
        var candidate = Assert.Single(output);

        Assert.Equal(BlockStatus.Failed, candidate.Status);
        Assert.True(candidate.Doubts.HasFlag(BlockDoubts.AllAlikeCheck), $"doubts {candidate.Doubts}");

        // The model counts only known doubts here (no guess, no framing doubt: 35 bytes at the unseen-byte floor).
        Assert.Equal(Math.Pow(1 - BlockScorer.UnseenByteError, zeros.Length), candidate.ModelConfidence, 6);
    }

    private static BlockCandidate Uncorroborated(FormatProfile profile, byte[] written) =>
        Readings.Of(profile, written, 2.0, 1) with { Status = BlockStatus.Failed, Doubts = BlockDoubts.Uncorroborated, Confidence = 0.99 };

    private static MergePass ThreeBlocks(FormatProfile profile, int capture, BlockCandidate middle) =>
        Readings.Pass(capture, Readings.Of(profile, Readings.Written(profile, 0), 1.0, 0), middle, Readings.Of(profile, Readings.Written(profile, 2), 3.0, 2));

    [Fact]
    public void Two_captures_that_read_the_same_bytes_under_a_weak_check_prove_the_block()
    {
        var sum8 = With("sum8");
        var block = Readings.Written(sum8, 1);

        var one = TapeMerger.Merge([ThreeBlocks(sum8, 0, Uncorroborated(sum8, block))], sum8).Blocks[1];
        var two = TapeMerger.Merge([ThreeBlocks(sum8, 0, Uncorroborated(sum8, block)), ThreeBlocks(sum8, 1, Uncorroborated(sum8, block))], sum8).Blocks[1];

        // One capture alone: kept as the likeliest content, but not clean.
        Assert.Equal(RecoveryStatus.Voted, one.Status);
        Assert.Equal(Convert.ToHexString(Readings.PayloadOf(sum8, block).AsSpan()), Convert.ToHexString(one.Payload.AsSpan()));

        // Two captures agree: clean, and surer than either.
        Assert.Equal(RecoveryStatus.Clean, two.Status);
        Assert.Equal(2, two.AgreeingCaptures);
        Assert.True(two.Confidence > 0.999, $"{two.Confidence}");
    }
}
