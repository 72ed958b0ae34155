using System.Buffers.Binary;
using System.Globalization;
using System.Text;

namespace TapeVault.Core.Audio;

/// <summary>What the header probe found: the format fields and where the audio lies.</summary>
/// <param name="Encoding"><c>"pcm"</c> or <c>"float"</c> (WAVE_FORMAT_EXTENSIBLE resolved to its sub-format).</param>
/// <param name="Channels">Channels declared by the fmt chunk.</param>
/// <param name="SampleRate">Sample rate declared by the fmt chunk.</param>
/// <param name="BlockAlign">Bytes per sample frame.</param>
/// <param name="BitsPerSample">Container bits per sample.</param>
/// <param name="DataOffset">File offset of the first audio byte.</param>
/// <param name="DeclaredDataBytes">Size of the data chunk as its header states it.</param>
/// <param name="AvailableDataBytes">Audio bytes actually present in the file (the declared size, cut at the end of the file).</param>
internal sealed record WavLayout(
    string Encoding,
    int Channels,
    int SampleRate,
    int BlockAlign,
    int BitsPerSample,
    long DataOffset,
    long DeclaredDataBytes,
    long AvailableDataBytes)
{
    /// <summary>The container: <c>"wav"</c> (RIFF), <c>"rf64"</c>, <c>"bw64"</c> or <c>"flac"</c>.</summary>
    public string Container { get; init; } = "wav";

    /// <summary>The metadata chunks the file carries (bext, iXML, FLAC comments).</summary>
    public CaptureMetadata Metadata { get; init; } = CaptureMetadata.None;

    /// <summary>The FLAC stream's STREAMINFO, for a FLAC file.</summary>
    public FlacStreamInfo? Flac { get; init; }

    /// <summary>Whole sample frames present in the file.</summary>
    public long FrameCount => AvailableDataBytes / BlockAlign;

    /// <summary>True when the header claims more audio than the file holds.</summary>
    public bool Truncated => DeclaredDataBytes > AvailableDataBytes;
}

/// <summary>
/// Walks the RIFF chunks of a WAV file the way NAudio's WaveFileReader does, so that everything the reader
/// would reject, or would accept but TapeVault cannot decode, is reported in one plain sentence before NAudio
/// opens the file. Reads only chunk headers and the fmt chunk.
/// </summary>
internal static class WavHeaderProbe
{
    /// <summary>Most channels a capture may have.</summary>
    public const int MaxChannels = 8;

    /// <summary>
    /// Highest sample rate a capture may have: 768 kHz is the ceiling of common audio interfaces (common practice).
    /// A higher figure is a damaged header, and the decoders size their windows by it.
    /// </summary>
    public const int MaxSampleRate = 768_000;

    /// <summary>Largest format chunk accepted: 40 bytes are needed, and a writer's extra bytes are tolerated up to this.</summary>
    private const long MaxFmtBytes = 1024;

    private const string Supported = "TapeVault reads PCM 8/16/24/32-bit and IEEE float";

    private const ushort FormatPcm = 0x0001;
    private const ushort FormatIeeeFloat = 0x0003;
    private const ushort FormatExtensible = 0xFFFE;

    // The tail that every KSDATAFORMAT_SUBTYPE GUID built from a format code shares:
    // {XXXXXXXX-0000-0010-8000-00AA00389B71}, bytes 4..15 as stored in the file.
    private static ReadOnlySpan<byte> SubFormatTail => [0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71];

