using System.Text.Json.Nodes;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Hardening;

/// <summary>
/// Every kind of broken profile the loader must refuse: each is refused with a <see cref="ProfileException"/> whose
/// one sentence names the field (or the place in the text) and what is wrong with it. The cases start from the
/// valid profiles of <see cref="ProfileJson"/> and break one thing; docs/reliability.md lists them by name.
/// </summary>
public sealed class ProfileRefusalTests : IDisposable
{
    private readonly string folder = Directory.CreateTempSubdirectory("tapevault-profile-").FullName;

    internal static readonly Dictionary<string, (Func<string> Text, string[] Expected)> Cases = new()
    {
        ["empty text"] = (() => string.Empty, ["broken.json", "invalid JSON"]),
        ["cut off in the middle"] = (() => ProfileJson.PulseWidthText[..200], ["invalid JSON", "(line "]),
        ["a field given twice"] = (() => ProfileJson.FskText.Replace("\"baud\": 500", "\"baud\": 500, \"baud\": 300", StringComparison.Ordinal), ["a field given twice", "fsk"]),
        ["an array instead of an object"] = (() => "[1, 2, 3]", ["invalid JSON"]),
        ["JSON null"] = (() => "null", ["holds no profile object"]),
        ["nested 1000 deep"] = (() => "{\"id\":" + new string('[', 1000) + new string(']', 1000) + "}", ["invalid JSON", "at id"]),
        ["a number where text belongs"] = (() => Edit(ProfileJson.PulseWidth(), "name", 42), ["invalid JSON or a value of the wrong type", "at name"]),
        ["text where a number belongs"] = (() => Edit(ProfileJson.Fsk(), "fsk.baud", "fast"), ["wrong type", "at fsk.baud"]),
        ["a number too large for a double"] = (() => ProfileJson.FskText.Replace("\"baud\": 500", "\"baud\": 1e400", StringComparison.Ordinal), ["fsk.baud"]),
        ["a line break escaped into a field name"] = (() => ProfileJson.FskText.Replace("\"baud\": 500", "\"ba\\nud\": 500", StringComparison.Ordinal), ["an unknown field", @"ba\u000aud"]),
        ["a line break escaped into a value"] = (() => Edit(ProfileJson.PulseWidth(), "family", "pulse-\nwidth"), [@"family must be pulse-width, fsk or biphase, not 'pulse-\u000awidth'"]),
        ["an unknown field"] = (() => Edit(ProfileJson.PulseWidth(), "pulseWidth.tolerance", 0.1), ["an unknown field", "tolerance"]),
        ["missing id"] = (() => Without(ProfileJson.PulseWidth(), "id"), ["id is required"]),
        ["missing family"] = (() => Without(ProfileJson.PulseWidth(), "family"), ["family is required"]),
        ["missing framing"] = (() => Without(ProfileJson.Fsk(), "framing"), ["framing is required"]),
        ["missing layout"] = (() => Without(ProfileJson.Biphase(), "layout"), ["layout is required"]),
        ["missing pulse classes"] = (() => Without(ProfileJson.PulseWidth(), "pulseWidth.classes"), ["pulseWidth.classes must list at least two pulse classes"]),
        ["missing duration of a pulse class"] = (() => Without(ProfileJson.PulseWidth(), "pulseWidth.classes[1].microseconds"), ["pulseWidth.classes[1].microseconds is required"]),
        ["missing fsk section"] = (() => Without(ProfileJson.Fsk(), "fsk"), ["fsk is required for the fsk family"]),
        ["missing baud"] = (() => Without(ProfileJson.Fsk(), "fsk.baud"), ["fsk.baud is required"]),
        ["missing checksum algorithm"] = (() => Without(ProfileJson.PulseWidth(), "layout.checksum.algorithm"), ["layout.checksum.algorithm is required"]),
        ["zero pulse duration"] = (() => Edit(ProfileJson.PulseWidth(), "pulseWidth.classes[0].microseconds", 0), ["pulseWidth.classes[0].microseconds must be above 0", "not 0"]),
        ["negative pulse duration"] = (() => Edit(ProfileJson.PulseWidth(), "pulseWidth.classes[0].microseconds", -250), ["must be above 0", "not -250"]),
        ["zero biphase cell"] = (() => Edit(ProfileJson.Biphase(), "biphase.cellMicroseconds", 0), ["biphase.cellMicroseconds must be above 0"]),
        ["zero baud"] = (() => Edit(ProfileJson.Fsk(), "fsk.baud", 0), ["fsk.baud must be above 0"]),
        ["negative tone"] = (() => Edit(ProfileJson.Fsk(), "fsk.markHz", -2000), ["fsk.markHz must be above 0"]),
        ["negative lead-in time of an fsk profile"] = (() => Edit(ProfileJson.Fsk(), "fsk.leadInMinimumSeconds", -1), ["fsk.leadInMinimumSeconds must be between 0 and 60"]),
        ["zero lead-in of the recording"] = (() => Edit(ProfileJson.PulseWidth(), "recording.leadInSeconds", 0), ["recording.leadInSeconds must be above 0"]),
        ["negative block gap"] = (() => Edit(ProfileJson.PulseWidth(), "recording.blockGapSeconds", -0.5), ["recording.blockGapSeconds must be above 0"]),
        ["a lead-in of a billion seconds"] = (() => Edit(ProfileJson.PulseWidth(), "recording.leadInSeconds", 1e9), ["recording.leadInSeconds must be above 0 and at most 600"]),
        ["two pulse classes of one duration"] = (() => Edit(ProfileJson.PulseWidth(), "pulseWidth.classes[1].microseconds", 250), ["'short' and 'long' overlap", "25 %"]),
        ["pulse classes 10 % apart"] = (() => Edit(ProfileJson.PulseWidth(), "pulseWidth.classes[2].microseconds", 550), ["'long' and 'mark' overlap"]),
        ["an unknown checksum name"] = (() => Edit(ProfileJson.PulseWidth(), "layout.checksum.algorithm", "crc99"), ["unknown checksum 'crc99'", "crc16-xmodem"]),
        ["a checksum name in capitals"] = (() => Edit(ProfileJson.Fsk(), "layout.checksum.algorithm", "XOR8"), ["unknown checksum 'XOR8'"]),
        ["a block length of 10^9"] = (() => Edit(ProfileJson.Biphase(), "layout.payloadBytes", 1_000_000_000), ["layout.payloadBytes must be between 1 and 1048576, not 1000000000"]),
        ["a maximum block length of 10^9"] = (() => Edit(ProfileJson.PulseWidth(), "layout.maximumPayloadBytes", 1_000_000_000), ["layout.maximumPayloadBytes must be between 1 and 1048576"]),
        ["a block length of 10^10"] = (() => ProfileJson.BiphaseText.Replace("\"payloadBytes\": 64", "\"payloadBytes\": 10000000000", StringComparison.Ordinal), ["wrong type", "layout.payloadBytes"]),
        ["a header field of 10^9 bytes"] = (() => Edit(ProfileJson.PulseWidth(), "layout.header[0].bytes", 1_000_000_000), ["layout.header[0].bytes must be between 1 and 4"]),
        ["a lead-in count of 10^9"] = (() => Edit(ProfileJson.PulseWidth(), "pulseWidth.leadIn.minimumCount", 1_000_000_000), ["pulseWidth.leadIn.minimumCount must be between 8 and 100 000"]),
        ["10^9 copies of each block"] = (() => Edit(ProfileJson.Fsk(), "layout.copies", 1_000_000_000), ["layout.copies must be between 1 and 8"]),
        ["text over the size limit"] = (() => new string(' ', ProfileLoader.MaximumFileBytes + 1), ["longer than 262144 characters"]),
    };

