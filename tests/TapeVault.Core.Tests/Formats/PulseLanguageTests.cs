using System.Text.Json.Nodes;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Formats;

/// <summary>
/// The pulse-width language's markers, half cycles, block gap, zero-means lengths and block kinds: the two worked
/// examples of docs/profiles.md load as the description says, and a profile that cannot work names its field.
/// </summary>
public sealed class PulseLanguageTests
{
    [Fact]
    public void The_three_class_example_says_what_its_description_says()
    {
        var profile = Families.FamilyProfiles.Get("three-class-pairs");
        var pulses = profile.PulseWidth!;

        Assert.Equal(["short", "medium"], pulses.Zero);
        Assert.Equal(["medium", "short"], pulses.One);
        Assert.Equal(["long", "medium"], pulses.BeforeByte);
        Assert.Equal(["long", "short"], pulses.EndOfBlock);
        Assert.Empty(pulses.Sync);
        Assert.Equal(Parity.Odd, profile.Framing.Parity);
        Assert.Equal(["header", "data"], profile.Kinds.Select(k => k.Kind));
        Assert.Equal(2, profile.Layout.Copies);
        var data = profile.Kinds[1];
        Assert.Equal(new PayloadLengthRule(0, null, profile.Kinds[0].Header[3], profile.Kinds[0].Header[4], InclusiveEnd: true), data.LengthRule);
        Assert.Equal(ChecksumCoverage.Payload, data.Checksum!.Covers);
        Assert.Equal(["type", "name", "start", "end"], profile.Kinds[0].Checksum!.CoveredFields);
    }

    [Fact]
    public void The_writer_gives_the_data_block_length_as_start_and_inclusive_end_and_a_zero_length_as_its_full_value()
    {
        var profile = Families.FamilyProfiles.Get("three-class-pairs");
        var blocks = BlockWriter.Blocks(profile, [new TapeFile("LOADER", new byte[300]) { Address = 0x1000 }]);
        var header = BlockLayoutCodec.For(profile.Kinds[0]);

        // 300 bytes from 0x1000: the last is at 0x1000 + 300 − 1 = 0x112B (worked by hand).
        Assert.Equal(0x1000, header.ReadField(blocks[0], profile.Kinds[0].Header[3]));
        Assert.Equal(0x112B, header.ReadField(blocks[0], profile.Kinds[0].Header[4]));
        Assert.Equal(9 + 300 + 1, blocks[1].Length);

        var oneCycle = ProfileCatalog.BuiltIn.Get("one-cycle-bits");
        var full = BlockWriter.Blocks(oneCycle, [new TapeFile("FULL", new byte[256])]);
        var codec = BlockLayoutCodec.For(oneCycle.Layout);
        var length = oneCycle.Layout.FieldWithRole(FieldRole.PayloadLength)!;
        Assert.Equal(0, full[0][codec.FieldOffset(length)]);
        Assert.Equal(256, codec.ReadField(full[0], length));
        Assert.True(codec.CheckHolds(full[0], 256));
    }

    [Fact]
    public void An_empty_file_is_refused_where_the_length_field_reads_a_stored_0_as_a_full_block()
    {
        // The family's description (the format-language issue): "length where 0 means 256" — so no block of this format
        // says it is empty, and writing one would put on tape a block that reads back as 256 bytes it does not hold.
        var oneCycle = ProfileCatalog.BuiltIn.Get("one-cycle-bits");
        var length = oneCycle.Layout.FieldWithRole(FieldRole.PayloadLength)!;

        var error = Assert.Throws<ArgumentException>(() => BlockWriter.Blocks(oneCycle, [new TapeFile("NOTHING", [])]));
        Assert.Contains("'NOTHING' is empty", error.Message, StringComparison.Ordinal);
        Assert.Contains($"'{length.Name}' reads a stored 0 as 256", error.Message, StringComparison.Ordinal);

        var block = new byte[BlockLayoutCodec.For(oneCycle.Layout).HeaderBytes];
        Assert.Throws<ArgumentException>(() => BlockLayoutCodec.For(oneCycle.Layout).WriteField(block, length, 0));

        // One byte is the shortest file it writes, and it reads back as one byte.
        var one = BlockWriter.Blocks(oneCycle, [new TapeFile("ONE", [0x41])]);
        Assert.Equal(1, BlockLayoutCodec.For(oneCycle.Layout).ReadField(one[0], length));
    }