    /// <summary>Reads the header from position 0 of <paramref name="stream"/> and validates it.</summary>
    /// <exception cref="CaptureFormatException">The file is not a WAV file TapeVault can decode.</exception>
    public static WavLayout Probe(Stream stream)
    {
        long fileLength = stream.Length;
        stream.Position = 0;
        Span<byte> head = stackalloc byte[WavSignature.Length];
        int got = ReadFully(stream, head);
        if (WavSignature.Problem(head[..got], fileLength) is { } problem)
        {
            throw new CaptureFormatException(problem);
        }

        if (head[..4].SequenceEqual("fLaC"u8))
        {
            return FlacStreamInfo.Probe(stream);
        }

        // RF64 (EBU Tech 3306) and BW64 (ITU-R BS.2088) keep 64-bit sizes in a ds64 chunk right after the header.
        bool bw64 = head[..4].SequenceEqual("BW64"u8);
        bool rf64 = bw64 || head[..4].SequenceEqual("RF64"u8);
        string container = bw64 ? "bw64" : rf64 ? "rf64" : "wav";
        string kind = bw64 ? "BW64" : "RF64";
        BroadcastExtension? bext = null;
        string? ixml = null;
        long rf64SampleCount = 0;

        long riffSize = BinaryPrimitives.ReadUInt32LittleEndian(head[4..8]);
        long rf64DataBytes = -1;
        Span<byte> chunkHeader = stackalloc byte[8];
        if (rf64)
        {
            Span<byte> ds64 = stackalloc byte[32];
            if (ReadFully(stream, ds64) < 32 || !ds64[..4].SequenceEqual("ds64"u8))
            {
                throw new CaptureFormatException($"The {kind} file has no valid ds64 chunk, so its size is unknown.");
            }

            // EBU Tech 3306 ds64: riffSize (64 bits), dataSize (64 bits), sampleCount (64 bits), table length, table.
            int ds64Size = BinaryPrimitives.ReadInt32LittleEndian(ds64[4..8]);
            riffSize = BinaryPrimitives.ReadInt64LittleEndian(ds64[8..16]);
            rf64DataBytes = BinaryPrimitives.ReadInt64LittleEndian(ds64[16..24]);
            rf64SampleCount = ds64Size >= 24 ? BinaryPrimitives.ReadInt64LittleEndian(ds64[24..32]) : 0;
            if (ds64Size < 24 || riffSize < 0 || rf64DataBytes < 0 || rf64SampleCount < 0)
            {
                throw new CaptureFormatException($"The {kind} file has a damaged ds64 chunk, so its size is unknown.");
            }

            if (riffSize + 8 != fileLength)
            {
                throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                    $"The {kind} file's ds64 chunk says the file is {riffSize + 8} bytes but it is {fileLength} bytes, so the file is cut off or its ds64 chunk is wrong."));
            }

