using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Blocks;

/// <summary>
/// Bits a decoder bridged without reading stand as guesses. A checksum that holds over guesses proves only as much as
/// its false-match odds allow for that many tries; and erasures guessed as zeros can make a CRC's own codeword.
/// </summary>
public sealed class GuessedBitsTests
{
    private static readonly FormatProfile Biphase = ProfileCatalog.BuiltIn.Get("biphase-1200");

    /// <summary>Feeds <paramref name="bytes"/> to an assembler, the first <paramref name="erasedBits"/> bits as erasures, the rest read well.</summary>
    private static BlockCandidate Assemble(byte[] bytes, int erasedBits)
    {
        var output = new List<BlockCandidate>();
        var assembler = new BlockAssembler(Biphase, 0, "s0", 44_100, output);
        assembler.Begin(0, BlockStartEvidence.LeadIn);
        int bit = 0;
        for (int b = 0; b < bytes.Length; b++)
        {
            int first = assembler.DecisionCount;
            for (int k = 0; k < 8; k++, bit++)
            {
                if (bit < erasedBits)
                {
                    assembler.AddGuessedDecision();
                }
                else
                {
                    assembler.AddDecision(0.9f, 0.02f, 1);
                }
            }

            if (assembler.AddByte(bytes[b], first, framingOk: true, sample: 100 * (b + 1)))
            {
                break;
            }
        }

        return Assert.Single(output);
    }

    [Fact]
    public void An_all_zero_block_made_of_erasures_is_not_clean_though_its_crc_holds()
    {
        // Header 00 00 00 (block 0, no payload) and check 00 00: CRC-16/XMODEM has initial value 0 and no final
        // XOR (the CRC catalogue's parameters: poly 0x1021, init 0x0000, xorout 0x0000), so zeros check as zeros.
        var zeros = new byte[5];
        Assert.Equal(0u, ChecksumCatalog.Get("crc16-xmodem").Compute(zeros.AsSpan(0, 3)));

        var guessed = Assemble(zeros, erasedBits: 40);
        Assert.Equal(BlockStatus.Failed, guessed.Status);
        Assert.True(guessed.Doubts.HasFlag(BlockDoubts.TooManyGuesses), $"doubts {guessed.Doubts}");

        // Read rather than guessed, the zeros are still their check's own codeword: no evidence either (a stuck line
        // reads as zeros too).
        var read = Assemble(zeros, erasedBits: 0);
        Assert.Equal(BlockStatus.Failed, read.Status);
        Assert.True(read.Doubts.HasFlag(BlockDoubts.AllAlikeCheck), $"doubts {read.Doubts}");
    }

    [Fact]
    public void A_few_guessed_bits_under_a_crc_that_holds_still_make_a_clean_block()
    {
        var block = BlockWriter.Build(Biphase.Layout, string.Empty, 0, 7, [0x12, 0x34, 0x56, 0x78]);

        // Two guesses are four tries at a CRC-16: odds of a false match 4/65 536, well inside what it vouches for.
        var candidate = Assemble(block, erasedBits: 2);
        Assert.Equal(BlockStatus.Clean, candidate.Status);
        // Bayes: the guesses were right a quarter of the time, a wrong block passes 1 time in 65 536.
        Assert.True(candidate.Confidence > 0.999, $"confidence {candidate.Confidence}");
    }

    [Fact]
    public void Header_and_check_bytes_carry_their_own_error_odds()
    {
        var block = BlockWriter.Build(Biphase.Layout, string.Empty, 0, 7, [0x12, 0x34, 0x56, 0x78]);

        // The first 8 bits (the block number's high byte) erased; the rest read well.
        var candidate = Assemble(block, erasedBits: 8);
        Assert.Equal(3, candidate.HeaderErrorOdds.Length);
        Assert.Equal(2, candidate.ChecksumErrorOdds.Length);
        Assert.True(candidate.HeaderErrorOdds[0] > 0.99f, $"erased header byte: {candidate.HeaderErrorOdds[0]}");
        Assert.True(candidate.HeaderErrorOdds[1] < 0.05f && candidate.ChecksumErrorOdds[1] < 0.05f, $"bytes read well: {candidate.HeaderErrorOdds[1]}, {candidate.ChecksumErrorOdds[1]}");
    }
}
