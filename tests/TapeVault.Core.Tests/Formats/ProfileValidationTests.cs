using System.Text.Json.Nodes;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Formats;

/// <summary>
/// A profile that cannot work is never built, and the error names the field and what is wrong with it
/// (DEVELOPERS.md, "validated when built"). Every case starts from a valid profile and breaks one thing.
/// </summary>
public sealed class ProfileValidationTests
{
    [Fact]
    public void The_three_base_profiles_of_the_tests_load_as_their_own_families()
    {
        Assert.Equal(FormatFamily.PulseWidth, Load(ProfileJson.PulseWidth()).Family);
        Assert.Equal(FormatFamily.Fsk, Load(ProfileJson.Fsk()).Family);
        Assert.Equal(FormatFamily.Biphase, Load(ProfileJson.Biphase()).Family);
    }

    [Fact]
    public void Pulse_classes_are_read_in_microseconds_and_sorted_by_duration()
    {
        var root = ProfileJson.PulseWidth();
        var classes = (JsonArray)ProfileJson.At(root, "pulseWidth.classes");
        var first = classes[0]!.DeepClone();
        classes.RemoveAt(0);
        classes.Add(first);

        var encoding = Load(root).PulseWidth!;

        Assert.Equal(["short", "long", "mark"], encoding.Classes.Select(c => c.Name));
        Assert.Equal(250e-6, encoding.Classes[0].Seconds, 12);
        Assert.Equal(1000e-6, encoding.Classes[2].Seconds, 12);
    }

