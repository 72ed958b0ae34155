using System.Security.Cryptography;
using TapeVault.Core.Checksums;
using Xunit;

namespace TapeVault.Core.Tests.Checksums;

public sealed class ChecksumTests
{
    private static readonly int[] RandomLengths = [0, 1, 2, 3, 7, 8, 15, 16, 31, 63, 64, 255, 256, 1000, 4096, 65537];

    [Theory]
    // Source: reveng.sourceforge.io, "Catalogue of parametrised CRC algorithms", CRC-16/CCITT-FALSE
    // (alias CRC-16/CCITT-FALSE), check = 0x29b1.
    [InlineData("crc16-ccitt-false", 0x29B1u)]
    // Source: same catalogue, CRC-16/XMODEM, check = 0x31c3.
    [InlineData("crc16-xmodem", 0x31C3u)]
    // Source: same catalogue, CRC-32/ISO-HDLC, check = 0xcbf43926.
    [InlineData("crc32", 0xCBF43926u)]
    public void Crc_of_ascii_123456789_equals_the_catalogue_check_value(string name, uint expected)
    {
        Assert.Equal(expected, ChecksumCatalog.Get(name).Compute("123456789"u8));
    }

    [Fact]
    public void Sum8_of_ascii_123456789_is_0xDD()
    {
        // Common practice, computed by hand: bytes 0x31..0x39 are 9 * 0x30 + (1 + ... + 9)
        // = 432 + 45 = 477 = 0x1DD; modulo 256 that is 0xDD.
        Assert.Equal(0xDDu, ChecksumCatalog.Get("sum8").Compute("123456789"u8));
    }

    [Fact]
    public void Xor8_of_ascii_123456789_is_0x31()
    {
        // Common practice, computed by hand: 0x31^0x32 = 0x03, ^0x33 = 0x30, ^0x34 = 0x04, ^0x35 = 0x31,
        // ^0x36 = 0x07, ^0x37 = 0x30, ^0x38 = 0x08, ^0x39 = 0x31.
        Assert.Equal(0x31u, ChecksumCatalog.Get("xor8").Compute("123456789"u8));
    }

    [Fact]
    public void Crc32_matches_System_IO_Hashing_on_random_data_of_many_lengths()
    {
        // Source: System.IO.Hashing.Crc32 (NuGet package System.IO.Hashing), which implements
        // CRC-32/ISO-HDLC, the same parameters as our crc32.
        IBlockChecksum crc32 = ChecksumCatalog.Get("crc32");
        var random = new Random(20240611);
        foreach (int length in RandomLengths)
        {
            var data = new byte[length];
            random.NextBytes(data);
            Assert.Equal(System.IO.Hashing.Crc32.HashToUInt32(data), crc32.Compute(data));
        }
    }

    // System.IO.Hashing 10.0.15 has no CRC-16 type (only Crc32, Crc64 and the XxHash family),
    // so CRC-16/XMODEM is pinned by the catalogue check value above only.

    [Fact]
    public void Sha256_of_abc_matches_the_FIPS_180_4_example()
    {
        // Source: NIST FIPS 180-4 example "SHA256 One Block Message Sample" (message "abc").
        Assert.Equal(
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad",
            Convert.ToHexStringLower(SHA256.HashData("abc"u8)));
    }

    [Fact]
    public void Sha256_of_the_448_bit_message_matches_the_FIPS_180_4_example()
    {
        // Source: NIST FIPS 180-4 example "SHA256 Two Block Message Sample" (448-bit message).
        Assert.Equal(
            "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1",
            Convert.ToHexStringLower(SHA256.HashData("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq"u8)));
    }

    [Fact]
    public void Get_with_an_unknown_name_throws_ArgumentException_naming_it()
    {
        var ex = Assert.Throws<ArgumentException>(() => ChecksumCatalog.Get("adler32"));
        Assert.Contains("adler32", ex.Message, StringComparison.Ordinal);
        Assert.Contains("crc16-xmodem", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Names_are_case_sensitive()
    {
        Assert.False(ChecksumCatalog.TryGet("CRC32", out _));
        Assert.True(ChecksumCatalog.TryGet("crc32", out IBlockChecksum? crc32));
        Assert.Equal("crc32", crc32.Name);
    }

    [Fact]
    public void The_catalogue_lists_the_five_names_of_the_first_profile_language_first_and_each_answers_to_its_name()
    {
        Assert.Equal(["xor8", "sum8", "crc16-ccitt-false", "crc16-xmodem", "crc32"], ChecksumCatalog.Names.Take(5));
        foreach (string name in ChecksumCatalog.Names)
        {
            Assert.Equal(name, ChecksumCatalog.Get(name).Name);
        }
    }

    [Theory]
    // False-match probability of a w-byte check is 2^-(8w): a random value hits one of 2^(8w) values.
    [InlineData("xor8", 1, 1.0 / 256)]
    [InlineData("sum8", 1, 1.0 / 256)]
    [InlineData("crc16-ccitt-false", 2, 1.0 / 65536)]
    [InlineData("crc16-xmodem", 2, 1.0 / 65536)]
    [InlineData("crc32", 4, 1.0 / 4294967296)]
    public void Width_and_false_match_probability_follow_the_check_size(string name, int width, double probability)
    {
        IBlockChecksum checksum = ChecksumCatalog.Get(name);
        Assert.Equal(width, checksum.Width);
        Assert.Equal(probability, checksum.FalseMatchProbability);
    }

    [Theory]
    // Common practice: a CRC whose generator has more than one term detects every single-bit error.
    [InlineData("crc16-ccitt-false")]
    [InlineData("crc16-xmodem")]
    [InlineData("crc32")]
    public void Flipping_any_one_bit_of_a_64_byte_block_changes_the_crc(string name)
    {
        IBlockChecksum crc = ChecksumCatalog.Get(name);
        var block = new byte[64];
        new Random(64).NextBytes(block);
        uint original = crc.Compute(block);
        for (int bit = 0; bit < block.Length * 8; bit++)
        {
            block[bit / 8] ^= (byte)(1 << (bit % 8));
            Assert.NotEqual(original, crc.Compute(block));
            block[bit / 8] ^= (byte)(1 << (bit % 8));
        }
    }
}
