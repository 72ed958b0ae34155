using TapeVault.Core.Checksums;
using Xunit;

namespace TapeVault.Core.Tests.Checksums;

/// <summary>Additive sums and the XOR, on small vectors worked by hand and on the worked example of RFC 1071.</summary>
public sealed class SumChecksumTests
{
    private static readonly byte[] Digits = "123456789"u8.ToArray();

    [Theory]
    // Worked by hand: the bytes 0x31..0x39 add up to 9 * 0x30 + (1 + ... + 9) = 432 + 45 = 477 = 0x1DD.
    [InlineData(8, SumCarry.None, SumComplement.None, 0xDDu)]       // 0x1DD modulo 0x100
    [InlineData(8, SumCarry.EndAround, SumComplement.None, 0xDEu)]  // 0xDD plus the carry 1 (477 mod 255 = 222)
    [InlineData(8, SumCarry.None, SumComplement.Ones, 0x22u)]       // ~0xDD in 8 bits
    [InlineData(8, SumCarry.None, SumComplement.Twos, 0x23u)]       // 0x100 - 0xDD
    [InlineData(8, SumCarry.EndAround, SumComplement.Ones, 0x21u)]  // ~0xDE in 8 bits
    [InlineData(16, SumCarry.None, SumComplement.None, 0x01DDu)]    // no carry out of 16 bits
    [InlineData(16, SumCarry.EndAround, SumComplement.None, 0x01DDu)]
    [InlineData(16, SumCarry.None, SumComplement.Ones, 0xFE22u)]    // ~0x01DD in 16 bits
    [InlineData(16, SumCarry.None, SumComplement.Twos, 0xFE23u)]    // 0x10000 - 0x01DD
    public void Byte_sums_of_ascii_123456789_worked_by_hand(int bits, SumCarry carry, SumComplement complement, uint expected)
    {
        var sum = ChecksumCatalog.Create(new SumParameters(bits, carry, complement));
        Assert.Equal(expected, sum.Compute(Digits));
        Assert.Equal(bits / 8, sum.Width);
    }

    [Fact]
    public void End_around_carry_adds_each_carry_back_in_worked_by_hand()
    {
        // Worked by hand: 0xFF + 0xFF = 0x1FE -> 0xFE + 1 = 0xFF; + 0x02 = 0x101 -> 0x01 + 1 = 0x02.
        var endAround = ChecksumCatalog.Create(new SumParameters(8, SumCarry.EndAround, SumComplement.None));
        var plain = ChecksumCatalog.Create(new SumParameters(8, SumCarry.None, SumComplement.None));
        byte[] data = [0xFF, 0xFF, 0x02];

        Assert.Equal(0x02u, endAround.Compute(data));

        // Worked by hand: (0xFF + 0xFF + 0x02) mod 0x100 = 0x200 mod 0x100 = 0x00.
        Assert.Equal(0x00u, plain.Compute(data));
    }

    [Fact]
    public void A_twos_complement_sum_makes_data_and_check_add_to_zero()
    {
        // Common practice: the two's complement of the sum is what a byte must be for data + check to sum to 0.
        var twos = ChecksumCatalog.Create(new SumParameters(8, SumCarry.None, SumComplement.Twos));
        var plain = ChecksumCatalog.Create(new SumParameters(8, SumCarry.None, SumComplement.None));
        var data = new byte[57];
        new Random(3).NextBytes(data);

        byte check = (byte)twos.Compute(data);
        Assert.Equal(0u, plain.Compute([.. data, check]));
    }

    [Fact]
    public void Sixteen_bit_words_follow_the_worked_example_of_rfc_1071()
    {
        // Source: RFC 1071 "Computing the Internet Checksum", section 3 (numerical examples): the bytes
        // 00 01 F2 03 F4 F5 F6 F7 summed as 16-bit one's-complement words give 0xDDF2 in normal order and 0xF2DD
        // byte-swapped; the Internet checksum is the one's complement of the sum, 0x220D.
        byte[] data = [0x00, 0x01, 0xF2, 0x03, 0xF4, 0xF5, 0xF6, 0xF7];
        var big = ChecksumCatalog.Create(new SumParameters(16, SumCarry.EndAround, SumComplement.None, SumAddend.WordBigEndian));
        var little = ChecksumCatalog.Create(new SumParameters(16, SumCarry.EndAround, SumComplement.None, SumAddend.WordLittleEndian));
        var internet = ChecksumCatalog.Create(new SumParameters(16, SumCarry.EndAround, SumComplement.Ones, SumAddend.WordBigEndian));

        Assert.Equal(0xDDF2u, big.Compute(data));
        Assert.Equal(0xF2DDu, little.Compute(data));
        Assert.Equal(0x220Du, internet.Compute(data));
    }

    [Fact]
    public void An_odd_last_byte_of_a_word_sum_is_padded_with_a_zero()
    {
        // Source: RFC 793 section 3.1 (TCP checksum): an odd last octet "is padded on the right with zeros to form a
        // 16 bit word", so in big-endian words it is the high byte.
        // Worked by hand: words 0x0102 and 0x0300 (padded) sum to 0x0402.
        var big = ChecksumCatalog.Create(new SumParameters(16, SumCarry.EndAround, SumComplement.None, SumAddend.WordBigEndian));
        Assert.Equal(0x0402u, big.Compute([0x01, 0x02, 0x03]));
    }

    [Fact]
    public void The_plain_eight_bit_sum_and_the_xor_are_the_first_language_names()
    {
        Assert.Same(ChecksumCatalog.Get("sum8"), ChecksumCatalog.Create(new SumParameters(8, SumCarry.None, SumComplement.None)));
        Assert.Same(ChecksumCatalog.Get("xor8"), ChecksumCatalog.Create(new XorParameters()));

        // Worked by hand: 0x0F ^ 0xF0 ^ 0x3C = 0xFF ^ 0x3C = 0xC3.
        Assert.Equal(0xC3u, ChecksumCatalog.Get("xor8").Compute([0x0F, 0xF0, 0x3C]));
    }

    [Theory]
    [InlineData(12)]
    [InlineData(32)]
    public void A_sum_of_other_than_8_or_16_bits_is_refused(int bits)
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new SumParameters(bits, SumCarry.None, SumComplement.None));
    }

    [Fact]
    public void Words_need_a_sixteen_bit_sum()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new SumParameters(8, SumCarry.None, SumComplement.None, SumAddend.WordBigEndian));
    }

    [Fact]
    public void Sum_parameters_round_trip_through_their_canonical_text()
    {
        var p = new SumParameters(16, SumCarry.EndAround, SumComplement.Twos, SumAddend.WordLittleEndian);
        Assert.Equal("sum(bits=16 carry=end-around complement=twos addend=word-little)", p.Describe());
        Assert.True(ChecksumParameters.TryParse(p.Describe(), out var parsed));
        Assert.Equal(p, parsed);
        Assert.False(ChecksumParameters.TryParse("sum(bits=16 carry=sideways complement=twos addend=byte)", out _));
        Assert.False(ChecksumParameters.TryParse("sum(bits=16)", out _));
    }
}