            stream.Position = 8L + 12L + ds64Size;
        }

        FmtFields? fmt = null;
        long dataOffset = -1;
        long declaredData = 0;
        long availableData = 0;

        // Same walk as NAudio: stop at the RIFF end or the file end, whichever comes first, and need 8 bytes for a header.
        long stop = Math.Min(riffSize + 8, fileLength);
        long position = stream.Position;
        while (position <= stop - 8)
        {
            stream.Position = position;
            if (ReadFully(stream, chunkHeader) < 8)
            {
                break;
            }

            ReadOnlySpan<byte> id = chunkHeader[..4];
            long size = BinaryPrimitives.ReadUInt32LittleEndian(chunkHeader[4..8]);
            long body = position + 8;
            long next;
            if (id.SequenceEqual("data"u8))
            {
                // Readers disagree on which of two data chunks holds the audio (NAudio takes the last, SoX the first).
                if (dataOffset >= 0)
                {
                    throw new CaptureFormatException("The WAV file has two data chunks, so which one holds the audio is ambiguous.");
                }

                dataOffset = body;
                if (rf64 && size != uint.MaxValue && size != rf64DataBytes)
                {
                    throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                        $"The {kind} file's data chunk says {size} bytes but its ds64 chunk says {rf64DataBytes}, so the audio's length is ambiguous."));
                }

                if (rf64 && rf64DataBytes > fileLength - body)
                {
                    throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                        $"The {kind} file's ds64 chunk says the audio is {rf64DataBytes} bytes but only {fileLength - body} bytes follow the data chunk's header, so the ds64 chunk disagrees with the file."));
                }

                declaredData = rf64 ? rf64DataBytes : size;
                availableData = Math.Min(declaredData, fileLength - body);
                next = body + (rf64 ? declaredData : availableData);
            }
            else if (id.SequenceEqual("fmt "u8))
            {
                if (fmt is not null)
                {
                    throw new CaptureFormatException("The WAV file has two format (fmt) chunks, so its encoding is ambiguous.");
                }

                fmt = ReadFmt(stream, size, fileLength - body);
                next = body + size;
            }
            else if (id.SequenceEqual("bext"u8) && bext is null)
            {
                CaptureMetadata.CheckCodingHistoryLength(size - CaptureMetadata.BextFixedBytes);
                bext = CaptureMetadata.ParseBext(ReadBody(stream, size, fileLength - body, "Broadcast WAV (bext)"));
                next = body + size;
            }
            else if (id.SequenceEqual("iXML"u8) && ixml is null)
            {
                if (size > CaptureMetadata.MaxIxmlBytes)
                {
                    throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                        $"The WAV file's iXML chunk is {size} bytes, more than the {CaptureMetadata.MaxIxmlBytes} bytes TapeVault keeps, so the chunk is probably damaged."));
                }

                ixml = CaptureMetadata.ParseIxml(ReadBody(stream, size, fileLength - body, "iXML"));
                next = body + size;
            }
            else
            {
                if (size > fileLength - body)
                {
                    // NAudio stops here too: a damaged chunk at the end is tolerated if fmt and data came before it.
                    break;
                }

                next = body + size;
            }

            if (size % 2 != 0 && next < fileLength)
            {
                stream.Position = next;
                if (stream.ReadByte() == 0)
                {
                    next++;
                }
            }

            if (next <= position)
            {
                break;
            }

            position = next;
        }

        // NAudio, like this walk, stops at the end the RIFF header declares; say so when that is short of the file's end.
        string withinRiff = riffSize + 8 < fileLength
            ? string.Create(CultureInfo.InvariantCulture, $" within the {riffSize + 8} bytes its RIFF header declares (the file has {fileLength})")
            : string.Empty;
        if (fmt is null)
        {
            throw new CaptureFormatException($"The WAV file has no format (fmt) chunk{withinRiff}, so its encoding is unknown.");
        }

        FmtFields f = fmt.Value;
        string encoding = ResolveEncoding(f);
        if (f.Channels == 0)
        {
            throw new CaptureFormatException("The WAV file declares 0 audio channels.");
        }

        if (f.Channels > MaxChannels)
        {
            throw new CaptureFormatException($"The WAV file declares {f.Channels} audio channels; TapeVault reads at most {MaxChannels}.");
        }

        if (f.SampleRate == 0)
        {
            throw new CaptureFormatException("The WAV file declares a sample rate of 0 Hz.");
        }

        if (f.SampleRate > MaxSampleRate)
        {
            throw new CaptureFormatException($"The WAV file declares an impossible sample rate of {f.SampleRate} Hz; TapeVault reads at most {MaxSampleRate} Hz.");
        }

        int frameBytes = f.Channels * (f.BitsPerSample / 8);
        if (f.BlockAlign != frameBytes)
        {
            throw new CaptureFormatException(
                $"The WAV file's block alignment ({f.BlockAlign} bytes) does not match its {f.Channels} channel(s) of {f.BitsPerSample}-bit samples ({frameBytes} bytes).");
        }

        if (dataOffset < 0)
        {
            throw new CaptureFormatException($"The WAV file has no data chunk{withinRiff}, so it holds no audio samples.");
        }

        if (rf64 && rf64SampleCount != 0 && rf64SampleCount != rf64DataBytes / f.BlockAlign)
        {
            throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                $"The {kind} file's ds64 chunk counts {rf64SampleCount} sample frames but its {rf64DataBytes} audio bytes hold {rf64DataBytes / f.BlockAlign}, so the ds64 chunk disagrees with the file."));
        }

        var layout = new WavLayout(encoding, f.Channels, (int)f.SampleRate, f.BlockAlign, f.BitsPerSample, dataOffset, declaredData, availableData)
        {
            Container = container,
            Metadata = bext is null && ixml is null ? CaptureMetadata.None : new CaptureMetadata { Bext = bext, Ixml = ixml },
        };
        if (layout.FrameCount == 0)
        {
            throw new CaptureFormatException(declaredData == 0
                ? "The WAV file holds no audio samples."
                : "The WAV file holds no audio samples (its data chunk is cut off before the first sample frame).");
        }

        return layout;
    }

    private static FmtFields ReadFmt(Stream stream, long size, long bytesLeft)
    {
        if (size < 16)
        {
            throw new CaptureFormatException($"The WAV file's format chunk is too short ({size} bytes; at least 16 are needed).");
        }

        if (size > bytesLeft)
        {
            throw new CaptureFormatException($"The WAV file ends inside its format chunk (the chunk claims {size} bytes; {Math.Max(bytesLeft, 0)} are left).");
        }

        // PCM and float format chunks are 16, 18 or 40 bytes. An odd size is read differently by different readers
        // (NAudio takes the pad byte as part of the chunk, SoX does not), and NAudio misreads a very large one (65 016 bytes, say).
        if (size % 2 != 0)
        {
            throw new CaptureFormatException($"The WAV file's format chunk has an odd size ({size} bytes), which no PCM or float format chunk has, so the header is damaged.");
        }

        if (size > MaxFmtBytes)
        {
            throw new CaptureFormatException($"The WAV file's format chunk is {size} bytes, far more than the 16 to 40 bytes of a PCM or float format chunk, so the header is damaged.");
        }

        Span<byte> b = stackalloc byte[40];
        int got = ReadFully(stream, b[..(int)Math.Min(size, 40)]);
        ReadOnlySpan<byte> fmt = b[..got];
        var fields = new FmtFields
        {
            FormatTag = BinaryPrimitives.ReadUInt16LittleEndian(fmt[0..2]),
            Channels = BinaryPrimitives.ReadUInt16LittleEndian(fmt[2..4]),
            SampleRate = BinaryPrimitives.ReadUInt32LittleEndian(fmt[4..8]),
            BlockAlign = BinaryPrimitives.ReadUInt16LittleEndian(fmt[12..14]),
            BitsPerSample = BinaryPrimitives.ReadUInt16LittleEndian(fmt[14..16]),
            SubFormatKnown = false,
        };

        if (fields.FormatTag == FormatExtensible && got >= 40 && BinaryPrimitives.ReadUInt16LittleEndian(fmt[16..18]) >= 22)
        {
            fields.SubFormatKnown = true;
            fields.SubFormat = new Guid(fmt[24..40]);
            fields.SubFormatCode = fmt[28..40].SequenceEqual(SubFormatTail)
                ? BinaryPrimitives.ReadUInt32LittleEndian(fmt[24..28])
                : uint.MaxValue;
        }

        return fields;
    }

    private static string ResolveEncoding(FmtFields f)
    {
        long code = f.FormatTag;
        string described = string.Create(CultureInfo.InvariantCulture, $"format code 0x{f.FormatTag:X4}{KnownName(f.FormatTag)}");
        if (f.FormatTag == FormatExtensible)
        {
            if (!f.SubFormatKnown)
            {
                throw new CaptureFormatException(
                    "The WAV file uses WAVE_FORMAT_EXTENSIBLE but its format chunk is too short to name the sub-format.");
            }

            code = f.SubFormatCode;
            described = code <= ushort.MaxValue
                ? string.Create(CultureInfo.InvariantCulture, $"WAVE_FORMAT_EXTENSIBLE with sub-format 0x{code:X4}{KnownName((ushort)code)}")
                : $"WAVE_FORMAT_EXTENSIBLE with sub-format {{{f.SubFormat}}}";
        }

        if (code == FormatPcm)
        {
            if (f.BitsPerSample is 8 or 16 or 24 or 32)
            {
                return "pcm";
            }

            throw new CaptureFormatException($"The WAV file uses {f.BitsPerSample}-bit PCM, which is not supported; {Supported}.");
        }

        if (code == FormatIeeeFloat)
        {
            if (f.BitsPerSample is 32 or 64)
            {
                return "float";
            }

            throw new CaptureFormatException($"The WAV file uses {f.BitsPerSample}-bit IEEE float, which is not supported; {Supported} 32/64-bit.");
        }

        throw new CaptureFormatException($"The WAV file uses an unsupported encoding ({described}); {Supported}.");
    }

    private static string KnownName(ushort code) => code switch
    {
        0x0002 => ", Microsoft ADPCM",
        0x0006 => ", A-law",
        0x0007 => ", µ-law",
        0x0011 => ", IMA ADPCM",
        0x0031 => ", GSM 6.10",
        0x0050 => ", MPEG",
        0x0055 => ", MPEG Layer-3",
        _ => string.Empty,
    };

    internal static string Printable(ReadOnlySpan<byte> fourCc)
    {
        var text = new StringBuilder(fourCc.Length);
        foreach (byte b in fourCc)
        {
            text.Append(b is >= 0x20 and < 0x7F ? (char)b : '?');
        }

        return text.ToString();
    }

    private static byte[] ReadBody(Stream stream, long size, long bytesLeft, string what)
    {
        if (size > bytesLeft)
        {
            throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                $"The WAV file ends inside its {what} chunk (the chunk claims {size} bytes; {Math.Max(bytesLeft, 0)} are left)."));
        }

        var body = new byte[size];
        ReadFully(stream, body);
        return body;
    }

    internal static int ReadFully(Stream stream, Span<byte> buffer)
    {
        int total = 0;
        while (total < buffer.Length)
        {
            int n = stream.Read(buffer[total..]);
            if (n == 0)
            {
                break;
            }

            total += n;
        }

        return total;
    }

    private struct FmtFields
    {
        public ushort FormatTag;
        public ushort Channels;
        public uint SampleRate;
        public ushort BlockAlign;
        public ushort BitsPerSample;
        public bool SubFormatKnown;
        public Guid SubFormat;
        public uint SubFormatCode;
    }
}
