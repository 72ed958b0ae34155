using System.Text;
using System.Text.Json.Nodes;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Formats;

/// <summary>
/// Lead-ins as patterns: a leader of repeated characters before FSK sync characters, and a biphase preamble of
/// alternating bits. The built-ins that use them say what their descriptions say, and profiles that could not work
/// are refused with the field named.
/// </summary>
public sealed class LeadInPatternTests
{
    [Fact]
    public void The_fsk_sync_profile_is_what_its_description_says()
    {
        var profile = ProfileCatalog.BuiltIn.Get("fsk-sync-1200");

        Assert.Equal(FormatFamily.Fsk, profile.Family);
        Assert.Equal((2400.0, 1200.0, 1200.0), (profile.Fsk!.MarkHz, profile.Fsk.SpaceHz, profile.Fsk.Baud));
        Assert.Equal(new CharacterLeadIn(0x55, 16), profile.Fsk.LeadInCharacters);
        Assert.Equal(new ByteFraming(8, BitOrder.LsbFirst, "0", "11", Parity.Even), profile.Framing);
        var sync = profile.Layout.Header[0];
        Assert.Equal(FieldRole.Sync, sync.Role);
        Assert.Equal([0x16, 0x16, 0x3C], sync.Expected.Single().ToArray());
        Assert.Equal(ChecksumCoverage.Fields, profile.Layout.Checksum!.Covers);
        Assert.DoesNotContain("sync", profile.Layout.Checksum.CoveredFields);
    }

    [Fact]
    public void The_fsk_sync_profiles_crc_is_the_catalogues_crc_16_cms()
    {
        // CRC catalogue (reveng), CRC-16/CMS: width=16 poly=0x8005 init=0xffff refin=false refout=false xorout=0x0000
        // check=0xaee7 (from memory of the catalogue's entry). The profile gives the parameters, not the name.
        var checksum = ProfileCatalog.BuiltIn.Get("fsk-sync-1200").Layout.Checksum!.Resolve();

        Assert.Equal(0xAEE7u, checksum.Compute(Encoding.ASCII.GetBytes("123456789")));
        Assert.Equal(2, checksum.Width);
    }

    [Fact]
    public void The_sync_characters_are_outside_the_check()
    {
        // Two blocks that differ only in their sync characters have the same check value.
        var profile = ProfileCatalog.BuiltIn.Get("fsk-sync-1200");
        var codec = BlockLayoutCodec.For(profile.Layout);
        var block = BlockWriter.Build(profile.Layout, "NOTES", 0, 3, Encoding.ASCII.GetBytes("a payload"));
        var other = (byte[])block.Clone();
        other[0] = 0xA5;
        other[2] = 0x00;

        int payload = block.Length - codec.HeaderBytes - codec.CheckBytes;
        Assert.Equal(codec.ComputeCheck(block, payload), codec.ComputeCheck(other, payload));
        Assert.Equal([0x16, 0x16, 0x3C], block[..3]);
    }

    [Fact]
    public void The_biphase_preamble_profile_is_what_its_description_says()
    {
        var profile = ProfileCatalog.BuiltIn.Get("biphase-1500");

        Assert.Equal(FormatFamily.Biphase, profile.Family);
        Assert.Equal(1500, 1 / profile.Biphase!.CellSeconds, 0.01);
        Assert.Equal(BitPatterns.Alternating, profile.Biphase.LeadInBits);
        Assert.Equal(96, profile.Biphase.LeadInMinimumBits);
        Assert.Equal(16, profile.Biphase.SyncBits.Length);
        Assert.Equal("CRC-16/KERMIT", profile.Layout.Checksum!.Algorithm);
    }

    [Theory]
    [InlineData("0", "10110111", 8)]
    [InlineData("0", "00010111", 8)]
    [InlineData("01", "1110010000101101", 16)]

    // Alternating bits then 0110: the register holds ...0101 0110, where 0110 is found only at its end.
    [InlineData("01", "0110", 4)]

    // 1010 continues an alternation: it is found inside the preamble, before any sync bit was read.
    [InlineData("01", "1010", 0)]

    // 0100 is found three bits early, after its first bit only, where an alternation ending ...010 runs into it.
    [InlineData("01", "0100", 1)]
    public void A_sync_word_is_found_where_it_ends_unless_the_lead_in_runs_into_it(string leadIn, string sync, int expected)
    {
        Assert.Equal(expected, BitPatterns.FirstMatch(leadIn, sync));
    }

