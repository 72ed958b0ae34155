using System.Text.Json;
using System.Text.Json.Serialization;
using TapeVault.Core.Audio;

namespace TapeVault.Archive.Ingest;

/// <summary>
/// A capture file's own metadata as the archive keeps it (the <see cref="Entities.Capture.EmbeddedMetadata"/> column,
/// the capture's record in a bag's item.json, the API): the Broadcast WAV bext fields, the iXML text, FLAC comments,
/// and the deck, operator, date and notes they suggest for the curator to confirm.
/// </summary>
public sealed record EmbeddedMetadata(
    BroadcastExtension? Bext,
    string? Ixml,
    IReadOnlyList<string> Comments,
    CaptureDetailsSuggestion Suggestion)
{
    private static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web)
    {
        DefaultIgnoreCondition = JsonIgnoreCondition.WhenWritingNull,
    };

    /// <summary>The archive's form of what a reader found; null when the file carries no metadata.</summary>
    public static EmbeddedMetadata? From(CaptureMetadata metadata)
    {
        ArgumentNullException.ThrowIfNull(metadata);
        return metadata.IsEmpty ? null : new EmbeddedMetadata(metadata.Bext, metadata.Ixml, metadata.Comments, metadata.Suggestion());
    }

    /// <summary>The JSON stored in the capture's row; empty for none.</summary>
    public static string ToJson(EmbeddedMetadata? metadata) => metadata is null ? string.Empty : JsonSerializer.Serialize(metadata, Json);

    /// <summary>Reads the stored JSON back; null when the capture's file carried no metadata.</summary>
    public static EmbeddedMetadata? Parse(string? json) =>
        string.IsNullOrEmpty(json) ? null : JsonSerializer.Deserialize<EmbeddedMetadata>(json, Json);
}
