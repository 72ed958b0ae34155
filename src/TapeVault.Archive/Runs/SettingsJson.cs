using System.Text.Json;
using System.Text.Json.Serialization;
using TapeVault.Core.Detection;

namespace TapeVault.Archive.Runs;

/// <summary>Detector settings to and from the JSON kept with each decode run and job.</summary>
public static class SettingsJson
{
    public static JsonSerializerOptions Options { get; } = new(JsonSerializerDefaults.Web)
    {
        Converters = { new JsonStringEnumConverter(JsonNamingPolicy.KebabCaseLower) },
    };

    public static string Write(IReadOnlyList<DetectorSetting> settings) => JsonSerializer.Serialize(settings, Options);

    public static IReadOnlyList<DetectorSetting> Read(string json) =>
        JsonSerializer.Deserialize<List<DetectorSetting>>(json, Options) ?? [];
}