    [Theory]
    [InlineData("pulseWidth.pulses", "\"quarters\"", "pulseWidth.pulses must be cycles or half-cycles")]
    [InlineData("pulseWidth.markers", "{}", "pulseWidth.markers must give beforeByte, afterByte or endOfBlock")]
    [InlineData("pulseWidth.markers", "{ \"beforeByte\": [ \"mark\" ], \"endOfBlock\": [ \"mark\", \"long\" ] }", "pulseWidth.markers.endOfBlock must differ from pulseWidth.markers.beforeByte")]
    [InlineData("pulseWidth.markers", "{ \"beforeByte\": [ \"short\" ] }", "pulseWidth.markers.beforeByte[0] must not be the lead-in class")]
    [InlineData("pulseWidth.blockGap", "{ \"count\": 4 }", "pulseWidth.blockGap.count must be between 16 and")]
    public void A_pulse_width_symbol_that_cannot_work_is_refused_naming_it(string path, string value, string expected)
    {
        var root = ProfileJson.PulseWidth();
        ProfileJson.With(root, path, JsonNode.Parse(value));

        var error = Assert.Throws<ProfileException>(() => ProfileLoader.Parse(root.ToJsonString(), "test.json"));

        Assert.Contains(expected, error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Without_a_class_sync_a_block_gap_needs_a_sync_field()
    {
        var root = ProfileJson.PulseWidth();
        ProfileJson.Without(root, "pulseWidth.sync");
        ProfileJson.With(root, "pulseWidth.markers", JsonNode.Parse("{ \"beforeByte\": [ \"mark\" ] }"));
        ProfileJson.With(root, "pulseWidth.blockGap", JsonNode.Parse("{ \"count\": 32 }"));

        var error = Assert.Throws<ProfileException>(() => ProfileLoader.Parse(root.ToJsonString(), "test.json"));

        Assert.Contains("pulseWidth.blockGap needs a sync", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("{ \"kind\": \"nothing\", \"field\": \"length\" }", "layout.kinds[1].payloadLength.kind must name an earlier kind")]
    [InlineData("{ \"kind\": \"head\", \"field\": \"nope\" }", "layout.kinds[1].payloadLength.field names no field of the kind 'head'")]
    [InlineData("{ \"kind\": \"head\", \"start\": \"from\", \"end\": \"to\", \"endIs\": \"after\" }", "layout.kinds[1].payloadLength.endIs must be inclusive")]
    [InlineData("{ \"kind\": \"head\", \"field\": \"length\", \"start\": \"from\" }", "layout.kinds[1].payloadLength must give either field, or start and end")]
    public void A_length_from_an_earlier_block_that_cannot_work_is_refused_naming_it(string rule, string expected)
    {
        var root = ProfileJson.PulseWidth();
        ProfileJson.With(root, "layout", JsonNode.Parse($$"""
            {
              "copies": 2,
              "kinds": [
                { "name": "head", "header": [ { "name": "from", "bytes": 2 }, { "name": "to", "bytes": 2 }, { "name": "length", "bytes": 2 } ],
                  "payloadBytes": 0, "checksum": { "xor": {} } },
                { "name": "body", "payloadLength": {{rule}}, "checksum": { "xor": {}, "covers": "payload" } }
              ]
            }
            """));

        var error = Assert.Throws<ProfileException>(() => ProfileLoader.Parse(root.ToJsonString(), "test.json"));

        Assert.Contains(expected, error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Kinds_replace_the_single_layout_and_must_begin_alike()
    {
        var root = ProfileJson.PulseWidth();
        ((JsonObject)ProfileJson.At(root, "layout"))["kinds"] = JsonNode.Parse("[]");
        var error = Assert.Throws<ProfileException>(() => ProfileLoader.Parse(root.ToJsonString(), "test.json"));
        Assert.Contains("layout.kinds replaces layout.header", error.Message, StringComparison.Ordinal);

        ProfileJson.With(root, "layout", JsonNode.Parse("""
            {
              "kinds": [
                { "name": "head", "header": [ { "name": "s", "bytes": 2, "role": "sync", "expect": [ "2A 17" ] }, { "name": "n", "bytes": 1 } ], "payloadBytes": 0, "checksum": { "xor": {} } },
                { "name": "body", "header": [ { "name": "n", "bytes": 1, "role": "payload-length" } ], "checksum": { "xor": {} } }
              ]
            }
            """));
        error = Assert.Throws<ProfileException>(() => ProfileLoader.Parse(root.ToJsonString(), "test.json"));
        Assert.Contains("layout.kinds[1].header must begin with the same sync field as the first kind", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Zero_means_is_only_for_numbers_and_must_fit_the_field()
    {
        var root = ProfileJson.PulseWidth();
        ((JsonObject)ProfileJson.At(root, "layout.header[0]"))["zeroMeans"] = 256;
        var error = Assert.Throws<ProfileException>(() => ProfileLoader.Parse(root.ToJsonString(), "test.json"));
        Assert.Contains("layout.header[0].zeroMeans is only for the roles payload-length and other", error.Message, StringComparison.Ordinal);

        root = ProfileJson.PulseWidth();
        ((JsonObject)ProfileJson.At(root, "layout.header[1]"))["zeroMeans"] = 257;
        error = Assert.Throws<ProfileException>(() => ProfileLoader.Parse(root.ToJsonString(), "test.json"));
        Assert.Contains("layout.header[1].zeroMeans must be between 1 and 256, not 257", error.Message, StringComparison.Ordinal);
    }
}