    [Fact]
    public void A_leader_character_is_refused_where_its_frame_repeats_within_itself()
    {
        // 0x55 with one start bit, no parity and one stop bit is 0101010101 on tape: the same two bits later.
        var json = FskLeaderJson();
        json["framing"]!["parity"] = "none";
        json["framing"]!["stopBits"] = "1";

        var error = Assert.Throws<ProfileException>(() => Load(json));

        Assert.Contains("fsk.leadIn.character 0x55 framed back to back reads the same 2 bit(s) later", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("leadInMinimumSeconds", "fsk.leadInMinimumSeconds must not be given with fsk.leadIn")]
    [InlineData("no sync field", "fsk.leadIn needs the layout to begin with a sync field")]
    [InlineData("sync begins with the leader", "layout.header[0].expect must not begin with the leader's character 0x55")]
    [InlineData("character too large", "fsk.leadIn.character must be a character from 0 to 0x7f")]
    [InlineData("too few", "fsk.leadIn.minimumCount must be between 4 and 100 000, not 2")]
    [InlineData("stream", "fsk.leadIn needs blocks")]
    public void A_leader_that_cannot_work_is_refused_with_the_field_named(string breakage, string message)
    {
        var json = FskLeaderJson();
        switch (breakage)
        {
            case "leadInMinimumSeconds":
                json["fsk"]!["leadInMinimumSeconds"] = 0.1;
                break;
            case "no sync field":
                json["layout"]!["header"]!.AsArray().RemoveAt(0);
                json["layout"]!["checksum"]!["covers"] = "header-and-payload";
                break;
            case "sync begins with the leader":
                json["layout"]!["header"]![0]!["expect"] = new JsonArray("55 16 3C");
                break;
            case "character too large":
                json["framing"]!["dataBits"] = 7;
                json["fsk"]!["leadIn"]!["character"] = "0xD5";
                break;
            case "too few":
                json["fsk"]!["leadIn"]!["minimumCount"] = 2;
                break;
            case "stream":
                json["layout"] = new JsonObject();
                break;
        }

        var error = Assert.Throws<ProfileException>(() => Load(json));

        Assert.Contains(message, error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("0011", "biphase.leadIn.bits must be 0, 1 or 01 (alternating bits), not '0011'")]
    [InlineData("sync 1010", "biphase.syncBits '1010' is found 4 bit(s) early where the lead-in of alternating bits runs into it")]
    [InlineData("both lengths", "biphase.leadInMinimumBits must not be given with biphase.leadIn")]
    public void A_biphase_lead_in_that_cannot_work_is_refused_with_the_field_named(string breakage, string message)
    {
        var json = JsonNode.Parse(ProfileJson.BiphaseText)!.AsObject();
        var biphase = json["biphase"]!.AsObject();
        biphase.Remove("leadInMinimumBits");
        biphase["leadIn"] = new JsonObject { ["bits"] = "01", ["minimumBits"] = 64 };
        switch (breakage)
        {
            case "0011":
                biphase["leadIn"]!["bits"] = "0011";
                break;
            case "sync 1010":
                biphase["syncBits"] = "1010";
                break;
            case "both lengths":
                biphase["leadInMinimumBits"] = 64;
                break;
        }

        var error = Assert.Throws<ProfileException>(() => Load(json));

        Assert.Contains(message, error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void The_first_languages_zeros_and_the_pattern_form_of_zeros_are_the_same_lead_in()
    {
        var json = JsonNode.Parse(ProfileJson.BiphaseText)!.AsObject();
        var zeros = Load(json);
        var biphase = json["biphase"]!.AsObject();
        biphase.Remove("leadInMinimumBits");
        biphase["leadIn"] = new JsonObject { ["bits"] = "0", ["minimumBits"] = 32 };

        var pattern = Load(json);

        Assert.Equal(zeros.Biphase, pattern.Biphase);
    }

    private static FormatProfile Load(JsonObject json) => ProfileLoader.Parse(json.ToJsonString(), "test");

    /// <summary>The built-in fsk-sync-1200 as a JSON tree to break, under another id.</summary>
    private static JsonObject FskLeaderJson()
    {
        string root = AppContext.BaseDirectory;
        while (!File.Exists(Path.Combine(root, "TapeVault.sln")))
        {
            root = Path.GetDirectoryName(root) ?? throw new InvalidOperationException("The repository root was not found.");
        }

        var json = JsonNode.Parse(File.ReadAllText(Path.Combine(root, "src", "TapeVault.Core", "Formats", "BuiltIn", "fsk-sync-1200.json")))!.AsObject();
        json["id"] = "test-leader";
        return json;
    }
}
