using System.Text.Json;
using System.Text.Json.Serialization;

namespace TapeVault.Core.Image;

// The JSON shape of a container's manifest, versions 1 and 2 (docs/image-format.md). Every property is nullable so that
// the reader can say which field is missing instead of failing inside the serializer; the writer fills every one of
// the version it writes. Property order here is the order in the file.
internal sealed class ManifestDocument
{
    public string? Format { get; set; }
    public int? FormatVersion { get; set; }
    public string? ProfileId { get; set; }
    public string? CodeVersion { get; set; }
    public DateTimeOffset? CreatedUtc { get; set; }
    public List<CaptureDocument?>? Captures { get; set; }
    public List<BlockDocument?>? Blocks { get; set; }
    public List<FileDocument?>? Files { get; set; }
}

internal sealed class CaptureDocument
{
    public string? Sha256 { get; set; }
    public string? FileName { get; set; }
    public int? SampleRate { get; set; }
    public int? Channels { get; set; }
    public double? DurationSeconds { get; set; }
}

internal sealed class BlockDocument
{
    public int? Position { get; set; }
    public string? Key { get; set; }
    public string? FileName { get; set; }
    public long? FileId { get; set; }
    public long? BlockNumber { get; set; }
    public string? Status { get; set; }
    public double? Confidence { get; set; }

    // Version 2 only: absent from a version 1 manifest (the writer of version 1 never wrote it; a reader of version 1
    // refuses it present), so it is left out when null.
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public double? KeyConfidence { get; set; }

    public int? AgreeingCaptures { get; set; }
    public long? Offset { get; set; }
    public long? HeaderLength { get; set; }
    public long? PayloadLength { get; set; }
    public string? Sha256 { get; set; }
    public List<SourceDocument?>? Sources { get; set; }
    public List<ConflictDocument?>? Conflicts { get; set; }
}

internal sealed class SourceDocument
{
    public string? CaptureSha256 { get; set; }
    public string? Setting { get; set; }
    public string? CodeVersion { get; set; }
    public double? StartSeconds { get; set; }
    public double? Confidence { get; set; }
}

internal sealed class ConflictDocument
{
    public long? Offset { get; set; }
    public long? Length { get; set; }
    public string? Sha256 { get; set; }
    public int? AgreeingCaptures { get; set; }
    public SourceDocument? Source { get; set; }
}

internal sealed class FileDocument
{
    public string? Name { get; set; }
    public long? Length { get; set; }
    public int? FirstPosition { get; set; }
    public int? BlockCount { get; set; }
    public bool? Complete { get; set; }
}

[JsonSourceGenerationOptions(
    PropertyNamingPolicy = JsonKnownNamingPolicy.CamelCase,
    UnmappedMemberHandling = JsonUnmappedMemberHandling.Disallow,
    DefaultIgnoreCondition = JsonIgnoreCondition.Never,
    ReadCommentHandling = JsonCommentHandling.Disallow,
    AllowTrailingCommas = false,
    AllowDuplicateProperties = false,
    MaxDepth = 16)]
[JsonSerializable(typeof(ManifestDocument))]
internal sealed partial class ManifestJsonContext : JsonSerializerContext;
