using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>Confidence is the probability that the payload is right: for a clean block, P(right | check holds).</summary>
public sealed class ConfidenceScoringTests
{
    private static readonly FormatProfile Biphase = ProfileCatalog.BuiltIn.Get("biphase-1200");

    /// <summary>One decision of a byte: its distance to the boundary, residual from nominal and scale 1.</summary>
    private delegate (float Distance, float Residual) DecisionOf(int byteIndex, int bit);

    private static BlockCandidate Assemble(FormatProfile profile, byte[] bytes, DecisionOf decision, BlockStartEvidence evidence = BlockStartEvidence.LeadInAndSync)
    {
        var output = new List<BlockCandidate>();
        var assembler = new BlockAssembler(profile, 0, "s0", 44_100, output);
        assembler.Begin(0, evidence);
        for (int b = 0; b < bytes.Length; b++)
        {
            int first = assembler.DecisionCount;
            for (int k = 0; k < 8; k++)
            {
                var (distance, residual) = decision(b, k);
                assembler.AddDecision(distance, residual, 1);
            }

            if (assembler.AddByte(bytes[b], first, framingOk: true, sample: 100 * (b + 1)))
            {
                break;
            }
        }

        assembler.End(100 * (bytes.Length + 1));
        return Assert.Single(output);
    }

    private static (float, float) Good(int b, int k) => (0.9f, 0.02f);

    [Fact]
    public void A_long_exact_block_whose_crc_holds_is_not_given_confidence_zero_by_heavy_tailed_decisions()
    {
        // 255 payload bytes, 2 064 decisions; one decision in ten lies near its boundary (a heavy tail the Gaussian
        // fit of the block's spread calls a coin toss), yet every bit is right and the CRC-16 holds. A wrong block
        // passes a CRC-16 1 time in 65 536 (2^-16); a reading this plausible is right far more often than that.
        var payload = new byte[255];
        new Random(3).NextBytes(payload);
        var block = BlockWriter.Build(Biphase.Layout, string.Empty, 0, 4, payload);

        var candidate = Assemble(Biphase, block, (b, k) => ((b * 8) + k) % 10 == 0 ? (0.12f, 0.88f) : (0.9f, 0.1f));

        Assert.Equal(BlockStatus.Clean, candidate.Status);
        Assert.Equal(payload, candidate.Payload.ToArray());
        Assert.True(candidate.Confidence >= 0.99, $"clean exact block at confidence {candidate.Confidence}");
    }

    [Fact]
    public void A_failed_block_does_not_claim_its_payload_is_right_because_a_header_decision_was_doubtful()
    {
        // A payload byte read wrong with confident decisions (a slip no margin shows) and one doubtful decision in
        // the header: the failed check says some byte is wrong, and nothing says it is the header's.
        var payload = new byte[64];
        new Random(4).NextBytes(payload);
        var block = BlockWriter.Build(Biphase.Layout, string.Empty, 0, 4, payload);
        block[Biphase.Layout.HeaderBytes + 10] ^= 0x04;

        var candidate = Assemble(Biphase, block, (b, k) => b == 0 && k == 3 ? (0.05f, 0.95f) : (0.9f, 0.02f));

        Assert.Equal(BlockStatus.Failed, candidate.Status);
        Assert.True(candidate.Doubts.HasFlag(BlockDoubts.ChecksumMismatch));
        Assert.True(candidate.ModelConfidence <= 0.5, $"failed block at model confidence {candidate.ModelConfidence}");
    }

    [Fact]
    public void A_failed_block_with_no_doubtful_byte_puts_the_error_anywhere_and_is_likely_wrong()
    {
        var payload = new byte[64];
        new Random(6).NextBytes(payload);
        var block = BlockWriter.Build(Biphase.Layout, string.Empty, 0, 4, payload);
        block[Biphase.Layout.HeaderBytes + 30] ^= 0x80;

        var candidate = Assemble(Biphase, block, Good);

        // Every byte equally likely the wrong one: header and payload (which must both be right for the block to
        // be) are right only when the error is one of the 2 check bytes of 69, about 3 times in 100.
        Assert.Equal(BlockStatus.Failed, candidate.Status);
        Assert.InRange(candidate.ModelConfidence, 0.015, 0.06);
    }

    [Fact]
    public void An_unchecked_stream_never_shows_certainty_it_has_no_evidence_for()
    {
        var kcs = ProfileCatalog.BuiltIn.Get("kcs-300");
        Assert.True(kcs.Layout.IsStream && kcs.Layout.Checksum is null);
        var text = "THE QUICK BROWN FOX JUMPS OVER THE LAZY DOG 0123456789"u8.ToArray();

        var candidate = Assemble(kcs, text, Good, BlockStartEvidence.LeadIn);

        Assert.Equal(BlockStatus.Unchecked, candidate.Status);
        Assert.Equal(text, candidate.Payload.ToArray());
        Assert.True(candidate.Confidence < 1, "an unchecked block shows confidence 1");
        Assert.True(candidate.Confidence > 0.9, $"a well-read short stream at {candidate.Confidence}");
        Assert.All(candidate.ByteErrorOdds, e => Assert.True(e >= BlockScorer.UnseenByteError * 0.999, $"byte odds {e}"));
    }

    [Fact]
    public void A_stream_begun_without_a_lead_in_trusts_its_first_characters_less()
    {
        var kcs = ProfileCatalog.BuiltIn.Get("kcs-300");
        var text = "A STREAM THAT MAY HAVE LOST ITS START"u8.ToArray();

        var withLeadIn = Assemble(kcs, text, Good, BlockStartEvidence.LeadIn);
        var without = Assemble(kcs, text, Good, BlockStartEvidence.None);

        // The characters nearest an unmarked start may have been framed on a false start bit.
        Assert.Equal(BlockStatus.Unchecked, without.Status);
        Assert.True(without.Doubts.HasFlag(BlockDoubts.NoStartEvidence));
        Assert.True(without.ByteErrorOdds[0] >= BlockScorer.DoubtfulFrameError && without.ByteErrorOdds[1] >= BlockScorer.DoubtfulFrameError);
        Assert.True(without.ByteErrorOdds[5] < 0.01f, $"a later character's odds {without.ByteErrorOdds[5]}");
        Assert.True(without.ModelConfidence < 0.6 * withLeadIn.ModelConfidence, $"{without.ModelConfidence} vs {withLeadIn.ModelConfidence}");
        Assert.True(without.Confidence <= withLeadIn.Confidence, $"calibrated {without.Confidence} vs {withLeadIn.Confidence}");
    }
}
