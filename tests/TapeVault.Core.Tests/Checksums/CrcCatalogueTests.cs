using TapeVault.Core.Checksums;
using Xunit;

namespace TapeVault.Core.Tests.Checksums;

/// <summary>
/// Every CRC model built into <see cref="ChecksumCatalog"/> against the check value the CRC catalogue (reveng,
/// "Catalogue of parametrised CRC algorithms") gives for the ASCII string "123456789", and the table-driven code
/// against System.IO.Hashing where that library has the model.
/// </summary>
public sealed class CrcCatalogueTests
{
    private static readonly byte[] CheckString = "123456789"u8.ToArray();

    // Source: CRC catalogue (reveng), the "check" of each model: its CRC of the ASCII bytes "123456789". The values
    // were written from memory and then compared, one by one, with a copy of the catalogue's list of all models.
    public static readonly TheoryData<string, uint> CheckValues = new()
    {
        { "CRC-8/SMBUS", 0xF4 },          // CRC catalogue (reveng), check value
        { "CRC-8/I-432-1", 0xA1 },        // CRC catalogue (reveng), check value
        { "CRC-8/ROHC", 0xD0 },           // CRC catalogue (reveng), check value
        { "CRC-8/DVB-S2", 0xBC },         // CRC catalogue (reveng), check value
        { "CRC-8/WCDMA", 0x25 },          // CRC catalogue (reveng), check value
        { "CRC-10/ATM", 0x199 },          // CRC catalogue (reveng), check value
        { "CRC-11/UMTS", 0x061 },         // CRC catalogue (reveng), check value
        { "CRC-12/DECT", 0xF5B },         // CRC catalogue (reveng), check value
        { "CRC-12/UMTS", 0xDAF },         // CRC catalogue (reveng), check value (refin false, refout true)
        { "CRC-15/CAN", 0x059E },         // CRC catalogue (reveng), check value
        { "CRC-16/ARC", 0xBB3D },         // CRC catalogue (reveng), check value
        { "CRC-16/UMTS", 0xFEE8 },        // CRC catalogue (reveng), check value
        { "CRC-16/XMODEM", 0x31C3 },      // CRC catalogue (reveng), check value
        { "CRC-16/CCITT-FALSE", 0x29B1 }, // CRC catalogue (reveng), check value (its alias; the catalogue names it after a maker)
        { "CRC-16/KERMIT", 0x2189 },      // CRC catalogue (reveng), check value
        { "CRC-16/ISO-HDLC", 0x906E },    // CRC catalogue (reveng), check value (its alias; the catalogue names it after a maker)
        { "CRC-16/GSM", 0xCE3C },         // CRC catalogue (reveng), check value
        { "CRC-16/MODBUS", 0x4B37 },      // CRC catalogue (reveng), check value
        { "CRC-16/USB", 0xB4C8 },         // CRC catalogue (reveng), check value
        { "CRC-16/DNP", 0xEA82 },         // CRC catalogue (reveng), check value
        { "CRC-16/EN-13757", 0xC2B7 },    // CRC catalogue (reveng), check value
        { "CRC-16/T10-DIF", 0xD0DB },     // CRC catalogue (reveng), check value
        { "CRC-16/DECT-X", 0x007F },      // CRC catalogue (reveng), check value
        { "CRC-17/CAN-FD", 0x04F03 },     // CRC catalogue (reveng), check value
        { "CRC-21/CAN-FD", 0x0ED841 },    // CRC catalogue (reveng), check value
        { "CRC-24/OPENPGP", 0x21CF02 },   // CRC catalogue (reveng), check value
        { "CRC-24/LTE-A", 0xCDE703 },     // CRC catalogue (reveng), check value
        { "CRC-30/CDMA", 0x04C34ABF },    // CRC catalogue (reveng), check value
        { "CRC-32/ISO-HDLC", 0xCBF43926 }, // CRC catalogue (reveng), check value
        { "CRC-32/BZIP2", 0xFC891918 },   // CRC catalogue (reveng), check value
        { "CRC-32/CKSUM", 0x765E7680 },   // CRC catalogue (reveng), check value
        { "CRC-32/MPEG-2", 0x0376E6E7 },  // CRC catalogue (reveng), check value
        { "CRC-32/JAMCRC", 0x340BC6D9 },  // CRC catalogue (reveng), check value
        { "CRC-32/ISCSI", 0xE3069283 },   // CRC catalogue (reveng), check value
        { "CRC-32/AIXM", 0x3010BF7F },    // CRC catalogue (reveng), check value
        { "CRC-32/XFER", 0xBD0BE338 },    // CRC catalogue (reveng), check value
    };

