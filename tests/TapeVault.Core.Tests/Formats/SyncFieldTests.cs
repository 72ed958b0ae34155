using System.Text.Json.Nodes;
using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Formats;

/// <summary>
/// A sync field: bytes written where a block begins, expected per copy (a countdown that differs between the first
/// and second copy), kept out of the check by the coverage list, and read back as evidence of a block start.
/// </summary>
public sealed class SyncFieldTests
{
    private const string First = "89 88 87 86 85 84 83 82 81";
    private const string Second = "09 08 07 06 05 04 03 02 01";

    [Fact]
    public void A_sync_field_loads_with_one_expected_value_per_copy()
    {
        var layout = Load(WithSync(First, Second)).Layout;

        var sync = layout.Header[0];
        Assert.Equal(FieldRole.Sync, sync.Role);
        Assert.Equal(Convert.FromHexString("898887868584838281"), sync.Expected[0].ToArray());
        Assert.Equal(Convert.FromHexString("090807060504030201"), sync.Expected[1].ToArray());
        Assert.Equal(ChecksumCoverage.Fields, layout.Checksum!.Covers);
        Assert.Equal(["block", "length", "payload"], layout.Checksum.CoveredFields);
    }

    [Theory]
    [InlineData(null, "layout.header[0].expect is required")]
    [InlineData("89 88", "layout.header[0].expect[0] holds 2 bytes; the field has 9")]
    [InlineData("89 88 87 86 85 84 83 82 8G", "'8G' is not one")]
    [InlineData("55 55 55 55 55 55 55 55 55", "must not be one byte value repeated")]
    public void A_sync_field_without_good_expected_bytes_is_refused_naming_them(string? first, string expected)
    {
        var root = WithSync(First, Second);
        var field = (JsonObject)ProfileJson.At(root, "layout.header[0]");
        if (first is null)
        {
            field.Remove("expect");
        }
        else
        {
            field["expect"] = new JsonArray(first);
        }

        var error = Assert.Throws<ProfileException>(() => Load(root));

        Assert.Contains(expected, error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Expected_values_must_be_one_for_all_copies_or_one_per_copy()
    {
        var root = WithSync(First, Second);
        ProfileJson.With(root, "layout.copies", 3);

        var error = Assert.Throws<ProfileException>(() => Load(root));

        Assert.Contains("layout.header[0].expect gives 2 values; give one for all copies or one per copy (3)", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_sync_field_must_come_first_and_expected_bytes_belong_to_sync_fields_only()
    {
        var root = WithSync(First, Second);
        var header = (JsonArray)ProfileJson.At(root, "layout.header");
        var sync = header[0]!.DeepClone();
        header.RemoveAt(0);
        header.Add(sync);
        var error = Assert.Throws<ProfileException>(() => Load(root));
        Assert.Contains("layout.header[2].role sync must be the first header field", error.Message, StringComparison.Ordinal);

        root = ProfileJson.PulseWidth();
        ((JsonObject)ProfileJson.At(root, "layout.header[0]"))["expect"] = new JsonArray("01 02");
        error = Assert.Throws<ProfileException>(() => Load(root));
        Assert.Contains("layout.header[0].expect is only for a field with the role sync", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Each_copy_carries_its_own_sync_and_the_check_leaves_the_sync_out()
    {
        var layout = Load(WithSync(First, Second)).Layout;
        var codec = BlockLayoutCodec.For(layout);
        byte[] payload = [0x10, 0x20, 0x30];

        var block = BlockWriter.Build(layout, "", 0, 5, payload);
        var second = codec.ForCopy(block, 1);

        Assert.Equal(0, codec.MatchSync(block));
        Assert.Equal(1, codec.MatchSync(second));
        Assert.Equal(Convert.FromHexString(Second.Replace(" ", "", StringComparison.Ordinal)), second[..9]);

        // The sum covers block number, length and payload only, so both copies store the same check value:
        // 5 + 3 + 0x10 + 0x20 + 0x30 = 0x68, worked by hand.
        Assert.Equal(0x68u, codec.ReadStoredCheck(block, payload.Length));
        Assert.Equal(block[9..], second[9..]);
        Assert.True(codec.CheckHolds(second, payload.Length));

        // A block whose sync is another copy's reads back as the first copy's; one that matches no copy is left as it is.
        Assert.True(codec.NormalizeSync(second, payload.Length));
        Assert.Equal(block, second);
        second[4] ^= 0x40;
        Assert.False(codec.NormalizeSync(second, payload.Length));
        Assert.Equal(-1, codec.MatchSync(second));
    }

    [Fact]
    public void A_check_that_covers_a_sync_differing_per_copy_is_computed_for_each_copy()
    {
        var root = WithSync(First, Second);
        ProfileJson.With(root, "layout.checksum", new JsonObject { ["algorithm"] = "sum8" });
        var layout = Load(root).Layout;
        var codec = BlockLayoutCodec.For(layout);

        var block = BlockWriter.Build(layout, "", 0, 1, [0x01]);
        var second = codec.ForCopy(block, 1);

        Assert.True(codec.CheckHolds(block, 1));
        Assert.True(codec.CheckHolds(second, 1));
        Assert.NotEqual(codec.ReadStoredCheck(block, 1), codec.ReadStoredCheck(second, 1));
        Assert.Equal(ChecksumCatalog.Get("sum8").Compute(second.AsSpan(0, codec.HeaderBytes + 1)), codec.ReadStoredCheck(second, 1));
    }

    private static JsonObject WithSync(string first, string second)
    {
        var root = ProfileJson.PulseWidth();
        ProfileJson.With(root, "layout.copies", 2);
        var header = (JsonArray)ProfileJson.At(root, "layout.header");
        header.Insert(0, new JsonObject
        {
            ["name"] = "countdown",
            ["bytes"] = 9,
            ["role"] = "sync",
            ["expect"] = new JsonArray(first, second),
        });
        ProfileJson.With(root, "layout.checksum", new JsonObject
        {
            ["algorithm"] = "sum8",
            ["covers"] = new JsonArray("block", "length", "payload"),
        });
        return root;
    }

    private static FormatProfile Load(JsonObject root) => ProfileLoader.Parse(root.ToJsonString(), "test.json");
}
