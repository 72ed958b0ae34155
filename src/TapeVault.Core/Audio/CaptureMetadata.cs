using System.Buffers.Binary;
using System.Globalization;
using System.Text;
using System.Xml;

namespace TapeVault.Core.Audio;

/// <summary>
/// The fields of a Broadcast WAV <c>bext</c> chunk (EBU Tech 3285, versions 0 to 2), as the file holds them.
/// Text fields are cut at their first NUL and trimmed.
/// </summary>
/// <param name="Description">Free description of the recording (256 bytes in the file).</param>
/// <param name="Originator">Who made the recording (32 bytes).</param>
/// <param name="OriginatorReference">The originator's own reference for it (32 bytes).</param>
/// <param name="OriginationDate">Date of creation as written, <c>yyyy-mm-dd</c> (10 bytes).</param>
/// <param name="OriginationTime">Time of creation as written, <c>hh:mm:ss</c> (8 bytes).</param>
/// <param name="TimeReference">First sample's count of samples since midnight (two 32-bit words, low first).</param>
/// <param name="Version">The bext version number (0, 1 or 2).</param>
/// <param name="Umid">The SMPTE UMID (64 bytes) as lower-case hex, empty when all zero (version 1 and later).</param>
/// <param name="Loudness">The loudness fields of version 2, or null for older versions.</param>
/// <param name="CodingHistory">The coding history text (variable length, lines ending CR LF).</param>
public sealed record BroadcastExtension(
    string Description,
    string Originator,
    string OriginatorReference,
    string OriginationDate,
    string OriginationTime,
    ulong TimeReference,
    int Version,
    string Umid,
    BroadcastLoudness? Loudness,
    string CodingHistory);

/// <summary>The loudness fields of a version-2 <c>bext</c> chunk, in the file's units (hundredths of LU, LUFS or dBTP).</summary>
public sealed record BroadcastLoudness(short LoudnessValue, short LoudnessRange, short MaxTruePeakLevel, short MaxMomentaryLoudness, short MaxShortTermLoudness);

/// <summary>What a capture's own metadata says about how it was made, offered to the curator to confirm.</summary>
/// <param name="Deck">The playback machine, from the coding history's analogue line (<c>T=</c>), empty when unknown.</param>
/// <param name="Operator">Who captured it (bext Originator, else iXML USER), empty when unknown.</param>
/// <param name="CapturedOn">The origination date, when it is a real date.</param>
/// <param name="Notes">The description (bext Description, else iXML NOTE), empty when none.</param>
public sealed record CaptureDetailsSuggestion(string Deck, string Operator, DateOnly? CapturedOn, string Notes)
{
    /// <summary>True when the file suggests nothing at all.</summary>
    public bool IsEmpty => Deck.Length == 0 && Operator.Length == 0 && CapturedOn is null && Notes.Length == 0;
}

/// <summary>
/// The metadata chunks a capture file carries besides its audio: Broadcast WAV <c>bext</c> (EBU Tech 3285) and
/// <c>iXML</c> text, or the Vorbis comments of a FLAC file (RFC 9639, section 8.6).
/// </summary>
public sealed record CaptureMetadata
{
    /// <summary>Longest coding history kept: real histories are a few lines (common practice); more means a damaged chunk.</summary>
    public const int MaxCodingHistoryBytes = 64 * 1024;

    /// <summary>Longest iXML chunk kept (common practice: real ones are a few kilobytes).</summary>
    public const int MaxIxmlBytes = 1024 * 1024;

    /// <summary>Size of the fixed part of a bext chunk: EBU Tech 3285's field table up to the coding history.</summary>
    public const int BextFixedBytes = 602;

    /// <summary>A file without any metadata chunk.</summary>
    public static CaptureMetadata None { get; } = new();

    /// <summary>The bext chunk, when the file has one.</summary>
    public BroadcastExtension? Bext { get; init; }

    /// <summary>The iXML chunk's text, when the file has one.</summary>
    public string? Ixml { get; init; }

