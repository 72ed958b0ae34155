using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// A failed reading whose header claims no payload. Its empty payload is right exactly when its header is (the
/// length field read as written, under the block's own number), so its confidence is the chance that the header is
/// right, by the same per-byte model as any other reading: neither 0 (an empty file's block read after its lead-in
/// and sync is mostly right) nor 1. A stretch of equal bytes begun on no evidence is the phantom of a stuck line or a
/// steady tone: nothing vouches for it, and it stays at 0 whatever its length field says and whatever the map says.
/// </summary>
public sealed class EmptyClaimScoringTests
{
    private static readonly FormatProfile Biphase = ProfileCatalog.BuiltIn.Get("biphase-1200");

    /// <summary>log P(right) of one byte that no margin doubts: no surer than the unseen-byte floor.</summary>
    private static readonly double FloorLog = Math.Log(1 - BlockScorer.UnseenByteError);

    /// <summary>Block 0 of an empty file: header 00 00 (block 0) 00 (length 0), CRC-16/XMODEM 00 00.</summary>
    private static byte[] EmptyBlockZero()
    {
        // CRC-16/XMODEM in the CRC catalogue (reveng): poly 0x1021, init 0x0000, xorout 0x0000, check 0x31C3 over
        // "123456789"; with init and xorout 0 the check of zeros is zero, so the whole block is zeros.
        var crc = ChecksumCatalog.Get("crc16-xmodem");
        Assert.Equal(0x31C3u, crc.Compute("123456789"u8));
        var block = BlockWriter.Build(Biphase.Layout, string.Empty, 0, 0, []);
        Assert.Equal(new byte[Biphase.Layout.HeaderBytes + crc.Width], block);
        return block;
    }

    [Fact]
    public void An_empty_block_of_zeros_read_after_its_lead_in_and_sync_is_as_likely_right_as_its_header()
    {
        var block = EmptyBlockZero();

        var read = ScoringTrustRulesTests.Assemble(Biphase, block, BlockStartEvidence.LeadInAndSync);

        // Not clean: a check that zeros satisfy for free proves nothing.
        Assert.Equal(BlockStatus.Failed, read.Status);
        Assert.True(read.Doubts.HasFlag(BlockDoubts.AllAlikeCheck), $"doubts {read.Doubts}");
        Assert.True(read.Payload.IsEmpty);

        // But it is what an empty file's block looks like: the model counts only what is known to be doubtful in its
        // five bytes (none beyond the unseen-byte floor), and the map turns that into a rate well above 0.
        Assert.Equal(Math.Exp(5 * FloorLog), read.ModelConfidence, 9);
        Assert.True(read.Confidence > 0.5, $"confidence {read.Confidence}");
    }

    [Fact]
    public void An_empty_block_whose_check_bytes_were_misread_keeps_the_odds_that_its_header_is_right()
    {
        // Block 7, length 0: header 00 07 00, then its CRC-16/XMODEM, here with one bit of the check flipped.
        var block = BlockWriter.Build(Biphase.Layout, string.Empty, 0, 7, []);
        block[^1] ^= 0x01;

        var read = ScoringTrustRulesTests.Assemble(Biphase, block, BlockStartEvidence.LeadInAndSync);

        Assert.Equal(BlockStatus.Failed, read.Status);
        Assert.True(read.Doubts.HasFlag(BlockDoubts.ChecksumMismatch), $"doubts {read.Doubts}");
        Assert.True(read.Payload.IsEmpty);

        // Bayes given the mismatch: the three header bytes right and the error in the two check bytes, against any
        // byte wrong. With every byte at the unseen-byte floor that is 0.40; the decisions' own (Gaussian) odds take a
        // little more off each byte. Neither 0 nor 1.
        double floorOnly = BlockScorer.PayloadRightGivenMismatch(3 * FloorLog, 2 * FloorLog);
        Assert.Equal(0.40, floorOnly, 2);
        Assert.InRange(read.ModelConfidence, 0.3, floorOnly);
        Assert.True(read.Confidence > 0.05, $"confidence {read.Confidence}");
    }

    [Theory]
    [InlineData(BlockStartEvidence.None)]
    [InlineData(BlockStartEvidence.SelfAligned)]
    public void A_stretch_of_zeros_begun_on_no_mark_of_a_block_scores_nothing(BlockStartEvidence evidence)
    {
        // The same five zero bytes with no lead-in or sync before them: a stuck line reads so, as does a run of zero
        // bytes inside a block after a loss of signal.
        var phantom = ScoringTrustRulesTests.Assemble(Biphase, EmptyBlockZero(), evidence);

        Assert.Equal(BlockStatus.Failed, phantom.Status);
        Assert.True(phantom.Doubts.HasFlag(BlockDoubts.NoStartEvidence | BlockDoubts.AllAlikeCheck), $"doubts {phantom.Doubts}");
        Assert.Equal(0, phantom.ModelConfidence);
        Assert.Equal(0, phantom.Confidence);
    }

    [Fact]
    public void A_map_whose_lowest_step_is_high_lifts_a_real_empty_block_but_never_a_phantom()
    {
        // A map fitted on tapes without phantoms: every unproven reading of the family right 90 % of the time.
        var map = ConfidenceMap.Parse("""
            { "provenance": "test", "curves": { "biphase/HoldsUnproven": { "readings": 1000, "x": [0, 1], "y": [0.9, 0.9] } } }
            """);
        var scorer = new BlockScorer(Biphase.Layout, FormatFamily.Biphase, map);
        var zeros = EmptyBlockZero();

        var real = Score(scorer, zeros, BlockStartEvidence.LeadInAndSync);
        var phantom = Score(scorer, zeros, BlockStartEvidence.None);

        Assert.Equal(0.9, real.Confidence, 9);
        Assert.Equal(0, phantom.Confidence);
    }

    private static BlockScore Score(BlockScorer scorer, byte[] bytes, BlockStartEvidence evidence)
    {
        var decisions = new DecisionLog();
        var first = new int[bytes.Length];
        for (int b = 0; b < bytes.Length; b++)
        {
            first[b] = decisions.Count;
            for (int k = 0; k < 8; k++)
            {
                decisions.Add(0.9f, 0.02f, 1);
            }
        }

        return scorer.Score(bytes, first, new float[bytes.Length], decisions, framingErrors: 0, guessedDecisions: 0, evidence, truncated: false);
    }
}
