using System.Text.Json;
using System.Text.Json.Serialization;

namespace TapeVault.Core.Formats;

// The JSON shape of a profile file, as written by people. Every property is nullable so that the loader can say
// which field is missing instead of failing inside the serializer. See docs/profiles.md.
internal sealed class ProfileDocument
{
    public string? Id { get; set; }
    public string? Name { get; set; }
    public string? Description { get; set; }
    public string? Family { get; set; }
    public PulseWidthDocument? PulseWidth { get; set; }
    public FskDocument? Fsk { get; set; }
    public BiphaseDocument? Biphase { get; set; }
    public FramingDocument? Framing { get; set; }
    public LayoutDocument? Layout { get; set; }
    public RecordingDocument? Recording { get; set; }
}

internal sealed class PulseClassDocument
{
    public string? Name { get; set; }
    public double? Microseconds { get; set; }
}

internal sealed class LeadInDocument
{
    public string? Class { get; set; }
    public int? MinimumCount { get; set; }
}

internal sealed class PulseWidthDocument
{
    public List<PulseClassDocument?>? Classes { get; set; }
    public List<string?>? Zero { get; set; }
    public List<string?>? One { get; set; }
    public LeadInDocument? LeadIn { get; set; }
    public List<string?>? Sync { get; set; }

    // "cycles" (default) or "half-cycles": what a class's duration measures.
    public string? Pulses { get; set; }
    public MarkersDocument? Markers { get; set; }
    public BlockGapDocument? BlockGap { get; set; }
}

internal sealed class MarkersDocument
{
    public List<string?>? BeforeByte { get; set; }
    public List<string?>? AfterByte { get; set; }
    public List<string?>? EndOfBlock { get; set; }
}

internal sealed class BlockGapDocument
{
    public int? Count { get; set; }
}

internal sealed class FskDocument
{
    public double? MarkHz { get; set; }
    public double? SpaceHz { get; set; }
    public double? Baud { get; set; }
    public double? LeadInMinimumSeconds { get; set; }
    public FskLeadInDocument? LeadIn { get; set; }
}

// A lead-in of repeated characters: the character as a number ("0x16" or 22), and how many make a lead-in.
internal sealed class FskLeadInDocument
{
    public JsonElement? Character { get; set; }
    public int? MinimumCount { get; set; }
}

// A lead-in as a repeated bit pattern ("0", "1" or "01") and how many bits make a lead-in.
internal sealed class BiphaseLeadInDocument
{
    public string? Bits { get; set; }
    public int? MinimumBits { get; set; }
}

internal sealed class BiphaseDocument
{
    public double? CellMicroseconds { get; set; }
    public string? OneIs { get; set; }
    public int? LeadInMinimumBits { get; set; }
    public BiphaseLeadInDocument? LeadIn { get; set; }
    public string? SyncBits { get; set; }
}

internal sealed class FramingDocument
{
    public int? DataBits { get; set; }
    public string? BitOrder { get; set; }
    public string? StartBits { get; set; }
    public string? StopBits { get; set; }
    public string? Parity { get; set; }
}

internal sealed class HeaderFieldDocument
{
    public string? Name { get; set; }
    public int? Bytes { get; set; }
    public string? Role { get; set; }
    public string? Endian { get; set; }

    // A sync field's expected bytes: one hex text per copy ("89 88 87"), or one for all copies.
    public List<string?>? Expect { get; set; }

    // The value a stored 0 stands for (a length where 0 means 256).
    public long? ZeroMeans { get; set; }
}

internal sealed class ChecksumDocument
{
    public string? Algorithm { get; set; }
    public CrcDocument? Crc { get; set; }
    public SumDocument? Sum { get; set; }
    public XorDocument? Xor { get; set; }

    // A keyword (header-and-payload, payload) or a list of field names.
    public JsonElement? Covers { get; set; }
    public string? Endian { get; set; }
}

internal sealed class CrcDocument
{
    public int? Width { get; set; }

    // Numbers written as text ("0x1021") or as JSON numbers.
    public JsonElement? Poly { get; set; }
    public JsonElement? Init { get; set; }
    public bool? Refin { get; set; }
    public bool? Refout { get; set; }
    public JsonElement? Xorout { get; set; }
}

internal sealed class SumDocument
{
    public int? Bits { get; set; }
    public string? Carry { get; set; }
    public string? Complement { get; set; }
    public string? Addend { get; set; }
}

internal sealed class XorDocument
{
}

internal sealed class LayoutDocument
{
    public List<HeaderFieldDocument?>? Header { get; set; }
    public int? PayloadBytes { get; set; }
    public int? MaximumPayloadBytes { get; set; }
    public ChecksumDocument? Checksum { get; set; }
    public int? Copies { get; set; }

    // Several block kinds in the order a file writes them, in place of header, payloadBytes and checksum.
    public List<BlockKindDocument?>? Kinds { get; set; }
}

internal sealed class BlockKindDocument
{
    public string? Name { get; set; }
    public List<HeaderFieldDocument?>? Header { get; set; }
    public int? PayloadBytes { get; set; }
    public int? MaximumPayloadBytes { get; set; }
    public PayloadLengthDocument? PayloadLength { get; set; }
    public ChecksumDocument? Checksum { get; set; }
}

internal sealed class PayloadLengthDocument
{
    // The kind whose block (the last one read before) carries the length.
    public string? Kind { get; set; }

    // A length field of that block; or a start and an end address, with the end inclusive or exclusive.
    public string? Field { get; set; }
    public string? Start { get; set; }
    public string? End { get; set; }
    public string? EndIs { get; set; }
}

internal sealed class RecordingDocument
{
    public double? LeadInSeconds { get; set; }
    public double? BlockGapSeconds { get; set; }
    public double? TrailerSeconds { get; set; }
}

[JsonSourceGenerationOptions(
    PropertyNamingPolicy = JsonKnownNamingPolicy.CamelCase,
    UnmappedMemberHandling = JsonUnmappedMemberHandling.Disallow,
    ReadCommentHandling = System.Text.Json.JsonCommentHandling.Skip,
    AllowTrailingCommas = true,

    // A field written twice is a typing mistake; taking the last value silently would hide it.
    AllowDuplicateProperties = false,
    MaxDepth = 16)]
[JsonSerializable(typeof(ProfileDocument))]
internal sealed partial class ProfileJsonContext : JsonSerializerContext;