    /// <summary>FLAC Vorbis comments as <c>NAME=value</c> lines, when the file has them.</summary>
    public IReadOnlyList<string> Comments { get; init; } = [];

    /// <summary>True when the file carries no metadata chunk.</summary>
    public bool IsEmpty => Bext is null && Ixml is null && Comments.Count == 0;

    /// <summary>The deck, operator, date and notes the metadata suggests; the curator decides whether to use them.</summary>
    public CaptureDetailsSuggestion Suggestion()
    {
        string deck = Bext is null ? string.Empty : DeckFromCodingHistory(Bext.CodingHistory);
        string who = Bext?.Originator ?? string.Empty;
        string notes = Bext?.Description ?? string.Empty;
        DateOnly? date = Bext is null ? null : ParseDate(Bext.OriginationDate);
        if (Ixml is not null)
        {
            IReadOnlyDictionary<string, string> fields = IxmlFields(Ixml);
            who = who.Length > 0 ? who : fields.GetValueOrDefault("USER", string.Empty);
            notes = notes.Length > 0 ? notes : fields.GetValueOrDefault("NOTE", string.Empty);
        }

        foreach (string comment in Comments)
        {
            int eq = comment.IndexOf('=', StringComparison.Ordinal);
            string name = comment[..eq].ToUpperInvariant();
            string value = comment[(eq + 1)..].Trim();
            if (name == "DATE" && date is null)
            {
                date = ParseDate(value);
            }
            else if (name is "DESCRIPTION" or "COMMENT" && notes.Length == 0)
            {
                notes = value;
            }
        }

        return new CaptureDetailsSuggestion(deck, who, date, notes);
    }

