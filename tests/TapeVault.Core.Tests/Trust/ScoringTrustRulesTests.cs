using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// A block is clean only on the format's own evidence: a start the format marks (lead-in or sync) and a check value
/// that holds over bytes that prove it. A check that all-alike bytes satisfy for free proves nothing about framing.
/// </summary>
public sealed class ScoringTrustRulesTests
{
    private static FormatProfile BiphaseWith(string checksum) => Readings.BiphaseWith(checksum);

    /// <summary>Feeds <paramref name="bytes"/> to an assembler after a start on <paramref name="evidence"/>, every bit read well.</summary>
    internal static BlockCandidate Assemble(FormatProfile profile, byte[] bytes, BlockStartEvidence evidence, int misframedByte = -1) =>
        Readings.Assembled(profile, bytes, evidence, (_, _) => (0.9f, 0.02f), misframedByte);

    [Theory]
    [InlineData("xor8")]
    [InlineData("sum8")]
    [InlineData("crc16-xmodem")]
    public void A_block_of_alike_bytes_read_across_a_framing_error_is_no_likelier_right_than_the_framing_error_allows(string checksum)
    {
        var profile = BiphaseWith(checksum);
        var check = ChecksumCatalog.Get(checksum);

        // Zeros check as zero for free: xor8 and sum8 by their definitions (common practice), CRC-16/XMODEM by its init
        // and xorout of 0x0000 (CRC catalogue, reveng). A start or stop bit out of place in the second byte says a
        // character was misread there; the check, holding over alike bytes, cannot say the reading is right after all.
        var zeros = new byte[profile.Layout.HeaderBytes + check.Width];
        Assert.Equal(0u, check.Compute(zeros.AsSpan(0, profile.Layout.HeaderBytes)));

        var candidate = Assemble(profile, zeros, BlockStartEvidence.LeadInAndSync, misframedByte: 1);

        Assert.NotEqual(BlockStatus.Clean, candidate.Status);
        Assert.True(candidate.Doubts.HasFlag(BlockDoubts.AllAlikeCheck | BlockDoubts.FramingErrors), $"doubts {candidate.Doubts}");
        double odds = BlockScorer.FramingSlipPriorOdds;
        Assert.True(candidate.ModelConfidence <= odds / (1 + odds), $"model {candidate.ModelConfidence}");
    }

    [Theory]
    [InlineData("xor8")]
    [InlineData("sum8")]
    [InlineData("crc16-xmodem")]
    public void A_block_of_zeros_whose_check_is_zero_for_free_is_not_clean(string checksum)
    {
        var profile = BiphaseWith(checksum);
        var check = ChecksumCatalog.Get(checksum);

        // The phantom of a stuck line: every byte zero, so block 0, length 0 and a check of zero. xor8 and sum8 of
        // zeros are 0 by their definitions (common practice); CRC-16/XMODEM has init 0x0000 and xorout 0x0000 in the
        // CRC catalogue (reveng), so zeros check as 0x0000.
        var zeros = new byte[profile.Layout.HeaderBytes + check.Width];
        Assert.Equal(0u, check.Compute(zeros.AsSpan(0, profile.Layout.HeaderBytes)));

        var candidate = Assemble(profile, zeros, BlockStartEvidence.LeadInAndSync);

        Assert.NotEqual(BlockStatus.Clean, candidate.Status);
        Assert.True(candidate.Doubts.HasFlag(BlockDoubts.AllAlikeCheck), $"doubts {candidate.Doubts}");

        // Begun on a lead-in and sync, the same bytes are also an empty file's block 0: the model counts only what is
        // known to be doubtful in them (here nothing beyond the unseen-byte floor), not the check; begun on nothing,
        // nothing vouches for them (EmptyClaimScoringTests).
        Assert.Equal(Math.Pow(1 - BlockScorer.UnseenByteError, zeros.Length), candidate.ModelConfidence, 9);
        Assert.Equal(0, Assemble(profile, zeros, BlockStartEvidence.None).Confidence);
    }

    [Theory]
    [InlineData("xor8")]
    [InlineData("sum8")]
    [InlineData("crc16-xmodem")]
    public void A_payload_of_zeros_under_a_check_that_zeros_satisfy_is_not_clean(string checksum)
    {
        // The check covers only the payload here, so a real header cannot vouch for a run of zeros after it.
        var baseProfile = BiphaseWith(checksum);
        var profile = baseProfile with { Layout = baseProfile.Layout with { Checksum = baseProfile.Layout.Checksum! with { Covers = ChecksumCoverage.Payload } } };
        var block = BlockWriter.Build(profile.Layout, string.Empty, 0, 3, new byte[32]);
        var check = ChecksumCatalog.Get(checksum);
        Assert.Equal(0u, check.Compute(new byte[32]));

        var candidate = Assemble(profile, block, BlockStartEvidence.LeadInAndSync);

        Assert.Equal(BlockStatus.Failed, candidate.Status);
        Assert.True(candidate.Doubts.HasFlag(BlockDoubts.AllAlikeCheck), $"doubts {candidate.Doubts}");

        // Not proven, and no surer than what is known to be doubtful in it (no check adds to it): begun on a lead-in
        // and sync, such blocks are mostly real runs of zeros (149 of 151 on the trust benchmark's biphase tapes).
        // The model counts only those known doubts (none here beyond the unseen-byte floor).
        Assert.Equal(Math.Pow(1 - BlockScorer.UnseenByteError, block.Length), candidate.ModelConfidence, 6);
    }

