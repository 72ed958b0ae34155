namespace TapeVault.Core.Formats;

public enum FormatFamily
{
    /// <summary>Bits are coded as lengths of whole cycles (pulse classes).</summary>
    PulseWidth,

    /// <summary>Bits are coded as tones (frequency-shift keying), framed like a serial line.</summary>
    Fsk,

    /// <summary>Every bit cell has a mid-cell transition whose direction gives the bit (Manchester).</summary>
    Biphase,
}

public enum BitOrder
{
    LsbFirst,
    MsbFirst,
}

public enum Parity
{
    None,
    Even,
    Odd,
}

public enum FieldRole
{
    /// <summary>Carried but not interpreted.</summary>
    Other,

    /// <summary>The name of the file the block belongs to (ASCII, padded with spaces or zeros).</summary>
    FileName,

    /// <summary>A number identifying the file.</summary>
    FileId,

    /// <summary>The block's number within its file.</summary>
    BlockNumber,

    /// <summary>The length of the payload in bytes.</summary>
    PayloadLength,

    /// <summary>
    /// Bytes the format writes to mark where a block begins, with the values it expects (<see cref="HeaderField.Expected"/>,
    /// one per copy where the copies differ). They carry no data; a check covers them only where its coverage names them.
    /// </summary>
    Sync,
}

public enum ChecksumCoverage
{
    /// <summary>Every header field and the payload.</summary>
    HeaderAndPayload,

    /// <summary>The payload only.</summary>
    Payload,

    /// <summary>The fields named in <see cref="ChecksumSpec.CoveredFields"/>, in tape order.</summary>
    Fields,
}

/// <summary>A named pulse class: a whole cycle of a nominal duration.</summary>
public sealed record PulseClass(string Name, double Seconds);

public sealed partial record PulseWidthEncoding(
    IReadOnlyList<PulseClass> Classes,
    IReadOnlyList<string> Zero,
    IReadOnlyList<string> One,
    string LeadInClass,
    int LeadInMinimum,
    IReadOnlyList<string> Sync);

public sealed record FskEncoding(double MarkHz, double SpaceHz, double Baud, double LeadInMinimumSeconds)
{
    public double BitSeconds => 1.0 / Baud;

    /// <summary>
    /// A lead-in of repeated characters instead of mark tone (see <see cref="CharacterLeadIn"/>); null when the
    /// lead-in is mark tone of <see cref="LeadInMinimumSeconds"/>.
    /// </summary>
    public CharacterLeadIn? LeadInCharacters { get; init; }
}

public sealed record BiphaseEncoding(double CellSeconds, bool OneIsFalling, int LeadInMinimumBits, string SyncBits)
{
    /// <summary>The lead-in's bit pattern, repeated: <c>0</c> (the first language's zeros), <c>1</c>, or <c>01</c> (alternating bits).</summary>
    public string LeadInBits { get; init; } = BitPatterns.Zeros;
}

public sealed record ByteFraming(int DataBits, BitOrder BitOrder, string StartBits, string StopBits, Parity Parity)
{
    public int BitsPerByte => StartBits.Length + DataBits + (Parity == Parity.None ? 0 : 1) + StopBits.Length;

    /// <summary>Where the <paramref name="index"/>-th data bit on tape goes in the byte (a left shift).</summary>
    public int DataBitShift(int index) => BitOrder == BitOrder.LsbFirst ? index : DataBits - 1 - index;

    /// <summary>The parity bit a writer adds after data bits holding <paramref name="dataOnes"/> ones.</summary>
    public bool ParityBit(int dataOnes) => Parity == Parity.Even ? (dataOnes & 1) == 1 : (dataOnes & 1) == 0;

    /// <summary>Whether data and parity bits holding <paramref name="ones"/> ones between them satisfy the parity.</summary>
    public bool ParityHolds(int ones) => Parity switch
    {
        Parity.Even => (ones & 1) == 0,
        Parity.Odd => (ones & 1) == 1,
        _ => true,
    };
}

public sealed record HeaderField(string Name, int Bytes, FieldRole Role, bool BigEndian)
{
    /// <summary>
    /// For a <see cref="FieldRole.Sync"/> field: the bytes it must hold, one entry per copy of the block (entry c for
    /// copy c), or a single entry that every copy holds. Empty for other roles.
    /// </summary>
    public IReadOnlyList<System.Collections.Immutable.ImmutableArray<byte>> Expected { get; init; } = [];