    // Source: CRC catalogue (reveng): the aliases it lists for these models; the check value is the model's.
    public static readonly TheoryData<string, uint> AliasCheckValues = new()
    {
        { "CRC-16/X-25", 0x906E },        // alias of CRC-16/ISO-HDLC
        { "CRC-32", 0xCBF43926 },         // alias of CRC-32/ISO-HDLC
        { "CRC-32C", 0xE3069283 },        // alias of CRC-32/ISCSI
        { "crc16-ccitt-false", 0x29B1 },  // our first name for CRC-16/CCITT-FALSE
        { "crc16-xmodem", 0x31C3 },       // our first name for CRC-16/XMODEM
        { "crc32", 0xCBF43926 },          // our first name for CRC-32/ISO-HDLC
    };

    [Theory]
    [MemberData(nameof(CheckValues))]
    public void Each_model_gives_the_catalogue_check_value_for_ascii_123456789(string name, uint check)
    {
        Assert.Equal(check, ChecksumCatalog.Get(name).Compute(CheckString));
    }

    [Theory]
    [MemberData(nameof(AliasCheckValues))]
    public void Each_alias_gives_its_model_check_value(string name, uint check)
    {
        Assert.Equal(check, ChecksumCatalog.Get(name).Compute(CheckString));
    }

    [Fact]
    public void Every_built_in_model_has_a_check_value_above_so_none_goes_untested()
    {
        var tested = CheckValues.Select(row => (string)row[0]).ToHashSet(StringComparer.Ordinal);
        Assert.All(ChecksumCatalog.Models, m => Assert.Contains(m.Name, tested));
        Assert.Equal(ChecksumCatalog.Models.Count, tested.Count);
    }

    [Fact]
    public void An_alias_and_its_model_share_one_instance_so_the_table_is_built_once()
    {
        Assert.Same(ChecksumCatalog.Get("CRC-32/ISO-HDLC"), ChecksumCatalog.Get("CRC-32"));
        Assert.Same(ChecksumCatalog.Get("CRC-16/ISO-HDLC"), ChecksumCatalog.Get("CRC-16/X-25"));
        var model = ChecksumCatalog.Models.Single(m => m.Name == "CRC-16/KERMIT");
        Assert.Same(ChecksumCatalog.Get("CRC-16/KERMIT"), ChecksumCatalog.Create(model.Parameters));
    }

    [Fact]
    public void The_same_parameters_built_twice_give_one_checksum_named_after_its_catalogue_model()
    {
        var arc = new CrcParameters(16, 0x8005, 0, true, true, 0);
        var first = ChecksumCatalog.Create(arc);
        var second = ChecksumCatalog.Create(arc with { });

        Assert.Same(first, second);
        Assert.Equal("CRC-16/ARC", first.Name);
    }

    [Fact]
    public void Parameters_of_no_catalogue_model_are_named_by_their_canonical_text_which_the_catalogue_resolves()
    {
        var custom = new CrcParameters(16, 0x1021, 0x1234, false, true, 0x00FF);
        var checksum = ChecksumCatalog.Create(custom);

        Assert.Equal("crc(width=16 poly=0x1021 init=0x1234 refin=false refout=true xorout=0x00ff)", checksum.Name);
        Assert.Same(checksum, ChecksumCatalog.Get(checksum.Name));
    }

    [Fact]
    public void Crc32_iso_hdlc_matches_System_IO_Hashing_Crc32_on_random_data_of_many_lengths()
    {
        // Source: System.IO.Hashing.Crc32 (package System.IO.Hashing 10.0.15), which implements CRC-32/ISO-HDLC.
        // That package has no parameterised CRC and no CRC-16 (its other CRC is Crc64, 64 bits wide, beyond our
        // widths), so it is the second reference for this model (and, through reflection below, for BZIP2) only.
        var crc = ChecksumCatalog.Get("CRC-32/ISO-HDLC");
        var random = new Random(71);
        foreach (int length in new[] { 0, 1, 2, 3, 7, 64, 255, 1000, 4099 })
        {
            var data = new byte[length];
            random.NextBytes(data);
            Assert.Equal(System.IO.Hashing.Crc32.HashToUInt32(data), crc.Compute(data));
        }
    }

    [Fact]
    public void Crc32_bzip2_is_the_unreflected_form_of_System_IO_Hashing_Crc32()
    {
        // BZIP2 and ISO-HDLC share poly, init and xorout and differ only in reflection, and both init and xorout are
        // all ones (their own reflection); so BZIP2(data) = reflect32(ISO-HDLC(each byte of data reflected)) (the
        // Rocksoft model, Williams, "A Painless Guide to CRC Error Detection Algorithms"). The right side is
        // computed by System.IO.Hashing.Crc32, which checks our normal-form (unreflected) table at width 32.
        var bzip2 = ChecksumCatalog.Get("CRC-32/BZIP2");
        var random = new Random(72);
        foreach (int length in new[] { 0, 1, 5, 64, 777 })
        {
            var data = new byte[length];
            random.NextBytes(data);
            var reflected = data.Select(b => (byte)(CrcChecksum.Reflect(b, 8))).ToArray();
            uint expected = CrcChecksum.Reflect(System.IO.Hashing.Crc32.HashToUInt32(reflected), 32);
            Assert.Equal(expected, bzip2.Compute(data));
        }
    }