    [Fact]
    public void The_same_zeros_under_a_crc_with_a_non_zero_initial_value_are_evidence_and_clean()
    {
        // CRC-16/CCITT-FALSE in the CRC catalogue (reveng): poly 0x1021, init 0xFFFF, xorout 0x0000,
        // check 0x29B1 over "123456789". Its init makes the check of zeros non-zero, so the check bytes are not the
        // zeros' own codeword: the block's bytes are not all alike.
        var check = ChecksumCatalog.Get("crc16-ccitt-false");
        Assert.Equal(0x29B1u, check.Compute("123456789"u8));
        var profile = BiphaseWith("crc16-ccitt-false");
        var payload = new byte[32];
        var block = BlockWriter.Build(profile.Layout, string.Empty, 0, 0, payload);
        Assert.NotEqual(0u, check.Compute(block.AsSpan(0, block.Length - 2)));

        var candidate = Assemble(profile, block, BlockStartEvidence.LeadIn);

        Assert.Equal(BlockStatus.Clean, candidate.Status);
        Assert.Equal(BlockDoubts.None, candidate.Doubts);
        Assert.Equal(payload, candidate.Payload.ToArray());
        Assert.True(candidate.Confidence > 0.99, $"confidence {candidate.Confidence}");
    }

    [Fact]
    public void A_block_begun_on_no_evidence_is_never_clean_though_its_crc_holds()
    {
        var profile = ProfileCatalog.BuiltIn.Get("biphase-1200");
        var payload = new byte[40];
        new Random(5).NextBytes(payload);
        var block = BlockWriter.Build(profile.Layout, string.Empty, 0, 2, payload);

        var proven = Assemble(profile, block, BlockStartEvidence.LeadInAndSync);
        var unproven = Assemble(profile, block, BlockStartEvidence.None);

        Assert.Equal(BlockStatus.Clean, proven.Status);
        Assert.Equal(BlockStatus.Failed, unproven.Status);
        Assert.True(unproven.Doubts.HasFlag(BlockDoubts.NoStartEvidence), $"doubts {unproven.Doubts}");
        Assert.False(unproven.Doubts.HasFlag(BlockDoubts.ChecksumMismatch));
        Assert.True(unproven.Confidence < proven.Confidence, $"unproven {unproven.Confidence} against proven {proven.Confidence}");
    }

    [Fact]
    public void The_old_begin_means_a_lead_in_and_sync_or_lead_in_alone_may_make_a_clean_block()
    {
        var profile = ProfileCatalog.BuiltIn.Get("biphase-1200");
        var block = BlockWriter.Build(profile.Layout, string.Empty, 0, 2, [1, 2, 3, 4, 5]);
        foreach (var evidence in new[] { BlockStartEvidence.LeadIn, BlockStartEvidence.Sync, BlockStartEvidence.LeadInAndSync })
        {
            Assert.Equal(BlockStatus.Clean, Assemble(profile, block, evidence).Status);
        }

        var output = new List<BlockCandidate>();
        var assembler = new BlockAssembler(profile, 0, "s0", 44_100, output);
        assembler.Begin(0, BlockStartEvidence.LeadIn);
        foreach (byte value in block)
        {
            int first = assembler.DecisionCount;
            for (int k = 0; k < 8; k++)
            {
                assembler.AddDecision(0.9f, 0.02f, 1);
            }

            assembler.AddByte(value, first, framingOk: true, sample: 0);
        }

        Assert.Equal(BlockStatus.Clean, Assert.Single(output).Status);
    }

    [Fact]
    public void Guessed_decisions_count_as_guesses_and_enough_of_them_unmake_a_clean_block()
    {
        var profile = ProfileCatalog.BuiltIn.Get("biphase-1200");
        var payload = new byte[16];
        new Random(9).NextBytes(payload);
        var block = BlockWriter.Build(profile.Layout, string.Empty, 0, 1, payload);
        BlockCandidate WithGuesses(int guesses)
        {
            var output = new List<BlockCandidate>();
            var assembler = new BlockAssembler(profile, 0, "s0", 44_100, output);
            assembler.Begin(0, BlockStartEvidence.LeadInAndSync);
            int bit = 0;
            foreach (byte value in block)
            {
                int first = assembler.DecisionCount;
                for (int k = 0; k < 8; k++, bit++)
                {
                    if (bit >= 8 && bit < 8 + guesses)
                    {
                        assembler.AddGuessedDecision();
                    }
                    else
                    {
                        assembler.AddDecision(0.9f, 0.02f, 1);
                    }
                }

                Assert.Equal(first + 8, assembler.DecisionCount);
                assembler.AddByte(value, first, framingOk: true, sample: 0);
            }

            return Assert.Single(output);
        }

        // A CRC-16 passes a wrong block 1 time in 65 536 (2^-16); with g guesses there are 2^g ways to guess, so two
        // guesses leave odds of 2^-14 and ten leave 2^-6 = 1/64, beyond the 1 % a clean block may rest on.
        var two = WithGuesses(2);
        var ten = WithGuesses(10);
        Assert.Equal(BlockStatus.Clean, two.Status);
        Assert.Equal(BlockStatus.Failed, ten.Status);
        Assert.True(ten.Doubts.HasFlag(BlockDoubts.TooManyGuesses), $"doubts {ten.Doubts}");
        Assert.Equal(0, two.MinimumMargin);
    }
}