    /// <summary>
    /// The value a stored 0 stands for (a one-byte length where 0 means 256), or null when 0 means 0. Only for the
    /// roles payload-length and other; <see cref="Blocks.BlockLayoutCodec"/> applies it when it reads or writes the field.
    /// </summary>
    public long? ZeroMeans { get; init; }

    // Two fields that expect the same bytes are the same field: compare what the lists hold, not the lists.
    public bool Equals(HeaderField? other)
    {
        if (other is null || Name != other.Name || Bytes != other.Bytes || Role != other.Role || BigEndian != other.BigEndian
            || ZeroMeans != other.ZeroMeans || Expected.Count != other.Expected.Count)
        {
            return false;
        }

        for (int i = 0; i < Expected.Count; i++)
        {
            if (!Expected[i].AsSpan().SequenceEqual(other.Expected[i].AsSpan()))
            {
                return false;
            }
        }

        return true;
    }

    public override int GetHashCode() => HashCode.Combine(Name, Bytes, Role, BigEndian, ZeroMeans, Expected.Count);
}

/// <summary>
/// The check value of a block: the checksum (<see cref="Algorithm"/>, a catalogue name or the canonical text of its
/// parameters, see <see cref="Checksums.ChecksumCatalog"/>), the bytes it covers, and the byte order it is stored in
/// after the payload.
/// </summary>
public sealed record ChecksumSpec(string Algorithm, ChecksumCoverage Covers, bool BigEndian)
{
    /// <summary>The name that stands for the payload in <see cref="CoveredFields"/>.</summary>
    public const string PayloadName = "payload";

    /// <summary>
    /// With <see cref="ChecksumCoverage.Fields"/>: the header fields the check covers, by name, in tape order, with
    /// <see cref="PayloadName"/> for the payload. Empty for the other coverages.
    /// </summary>
    public IReadOnlyList<string> CoveredFields { get; init; } = [];

    /// <summary>The checksum itself, built once per model (<see cref="Checksums.ChecksumCatalog.Get"/>).</summary>
    public Checksums.IBlockChecksum Resolve() => Checksums.ChecksumCatalog.Get(Algorithm);

    public bool Equals(ChecksumSpec? other) =>
        other is not null && Algorithm == other.Algorithm && Covers == other.Covers && BigEndian == other.BigEndian
        && CoveredFields.SequenceEqual(other.CoveredFields);

    public override int GetHashCode() => HashCode.Combine(Algorithm, Covers, BigEndian, CoveredFields.Count);
}

/// <summary>
/// How bytes make blocks. A layout without header, fixed payload length or checksum is a stream: everything
/// from a block start to the next idle line or loss of signal is one unchecked block.
/// </summary>
public sealed partial record BlockLayout(
    IReadOnlyList<HeaderField> Header,
    int? PayloadBytes,
    int MaximumPayloadBytes,
    ChecksumSpec? Checksum,
    int Copies)
{
    public bool IsStream => Header.Count == 0 && PayloadBytes is null && Checksum is null;

    public int HeaderBytes
    {
        get
        {
            int total = 0;
            foreach (var headerField in Header)
            {
                total += headerField.Bytes;
            }

            return total;
        }
    }

    public HeaderField? FieldWithRole(FieldRole role)
    {
        foreach (var headerField in Header)
        {
            if (headerField.Role == role)
            {
                return headerField;
            }
        }

        return null;
    }
}

/// <summary>How a writer lays the format down on tape; the synthesiser follows it.</summary>
public sealed record RecordingLayout(double LeadInSeconds, double BlockGapSeconds, double TrailerSeconds);

/// <summary>A complete, validated format profile. Build one with <see cref="ProfileLoader"/>.</summary>
public sealed partial record FormatProfile(
    string Id,
    string Name,
    string Description,
    FormatFamily Family,
    PulseWidthEncoding? PulseWidth,
    FskEncoding? Fsk,
    BiphaseEncoding? Biphase,
    ByteFraming Framing,
    BlockLayout Layout,
    RecordingLayout Recording);