    /// <summary>
    /// Reads a bext chunk body laid out as EBU Tech 3285's field table says: Description 256 bytes, Originator 32,
    /// OriginatorReference 32, OriginationDate 10, OriginationTime 8, TimeReference two 32-bit words, Version 16 bits,
    /// UMID 64 bytes, five 16-bit loudness fields (version 2), 180 reserved bytes, then the coding history.
    /// </summary>
    /// <exception cref="CaptureFormatException">The chunk is shorter than its fixed part or its coding history is implausibly long.</exception>
    public static BroadcastExtension ParseBext(ReadOnlySpan<byte> body)
    {
        if (body.Length < BextFixedBytes)
        {
            throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                $"The Broadcast WAV (bext) chunk is {body.Length} bytes, shorter than the {BextFixedBytes} bytes of its fixed fields, so it is damaged."));
        }

        CheckCodingHistoryLength(body.Length - BextFixedBytes);
        int version = BinaryPrimitives.ReadUInt16LittleEndian(body[346..348]);
        ReadOnlySpan<byte> umid = body[348..412];
        BroadcastLoudness? loudness = version >= 2
            ? new BroadcastLoudness(
                BinaryPrimitives.ReadInt16LittleEndian(body[412..414]),
                BinaryPrimitives.ReadInt16LittleEndian(body[414..416]),
                BinaryPrimitives.ReadInt16LittleEndian(body[416..418]),
                BinaryPrimitives.ReadInt16LittleEndian(body[418..420]),
                BinaryPrimitives.ReadInt16LittleEndian(body[420..422]))
            : null;
        ulong timeReference = BinaryPrimitives.ReadUInt32LittleEndian(body[338..342])
            | ((ulong)BinaryPrimitives.ReadUInt32LittleEndian(body[342..346]) << 32);
        return new BroadcastExtension(
            Text(body[0..256]),
            Text(body[256..288]),
            Text(body[288..320]),
            Text(body[320..330]),
            Text(body[330..338]),
            timeReference,
            version,
            umid.ContainsAnyExcept((byte)0) ? Convert.ToHexStringLower(umid) : string.Empty,
            loudness,
            Text(body[BextFixedBytes..], keepLines: true));
    }

    /// <summary>Refuses a coding history longer than <see cref="MaxCodingHistoryBytes"/> with one sentence.</summary>
    internal static void CheckCodingHistoryLength(long bytes)
    {
        if (bytes > MaxCodingHistoryBytes)
        {
            throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                $"The Broadcast WAV (bext) chunk's coding history is {bytes} bytes, far more than the {MaxCodingHistoryBytes} bytes a real one needs, so the chunk is damaged."));
        }
    }

    /// <summary>Reads an iXML chunk body as UTF-8 text, cut at the first NUL (writers pad the chunk).</summary>
    internal static string ParseIxml(ReadOnlySpan<byte> body)
    {
        int nul = body.IndexOf((byte)0);
        return System.Text.Encoding.UTF8.GetString(nul >= 0 ? body[..nul] : body).Trim();
    }

    /// <summary>
    /// The device named by the first analogue line of a coding history (EBU R 98: <c>A=ANALOGUE,...,T=device</c>),
    /// else by the first line's <c>T=</c> text.
    /// </summary>
    internal static string DeckFromCodingHistory(string history)
    {
        string first = string.Empty;
        foreach (string rawLine in history.Split('\n'))
        {
            string line = rawLine.Trim();
            string? device = null;
            bool analogue = false;
            foreach (string part in line.Split(','))
            {
                string p = part.Trim();
                if (p.StartsWith("A=", StringComparison.OrdinalIgnoreCase))
                {
                    analogue = p[2..].Trim().StartsWith("ANALOG", StringComparison.OrdinalIgnoreCase);
                }
                else if (p.StartsWith("T=", StringComparison.OrdinalIgnoreCase))
                {
                    device = p[2..].Trim().TrimEnd(';').Trim();
                }
            }

            if (device is { Length: > 0 })
            {
                if (analogue)
                {
                    return device;
                }

                if (first.Length == 0)
                {
                    first = device;
                }
            }
        }

        return first;
    }

    /// <summary>A date written <c>yyyy-mm-dd</c> (Tech 3285 allows any of <c>- _ : space .</c> as separator), else null.</summary>
    internal static DateOnly? ParseDate(string text)
    {
        if (text.Length < 10)
        {
            return null;
        }

        string normal = $"{text[..4]}-{text[5..7]}-{text[8..10]}";
        return DateOnly.TryParseExact(normal, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out DateOnly date) ? date : null;
    }

    /// <summary>The text of the top-level elements under BWFXML (NOTE, USER, PROJECT, TAPE, ...); empty when the XML is not well formed.</summary>
    internal static IReadOnlyDictionary<string, string> IxmlFields(string xml)
    {
        var fields = new Dictionary<string, string>(StringComparer.Ordinal);
        var settings = new XmlReaderSettings { DtdProcessing = DtdProcessing.Prohibit, XmlResolver = null, MaxCharactersInDocument = MaxIxmlBytes * 2L };
        try
        {
            using var reader = XmlReader.Create(new StringReader(xml), settings);
            reader.MoveToContent();
            while (!reader.EOF)
            {
                if (reader.NodeType == XmlNodeType.Element && reader.Depth == 1 && !reader.IsEmptyElement)
                {
                    string name = reader.LocalName;
                    string value = reader.ReadInnerXml();
                    if (!value.Contains('<', StringComparison.Ordinal))
                    {
                        fields.TryAdd(name.ToUpperInvariant(), System.Net.WebUtility.HtmlDecode(value).Trim());
                    }

                    continue;
                }

                reader.Read();
            }
        }
        catch (XmlException)
        {
            // The chunk is kept as text; a broken one just suggests nothing.
        }

        return fields;
    }

    private static string Text(ReadOnlySpan<byte> field, bool keepLines = false)
    {
        int nul = field.IndexOf((byte)0);
        ReadOnlySpan<byte> used = nul >= 0 ? field[..nul] : field;
        var text = new StringBuilder(used.Length);
        foreach (byte b in used)
        {
            // Tech 3285 fields are ASCII; anything else is kept as its Latin-1 character, controls dropped.
            char c = (char)b;
            if (c >= ' ' && c != '\x7F')
            {
                text.Append(c);
            }
            else if (keepLines && c == '\n')
            {
                text.Append('\n');
            }
        }

        return text.ToString().Trim();
    }
}
