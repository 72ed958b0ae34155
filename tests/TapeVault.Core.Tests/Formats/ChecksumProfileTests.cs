using System.Text.Json.Nodes;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Formats;

/// <summary>
/// The checks of the profile language: a checksum by name or by parameters (crc, sum, xor), and the bytes it covers
/// by keyword or by field names. Each case starts from a valid test profile (<see cref="ProfileJson"/>) and changes
/// its checksum; an impossible one is refused with the field named.
/// </summary>
public sealed class ChecksumProfileTests
{
    [Fact]
    public void A_crc_given_by_parameters_is_the_catalogue_model_with_those_parameters()
    {
        var profile = Load(WithChecksum(new JsonObject
        {
            ["crc"] = new JsonObject { ["width"] = 16, ["poly"] = "0x1021", ["init"] = "0xFFFF", ["refin"] = false, ["refout"] = false, ["xorout"] = "0x0000" },
        }));

        var spec = profile.Layout.Checksum!;
        Assert.Equal("CRC-16/CCITT-FALSE", spec.Algorithm);
        Assert.Same(ChecksumCatalog.Get("CRC-16/CCITT-FALSE"), spec.Resolve());

        // Source: CRC catalogue (reveng), CRC-16/CCITT-FALSE check value 0x29B1.
        Assert.Equal(0x29B1u, spec.Resolve().Compute("123456789"u8));
    }

    [Fact]
    public void A_crc_of_no_catalogue_model_keeps_its_parameters_in_its_name()
    {
        var profile = Load(WithChecksum(new JsonObject
        {
            ["crc"] = new JsonObject { ["width"] = 12, ["poly"] = 0x80F, ["refout"] = true, ["init"] = "0x5", ["xorout"] = "4095" },
        }));

        var crc = Assert.IsType<CrcChecksum>(profile.Layout.Checksum!.Resolve());
        Assert.Equal(new CrcParameters(12, 0x80F, 0x5, false, true, 0xFFF), crc.Parameters);
        Assert.Equal(2, crc.Width);
    }

    [Fact]
    public void Refout_follows_refin_unless_given_and_init_and_xorout_default_to_zero()
    {
        var profile = Load(WithChecksum(new JsonObject { ["crc"] = new JsonObject { ["width"] = 16, ["poly"] = "0x8005", ["refin"] = true } }));

        Assert.Equal("CRC-16/ARC", profile.Layout.Checksum!.Algorithm);
    }

    [Theory]
    [InlineData("""{ "bits": 16 }""", "sum(bits=16 carry=none complement=none addend=byte)")]
    [InlineData("""{ "bits": 16, "carry": "end-around", "complement": "ones" }""", "sum(bits=16 carry=end-around complement=ones addend=byte)")]
    [InlineData("""{ "bits": 16, "carry": "end-around", "complement": "ones", "addend": "word-big" }""", "sum(bits=16 carry=end-around complement=ones addend=word-big)")]
    [InlineData("""{ "bits": 8, "complement": "twos" }""", "sum(bits=8 carry=none complement=twos addend=byte)")]
    [InlineData("""{ "bits": 8 }""", "sum8")]
    public void A_sum_given_by_parameters_is_named_by_them(string sum, string expected)
    {
        var profile = Load(WithChecksum(new JsonObject { ["sum"] = JsonNode.Parse(sum) }));

        Assert.Equal(expected, profile.Layout.Checksum!.Algorithm);
        Assert.Equal(expected, profile.Layout.Checksum.Resolve().Name);
    }

    [Fact]
    public void An_empty_xor_object_is_the_xor_of_all_bytes()
    {
        var profile = Load(WithChecksum(new JsonObject { ["xor"] = new JsonObject() }));

        Assert.Equal("xor8", profile.Layout.Checksum!.Algorithm);
    }