    public static TheoryData<string> Names() => [.. Cases.Keys];

    [Theory]
    [MemberData(nameof(Names))]
    public void Parse_RefusesWithOneSentenceNamingTheField(string name)
    {
        var (text, expected) = Cases[name];

        var error = Assert.Throws<ProfileException>(() => ProfileLoader.Parse(text(), "broken.json"));

        Refusal.AssertOneSentence(error, expected);
    }

    [Fact]
    public void Parse_AcceptsCommentsAndTrailingCommas_WhichHandWrittenProfilesUse()
    {
        // Profiles are written by hand: the loader skips comments and allows a trailing comma, and says so in docs/profiles.md.
        string text = "// a tone format\n" + ProfileJson.FskText.Replace("\"baud\": 500 }", "\"baud\": 500, /* per second */ }", StringComparison.Ordinal);

        var profile = ProfileLoader.Parse(text, "commented.json");

        Assert.Equal(500, profile.Fsk!.Baud);
    }

    [Fact]
    public void Load_RefusesAFileOverTheSizeLimit_BeforeReadingIt()
    {
        string path = Path.Combine(folder, "huge.json");
        File.WriteAllBytes(path, new byte[ProfileLoader.MaximumFileBytes + 1]);

        var error = Assert.Throws<ProfileException>(() => ProfileLoader.Load(path));

        Refusal.AssertOneSentence(error, "huge.json", "262145 bytes", "at most 262144 bytes");
    }

    [Fact]
    public void Load_RefusesBytesThatAreNotUtf8Text()
    {
        string path = Path.Combine(folder, "binary.json");
        File.WriteAllBytes(path, [0xFF, 0xFE, 0x00, 0x7B, 0xC3, 0x28, 0x80, 0x81]);

        var error = Assert.Throws<ProfileException>(() => ProfileLoader.Load(path));

        Refusal.AssertOneSentence(error, "binary.json", "invalid JSON");
    }

    public void Dispose() => Directory.Delete(folder, recursive: true);

    private static string Edit(JsonObject root, string path, JsonNode? value) => ProfileJson.With(root, path, value).ToJsonString();

    private static string Without(JsonObject root, string path) => ProfileJson.Without(root, path).ToJsonString();
}