    [Theory]
    [InlineData("{ \"id\": \"x\", ", "invalid JSON")]
    [InlineData("[1, 2, 3]", "invalid JSON")]
    [InlineData("not json at all", "invalid JSON")]
    [InlineData("{ \"id\": 42 }", "at id")]
    public void Text_that_is_not_a_profile_object_is_refused_as_invalid_json(string text, string expected)
    {
        var error = Assert.Throws<ProfileException>(() => ProfileLoader.Parse(text, "broken.json"));

        Assert.Contains("broken.json", error.Message, StringComparison.Ordinal);
        Assert.Contains(expected, error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void The_json_literal_null_is_refused_as_holding_no_profile()
    {
        var error = Assert.Throws<ProfileException>(() => ProfileLoader.Parse("null", "empty.json"));

        Assert.Contains("no profile object", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("id")]
    [InlineData("name")]
    [InlineData("family")]
    [InlineData("framing")]
    [InlineData("layout")]
    [InlineData("framing.dataBits")]
    [InlineData("pulseWidth")]
    [InlineData("pulseWidth.leadIn")]
    [InlineData("pulseWidth.leadIn.class")]
    [InlineData("pulseWidth.leadIn.minimumCount")]
    [InlineData("pulseWidth.zero")]
    [InlineData("pulseWidth.sync")]
    [InlineData("layout.checksum.algorithm")]
    public void A_missing_required_field_is_named(string path)
    {
        var error = Refused(ProfileJson.Without(ProfileJson.PulseWidth(), path));

        Assert.Contains(path, error.Message, StringComparison.Ordinal);
        Assert.Matches("is required|must list", error.Message);
    }

    [Fact]
    public void Missing_pulse_classes_are_named()
    {
        var error = Refused(ProfileJson.Without(ProfileJson.PulseWidth(), "pulseWidth.classes"));

        Assert.Contains("pulseWidth.classes must list at least two pulse classes", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_single_pulse_class_is_refused()
    {
        var root = ProfileJson.PulseWidth();
        var classes = (JsonArray)ProfileJson.At(root, "pulseWidth.classes");
        classes.RemoveAt(2);
        classes.RemoveAt(1);

        var error = Refused(root);

        Assert.Contains("pulseWidth.classes must list at least two pulse classes", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_pulse_class_without_a_duration_is_named_with_its_index()
    {
        var error = Refused(ProfileJson.Without(ProfileJson.PulseWidth(), "pulseWidth.classes[1].microseconds"));

        Assert.Contains("pulseWidth.classes[1].microseconds is required", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("pulseWidth.classes[0].microseconds", -250)]
    [InlineData("pulseWidth.classes[0].microseconds", 0)]
    [InlineData("recording.leadInSeconds", 0)]
    [InlineData("recording.blockGapSeconds", -1)]
    [InlineData("recording.trailerSeconds", -0.5)]
    public void A_zero_or_negative_duration_of_a_pulse_width_profile_is_refused(string path, double value)
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), path, value));

        Assert.Contains(path, error.Message, StringComparison.Ordinal);
        Assert.Contains("must be above 0", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("biphase.cellMicroseconds", 0)]
    [InlineData("biphase.cellMicroseconds", -500)]
    public void A_zero_or_negative_biphase_cell_is_refused(string path, double value)
    {
        var error = Refused(ProfileJson.With(ProfileJson.Biphase(), path, value));

        Assert.Contains(path, error.Message, StringComparison.Ordinal);
        Assert.Contains("must be above 0", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("fsk.baud", 0)]
    [InlineData("fsk.markHz", -2000)]
    [InlineData("fsk.spaceHz", 0)]
    public void A_zero_or_negative_tone_or_bit_rate_is_refused(string path, double value)
    {
        var error = Refused(ProfileJson.With(ProfileJson.Fsk(), path, value));

        Assert.Contains(path, error.Message, StringComparison.Ordinal);
        Assert.Contains("must be above 0", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Tones_closer_than_one_baud_are_refused()
    {
        var error = Refused(ProfileJson.With(ProfileJson.Fsk(), "fsk.spaceHz", 1800));

        Assert.Contains("fsk.spaceHz must be at least one baud away", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(300)]
    [InlineData(280)]
    public void Pulse_classes_closer_than_a_quarter_are_refused_as_overlapping(double longMicroseconds)
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "pulseWidth.classes[1].microseconds", longMicroseconds));

        Assert.Contains("pulseWidth.classes", error.Message, StringComparison.Ordinal);
        Assert.Contains("'short' and 'long' overlap", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Two_pulse_classes_of_the_same_name_are_refused()
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "pulseWidth.classes[2].name", "short"));

        Assert.Contains("pulseWidth.classes[2].name repeats the class name 'short'", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_bit_naming_an_unknown_pulse_class_is_refused()
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "pulseWidth.one", new JsonArray("medium")));

        Assert.Contains("pulseWidth.one[0] names an unknown pulse class 'medium'", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_one_that_begins_like_the_zero_is_refused()
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "pulseWidth.one", new JsonArray("short")));

        Assert.Contains("pulseWidth.one must differ from pulseWidth.zero", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_sync_that_starts_with_the_lead_in_class_is_refused()
    {
        // The decoder leaves the lead-in on the first pulse of another class, so such a sync could never be found.
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "pulseWidth.sync", new JsonArray("short", "mark")));

        Assert.Contains("pulseWidth.sync[0]", error.Message, StringComparison.Ordinal);
        Assert.Contains("must not be the lead-in class 'short'", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_sync_that_contains_the_lead_in_class_after_its_first_pulse_is_accepted()
    {
        var profile = Load(ProfileJson.With(ProfileJson.PulseWidth(), "pulseWidth.sync", new JsonArray("mark", "short")));

        Assert.Equal(["mark", "short"], profile.PulseWidth!.Sync);
    }

    [Fact]
    public void A_lead_in_of_an_unknown_class_is_refused()
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "pulseWidth.leadIn.class", "tone"));

        Assert.Contains("pulseWidth.leadIn.class names an unknown pulse class 'tone'", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void An_unknown_checksum_name_is_refused_with_the_known_names()
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "layout.checksum.algorithm", "crc99"));

        Assert.Contains("layout.checksum.algorithm names an unknown checksum 'crc99'", error.Message, StringComparison.Ordinal);
        Assert.Contains("crc16-xmodem", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(1_000_000_000)]
    [InlineData(0)]
    [InlineData(-8)]
    public void An_impossible_payload_size_is_refused(int bytes)
    {
        var error = Refused(ProfileJson.With(ProfileJson.Biphase(), "layout.payloadBytes", bytes));

        Assert.Contains($"layout.payloadBytes must be between 1 and {ProfileLoader.MaximumPayloadLimit}, not {bytes}", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_maximum_payload_of_a_billion_bytes_is_refused()
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "layout.maximumPayloadBytes", 1_000_000_000));

        Assert.Contains("layout.maximumPayloadBytes must be between 1 and", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_payload_size_larger_than_a_json_integer_is_refused_as_the_wrong_type()
    {
        var root = ProfileJson.Biphase();
        string text = root.ToJsonString().Replace("\"payloadBytes\":64", "\"payloadBytes\":10000000000", StringComparison.Ordinal);

        var error = Assert.Throws<ProfileException>(() => ProfileLoader.Parse(text, "huge.json"));

        Assert.Contains("layout.payloadBytes", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("colour")]
    [InlineData("pulseWidth.tolerance")]
    [InlineData("layout.checksum.seed")]
    public void An_unknown_field_is_refused_and_named(string path)
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), path, "x"));

        Assert.Contains("an unknown field", error.Message, StringComparison.Ordinal);
        Assert.Contains(path.Split('.')[^1], error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("magnetic")]
    [InlineData("PulseWidth")]
    public void An_unknown_family_is_refused(string family)
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "family", family));

        Assert.Contains($"family must be pulse-width, fsk or biphase, not '{family}'", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("fsk", "fsk is required for the fsk family")]
    [InlineData("biphase", "biphase is required for the biphase family")]
    public void A_family_whose_own_section_is_missing_is_refused(string family, string expected)
    {
        // The pulse-width profile carries a pulseWidth section only.
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "family", family));

        Assert.Contains(expected, error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("Upper-Case")]
    [InlineData("under_score")]
    [InlineData("a-very-long-identifier-that-goes-on-and-on-well-beyond-sixty-four-characters")]
    public void An_id_that_is_not_a_short_lower_case_identifier_is_refused(string id)
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "id", id));

        Assert.Contains("id must be 1 to 64 lower-case letters", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("framing.dataBits", 9, "framing.dataBits must be between 5 and 8")]
    [InlineData("framing.bitOrder", "middle-first", "framing.bitOrder must be lsb-first or msb-first")]
    [InlineData("framing.stopBits", "12", "framing.stopBits must be up to four characters of 0 and 1")]
    [InlineData("framing.parity", "mark", "framing.parity must be none, even or odd")]
    [InlineData("layout.copies", 0, "layout.copies must be between 1 and 8")]
    [InlineData("layout.checksum.covers", "everything", "layout.checksum.covers must be header-and-payload or payload")]
    [InlineData("layout.header[0].role", "colour", "layout.header[0].role must be other")]
    [InlineData("layout.header[1].bytes", 5, "layout.header[1].bytes must be between 1 and 4")]
    [InlineData("pulseWidth.leadIn.minimumCount", 2, "pulseWidth.leadIn.minimumCount must be between 8 and 100 000")]
    public void Other_out_of_range_values_are_named_with_their_limits(string path, object value, string expected)
    {
        JsonNode node = value switch
        {
            int i => JsonValue.Create(i),
            string s => JsonValue.Create(s),
            _ => throw new ArgumentOutOfRangeException(nameof(value)),
        };

        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), path, node));

        Assert.Contains(expected, error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_payload_length_field_and_a_fixed_payload_size_together_are_refused()
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "layout.payloadBytes", 16));

        Assert.Contains("layout.payloadBytes must not be given when a header field has the role payload-length", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Biphase_sync_bits_without_a_one_are_refused()
    {
        var error = Refused(ProfileJson.With(ProfileJson.Biphase(), "biphase.syncBits", "0000"));

        Assert.Contains("biphase.syncBits must be 1 to 64 characters of 0 and 1 with at least one 1", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Text_longer_than_the_profile_limit_is_refused_before_parsing()
    {
        string text = new(' ', ProfileLoader.MaximumFileBytes + 1);

        var error = Assert.Throws<ProfileException>(() => ProfileLoader.Parse(text, "padded.json"));

        Assert.Contains("longer than", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Errors_after_the_id_is_read_name_the_profile_by_its_id()
    {
        var error = Refused(ProfileJson.With(ProfileJson.PulseWidth(), "framing.dataBits", 4));

        Assert.StartsWith("Profile 'test-pulse': ", error.Message, StringComparison.Ordinal);
    }

    private static FormatProfile Load(JsonObject root) => ProfileLoader.Parse(root.ToJsonString(), "test.json");

    private static ProfileException Refused(JsonObject root) =>
        Assert.Throws<ProfileException>(() => ProfileLoader.Parse(root.ToJsonString(), "test.json"));
}