    [Theory]
    [InlineData("CRC-16/ARC")]
    [InlineData("CRC-16/X-25")]
    [InlineData("CRC-32/BZIP2")]
    [InlineData("CRC-8/SMBUS")]
    public void A_catalogue_name_or_alias_is_accepted_as_the_algorithm_and_kept_as_written(string name)
    {
        var profile = Load(WithChecksum(new JsonObject { ["algorithm"] = name }));

        Assert.Equal(name, profile.Layout.Checksum!.Algorithm);
        Assert.Same(ChecksumCatalog.Get(name), profile.Layout.Checksum.Resolve());
    }

    [Fact]
    public void Covers_by_field_names_keeps_the_names_in_tape_order()
    {
        var profile = Load(WithChecksum(new JsonObject { ["algorithm"] = "xor8", ["covers"] = new JsonArray("length", "payload") }));

        var spec = profile.Layout.Checksum!;
        Assert.Equal(ChecksumCoverage.Fields, spec.Covers);
        Assert.Equal(["length", "payload"], spec.CoveredFields);
    }

    [Fact]
    public void Every_field_and_the_payload_named_is_the_header_and_payload_keyword()
    {
        var byNames = Load(WithChecksum(new JsonObject { ["algorithm"] = "xor8", ["covers"] = new JsonArray("block", "length", "payload") }));
        var byKeyword = Load(WithChecksum(new JsonObject { ["algorithm"] = "xor8", ["covers"] = "header-and-payload" }));

        Assert.Equal(ChecksumCoverage.HeaderAndPayload, byNames.Layout.Checksum!.Covers);
        Assert.Equal(byKeyword.Layout.Checksum, byNames.Layout.Checksum);
    }

    [Fact]
    public void The_payload_alone_named_is_the_payload_keyword()
    {
        var profile = Load(WithChecksum(new JsonObject { ["algorithm"] = "xor8", ["covers"] = new JsonArray("payload") }));

        Assert.Equal(ChecksumCoverage.Payload, profile.Layout.Checksum!.Covers);
        Assert.Empty(profile.Layout.Checksum.CoveredFields);
    }

    [Fact]
    public void Specs_with_the_same_covered_names_are_equal_though_their_lists_differ()
    {
        var a = Load(WithChecksum(new JsonObject { ["algorithm"] = "xor8", ["covers"] = new JsonArray("block", "payload") }));
        var b = Load(WithChecksum(new JsonObject { ["algorithm"] = "xor8", ["covers"] = new JsonArray("block", "payload") }));
        var c = Load(WithChecksum(new JsonObject { ["algorithm"] = "xor8", ["covers"] = new JsonArray("length", "payload") }));

        Assert.Equal(a.Layout.Checksum, b.Layout.Checksum);
        Assert.NotEqual(a.Layout.Checksum, c.Layout.Checksum);
    }