    [Fact]
    public void The_table_driven_crc_equals_the_bit_by_bit_definition_for_random_parameters_of_every_width()
    {
        // The bit-by-bit loop below is the Rocksoft model's own definition (Williams, "A Painless Guide to CRC Error
        // Detection Algorithms", the direct algorithm); the tables must give the same value for any parameters,
        // reflected or not, at every width from 8 to 32.
        var random = new Random(2026);
        for (int trial = 0; trial < 400; trial++)
        {
            int width = 8 + (trial % 25);
            uint mask = CrcParameters.Mask(width);
            var p = new CrcParameters(
                width,
                ((uint)random.NextInt64(0, 1L << 32) & mask) | 1u,
                (uint)random.NextInt64(0, 1L << 32) & mask,
                random.Next(2) == 1,
                random.Next(2) == 1,
                (uint)random.NextInt64(0, 1L << 32) & mask);
            var data = new byte[random.Next(0, 40)];
            random.NextBytes(data);

            Assert.Equal(BitByBit(p, data), ChecksumCatalog.Create(p).Compute(data));
        }
    }

    [Theory]
    [InlineData("CRC-8/SMBUS", 1, 8)]
    [InlineData("CRC-12/UMTS", 2, 12)]
    [InlineData("CRC-16/ARC", 2, 16)]
    [InlineData("CRC-24/OPENPGP", 3, 24)]
    [InlineData("CRC-30/CDMA", 4, 30)]
    [InlineData("CRC-32/BZIP2", 4, 32)]
    public void A_crc_is_stored_in_whole_bytes_but_matches_by_accident_with_the_odds_of_its_bits(string name, int bytes, int bits)
    {
        // Common practice: a w-bit check takes one of 2^w values, so a random block matches it with odds 2^-w.
        var crc = ChecksumCatalog.Get(name);
        Assert.Equal(bytes, crc.Width);
        Assert.Equal(Math.ScaleB(1.0, -bits), crc.FalseMatchProbability);
    }

    [Theory]
    [InlineData(7)]
    [InlineData(33)]
    public void A_width_outside_8_to_32_bits_is_refused(int width)
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new CrcParameters(width, 0x07, 0, false, false, 0));
    }

    [Fact]
    public void A_value_wider_than_the_crc_or_an_even_poly_is_refused()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new CrcParameters(16, 0x11021, 0, false, false, 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new CrcParameters(16, 0x1021, 0x10000, false, false, 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => new CrcParameters(16, 0x1020, 0, false, false, 0));
    }

    [Fact]
    public void Every_model_written_as_canonical_text_parses_back_to_its_parameters()
    {
        foreach (var model in ChecksumCatalog.Models)
        {
            Assert.True(ChecksumParameters.TryParse(model.Parameters.Describe(), out var parsed));
            Assert.Equal(model.Parameters, parsed);
        }
    }

    private static uint BitByBit(CrcParameters p, byte[] data)
    {
        uint mask = CrcParameters.Mask(p.Width);
        uint register = p.Init;
        foreach (byte b in data)
        {
            uint input = p.RefIn ? CrcChecksum.Reflect(b, 8) : b;
            for (int bit = 7; bit >= 0; bit--)
            {
                bool top = (((register >> (p.Width - 1)) ^ (input >> bit)) & 1u) != 0;
                register = (register << 1) & mask;
                if (top)
                {
                    register ^= p.Poly;
                }
            }
        }

        if (p.RefOut)
        {
            register = CrcChecksum.Reflect(register, p.Width);
        }

        return (register ^ p.XorOut) & mask;
    }

    [Fact]
    public void The_reflection_helper_reverses_the_low_bits()
    {
        // Worked by hand: 0b0000_0001 reversed in 8 bits is 0b1000_0000; 0x1021 reversed in 16 bits is 0x8408
        // (the reversed form of this poly that the CRC catalogue's reflected models use, common practice).
        Assert.Equal(0x80u, CrcChecksum.Reflect(0x01, 8));
        Assert.Equal(0x8408u, CrcChecksum.Reflect(0x1021, 16));
        // Common practice: 0xEDB88320 is the reversed form of the CRC-32 poly 0x04C11DB7.
        Assert.Equal(0x04C11DB7u, CrcChecksum.Reflect(0xEDB88320u, 32));
    }
}