    public static readonly TheoryData<string, string> Broken = new()
    {
        { """{ "algorithm": "xor8", "crc": { "width": 16, "poly": "0x1021" } }""", "layout.checksum must give one of algorithm, crc, sum or xor, not several" },
        { """{ "covers": "payload" }""", "layout.checksum.algorithm is required (or give the checksum's parameters as crc, sum or xor)" },
        { """{ "crc": { "poly": "0x1021" } }""", "layout.checksum.crc.width is required" },
        { """{ "crc": { "width": 16 } }""", "layout.checksum.crc.poly is required" },
        { """{ "crc": { "width": 7, "poly": "0x07" } }""", "layout.checksum.crc.width must be between 8 and 32 bits, not 7" },
        { """{ "crc": { "width": 40, "poly": "0x07" } }""", "layout.checksum.crc.width must be between 8 and 32 bits, not 40" },
        { """{ "crc": { "width": 16, "poly": "0x11021" } }""", "layout.checksum.crc.poly must fit in the CRC's 16 bits (at most 0xffff), not 0x11021" },
        { """{ "crc": { "width": 16, "poly": "0x1020" } }""", "layout.checksum.crc.poly must be odd" },
        { """{ "crc": { "width": 16, "poly": "x1021" } }""", "layout.checksum.crc.poly must be a number, in hex as \"0x1021\" or in decimal, not 'x1021'" },
        { """{ "crc": { "width": 16, "poly": -5 } }""", "layout.checksum.crc.poly must be a whole number from 0, not -5" },
        { """{ "crc": { "width": 16, "poly": true } }""", "layout.checksum.crc.poly must be a number" },
        { """{ "crc": { "width": 8, "poly": "0x07", "init": "0x100" } }""", "layout.checksum.crc.init must fit in the CRC's 8 bits" },
        { """{ "crc": { "width": 8, "poly": "0x07", "xorout": "0xFFFF" } }""", "layout.checksum.crc.xorout must fit in the CRC's 8 bits" },
        { """{ "crc": { "width": 8, "poly": "0x07", "reflect": true } }""", "an unknown field" },
        { """{ "sum": { } }""", "layout.checksum.sum.bits is required" },
        { """{ "sum": { "bits": 12 } }""", "layout.checksum.sum.bits must be 8 or 16, not 12" },
        { """{ "sum": { "bits": 16, "carry": "around" } }""", "layout.checksum.sum.carry must be none or end-around, not 'around'" },
        { """{ "sum": { "bits": 16, "complement": "one" } }""", "layout.checksum.sum.complement must be none, ones or twos, not 'one'" },
        { """{ "sum": { "bits": 16, "addend": "dword" } }""", "layout.checksum.sum.addend must be byte, word-big or word-little, not 'dword'" },
        { """{ "sum": { "bits": 8, "addend": "word-big" } }""", "layout.checksum.sum.addend 'word-big' adds 16-bit words, which needs bits 16, not 8" },
        { """{ "xor": { "bits": 8 } }""", "an unknown field" },
        { """{ "algorithm": "xor8", "covers": [] }""", "layout.checksum.covers must name at least one field" },
        { """{ "algorithm": "xor8", "covers": ["block", "crc"] }""", "layout.checksum.covers[1] names no field: 'crc' (the fields are block, length, payload)" },
        { """{ "algorithm": "xor8", "covers": ["block", "block"] }""", "layout.checksum.covers[1] repeats 'block'" },
        { """{ "algorithm": "xor8", "covers": ["payload", "block"] }""", "layout.checksum.covers[1] names 'block' after a field that follows it on tape" },
        { """{ "algorithm": "xor8", "covers": ["block", 3] }""", "layout.checksum.covers[1] must be a field name" },
        { """{ "algorithm": "xor8", "covers": 3 }""", "layout.checksum.covers must be header-and-payload or payload, or a list of field names, not number" },
        { """{ "algorithm": "CRC-16/arc" }""", "layout.checksum.algorithm names an unknown checksum 'CRC-16/arc'" },
    };

    [Theory]
    [MemberData(nameof(Broken))]
    public void An_impossible_checksum_is_refused_with_the_field_named(string checksum, string expected)
    {
        var error = Assert.Throws<ProfileException>(() => Load(WithChecksum(JsonNode.Parse(checksum)!.AsObject())));

        Assert.Contains(expected, error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Covering_by_names_is_refused_while_a_header_field_is_called_payload()
    {
        var root = WithChecksum(new JsonObject { ["algorithm"] = "xor8", ["covers"] = new JsonArray("payload") });
        ProfileJson.With(root, "layout.header[0].name", "payload");

        var error = Assert.Throws<ProfileException>(() => Load(root));

        Assert.Contains("layout.checksum.covers cannot name fields while a header field is itself called 'payload'", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Covering_a_field_name_two_header_fields_share_is_refused()
    {
        var root = WithChecksum(new JsonObject { ["algorithm"] = "xor8", ["covers"] = new JsonArray("block", "payload") });
        ProfileJson.With(root, "layout.header[1].name", "block");

        var error = Assert.Throws<ProfileException>(() => Load(root));

        Assert.Contains("layout.checksum.covers[0] names 'block', which more than one header field is called", error.Message, StringComparison.Ordinal);
    }

    // The pulse-width test profile's header is "block" (block number) then "length" (payload length).
    private static JsonObject WithChecksum(JsonObject checksum) =>
        ProfileJson.With(ProfileJson.PulseWidth(), "layout.checksum", checksum);

    private static FormatProfile Load(JsonObject root) => ProfileLoader.Parse(root.ToJsonString(), "test.json");
}
