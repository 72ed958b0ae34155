using System.Buffers.Binary;
using System.Collections.Immutable;
using System.Globalization;
using System.Security.Cryptography;
using System.Text.Encodings.Web;
using System.Text.Json;
using TapeVault.Core.Text;

namespace TapeVault.Core.Image;

/// <summary>What <see cref="TapeImageContainer.Verify"/> found.</summary>
/// <param name="Ok">The container is whole and of a known version.</param>
/// <param name="FailureReason">Why not, one sentence; null when <paramref name="Ok"/>.</param>
/// <param name="FormatVersion">The version the header names (also when it is unknown); null when the header cannot be read.</param>
/// <param name="Length">Bytes read; -1 when the input could not be read (too large).</param>
/// <param name="FileSha256">SHA-256 of every byte of the input, lowercase hex, as sha256sum prints it; null when the input was too large to read.</param>
/// <param name="Image">The image, when <paramref name="Ok"/>.</param>
public sealed record ImageVerification(
    bool Ok,
    string? FailureReason,
    int? FormatVersion,
    long Length,
    string? FileSha256,
    int Blocks,
    int Clean,
    int Voted,
    int Repaired,
    int Missing,
    TapeImage? Image);

/// <summary>
/// The tape image container, a format of TapeVault's own (docs/image-format.md): a fixed header, a JSON manifest,
/// the bytes of every block, and a SHA-256 of everything before it. Writing is deterministic; reading refuses any
/// damage with an <see cref="ImageFormatException"/>.
/// </summary>
public static class TapeImageContainer
{
    /// <summary>The usual file extension.</summary>
    public const string Extension = ".tvimg";

    /// <summary>The version written: 2, which keeps each position's key confidence apart (docs/image-format.md).</summary>
    public const int CurrentVersion = 2;

    /// <summary>The oldest version read. Version 1 has no key confidence: its positions read with key confidence 1.</summary>
    public const int OldestReadVersion = 1;

    /// <summary>Magic, version, flags, manifest length, data length.</summary>
    public const int HeaderBytes = 24;

    public const int TrailerBytes = 32;

    /// <summary>A whole tape of data is a few megabytes; anything over this is refused before it is read.</summary>
    public const long MaximumContainerBytes = 1L << 30;

    public const string FormatName = "tapevault-image";

    /// <summary>"TVIMG", CR LF (catches a text-mode copy that rewrites line ends), 0x1A (stops a terminal's type).</summary>
    public static ReadOnlySpan<byte> Magic => "TVIMG\r\n\u001a"u8;

    // Fixed indentation, line end and escaping, so that the bytes do not depend on the platform. The relaxed encoder
    // leaves '+' and non-ASCII letters as they are (the manifest is never embedded in HTML); control characters are
    // still escaped.
    private static readonly JsonWriterOptions ManifestWriting = new()
    {
        Indented = true,
        NewLine = "\n",
        MaxDepth = 16,
        Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping,
    };

    public static void Write(Stream output, TapeImage image)
    {
        ArgumentNullException.ThrowIfNull(output);
        ArgumentNullException.ThrowIfNull(image);
        CheckWritable(image);

        // The data section: per block its header then payload, then each conflicting payload, in position order.
        using var data = new MemoryStream();
        var blocks = new List<BlockDocument?>(Items(image.Blocks).Length);
        foreach (var block in Items(image.Blocks))
        {
            long offset = data.Length;
            var header = Bytes(block.Header);
            var payload = Bytes(block.Payload);
            data.Write(header);
            data.Write(payload);
            var conflicts = new List<ConflictDocument?>();
            foreach (var conflict in Items(block.ConflictingPayloads))
            {
                long conflictOffset = data.Length;
                var loser = Bytes(conflict.Payload);
                data.Write(loser);
                conflicts.Add(new ConflictDocument
                {
                    Offset = conflictOffset,
                    Length = loser.Length,
                    Sha256 = Sha256Hex(loser),
                    AgreeingCaptures = conflict.AgreeingCaptures,
                    Source = Source(conflict.Source),
                });
            }

            blocks.Add(new BlockDocument
            {
                Position = block.Position,
                Key = block.Key,
                FileName = block.FileName,
                FileId = block.FileId,
                BlockNumber = block.BlockNumber,
                Status = StatusName(block.Status),
                Confidence = block.Confidence,
                KeyConfidence = block.KeyConfidence,
                AgreeingCaptures = block.AgreeingCaptures,
                Offset = offset,
                HeaderLength = header.Length,
                PayloadLength = payload.Length,
                Sha256 = Sha256Hex(data.GetBuffer().AsSpan((int)offset, header.Length + payload.Length)),
                Sources = [.. Items(block.Sources).Select(Source)],
                Conflicts = conflicts,
            });
        }

        var manifest = new ManifestDocument
        {
            Format = FormatName,
            FormatVersion = CurrentVersion,
            ProfileId = image.ProfileId,
            CodeVersion = image.CodeVersion,
            CreatedUtc = image.CreatedUtc,
            Captures = [.. Items(image.Captures).Select(c => new CaptureDocument
            {
                Sha256 = c.CaptureSha256,
                FileName = c.FileName,
                SampleRate = c.SampleRate,
                Channels = c.Channels,
                DurationSeconds = c.DurationSeconds,
            })],
            Blocks = blocks,
            Files = [.. Items(image.Files).Select(f => new FileDocument
            {
                Name = f.Name,
                Length = f.Length,
                FirstPosition = f.FirstPosition,
                BlockCount = f.BlockCount,
                Complete = f.Complete,
            })],
        };

        using var manifestBytes = new MemoryStream();
        using (var writer = new Utf8JsonWriter(manifestBytes, ManifestWriting))
        {
            JsonSerializer.Serialize(writer, manifest, ManifestJsonContext.Default.ManifestDocument);
        }

        if (HeaderBytes + manifestBytes.Length + data.Length + TrailerBytes > MaximumContainerBytes)
        {
            throw new ArgumentException($"The image would take more than {MaximumContainerBytes} bytes, the most a container may hold.", nameof(image));
        }

        Span<byte> head = stackalloc byte[HeaderBytes];
        Magic.CopyTo(head);
        BinaryPrimitives.WriteUInt16LittleEndian(head[8..], CurrentVersion);
        BinaryPrimitives.WriteUInt16LittleEndian(head[10..], 0);
        BinaryPrimitives.WriteUInt32LittleEndian(head[12..], checked((uint)manifestBytes.Length));
        BinaryPrimitives.WriteUInt64LittleEndian(head[16..], checked((ulong)data.Length));

        using var whole = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        foreach (var part in new[] { head.ToArray(), manifestBytes.ToArray(), data.ToArray() })
        {
            whole.AppendData(part);
            output.Write(part);
        }

        output.Write(whole.GetHashAndReset());
    }

    /// <summary>Reads a whole container from the stream's position to its end.</summary>
    /// <exception cref="ImageFormatException">The container is damaged, truncated, extended, or of an unknown version.</exception>
    public static TapeImage Read(Stream input)
    {
        ArgumentNullException.ThrowIfNull(input);
        return Parse(Load(input));
    }

    /// <summary>Reads the container and says whether it is whole, without throwing for damage.</summary>
    public static ImageVerification Verify(Stream input)
    {
        ArgumentNullException.ThrowIfNull(input);
        byte[] bytes;
        try
        {
            bytes = Load(input);
        }
        catch (ImageFormatException e)
        {
            return new ImageVerification(false, e.Message, null, -1, null, 0, 0, 0, 0, 0, null);
        }

        string fileSha256 = Sha256Hex(bytes);
        int? version = bytes.Length >= 10 && bytes.AsSpan(0, Magic.Length).SequenceEqual(Magic)
            ? BinaryPrimitives.ReadUInt16LittleEndian(bytes.AsSpan(8))
            : null;
        try
        {
            var image = Parse(bytes);
            return new ImageVerification(
                true,
                null,
                version,
                bytes.Length,
                fileSha256,
                image.Blocks.Length,
                image.Count(RecoveryStatus.Clean),
                image.Count(RecoveryStatus.Voted),
                image.Count(RecoveryStatus.Repaired),
                image.Count(RecoveryStatus.Missing),
                image);
        }
        catch (ImageFormatException e)
        {
            return new ImageVerification(false, e.Message, version, bytes.Length, fileSha256, 0, 0, 0, 0, 0, null);
        }
    }

    /// <summary>The bytes from the position to the end, refusing before any allocation a stream too long to be a container.</summary>
    private static byte[] Load(Stream input)
    {
        if (input.CanSeek)
        {
            long remaining = input.Length - input.Position;
            if (remaining > MaximumContainerBytes)
            {
                throw new ImageFormatException($"The file is {remaining} bytes, more than the {MaximumContainerBytes} bytes a TapeVault image may have.");
            }

            var bytes = new byte[Math.Max(remaining, 0)];
            int read = input.ReadAtLeast(bytes, bytes.Length, throwOnEndOfStream: false);
            if (read != bytes.Length || input.ReadByte() >= 0)
            {
                throw new ImageFormatException("The file changed length while it was read.");
            }

            return bytes;
        }

        // Not seekable: copy in pieces, so memory grows with the bytes really there, never with a length field.
        using var copy = new MemoryStream();
        var buffer = new byte[81920];
        int n;
        while ((n = input.Read(buffer)) > 0)
        {
            if (copy.Length + n > MaximumContainerBytes)
            {
                throw new ImageFormatException($"The stream holds more than the {MaximumContainerBytes} bytes a TapeVault image may have.");
            }

            copy.Write(buffer, 0, n);
        }

        return copy.ToArray();
    }

    private static TapeImage Parse(byte[] file)
    {
        // The magic and the version sit at fixed offsets in every version; everything after them is laid out alike in
        // versions 1 and 2 (they differ only in a manifest field).
        if (file.Length < Magic.Length || !file.AsSpan(0, Magic.Length).SequenceEqual(Magic))
        {
            throw new ImageFormatException("The file is not a TapeVault image: it does not begin with the image magic bytes.");
        }

        if (file.Length < 10)
        {
            throw new ImageFormatException($"The image is truncated: {file.Length} bytes, too short to hold even its header.");
        }

        int version = BinaryPrimitives.ReadUInt16LittleEndian(file.AsSpan(8));
        if (version is < OldestReadVersion or > CurrentVersion)
        {
            throw new ImageFormatException($"The image is in container format version {version}, which this reader does not know (it reads versions {OldestReadVersion} to {CurrentVersion}).");
        }

        if (file.Length < HeaderBytes + TrailerBytes)
        {
            throw new ImageFormatException($"The image is truncated: {file.Length} bytes, shorter than the {HeaderBytes + TrailerBytes} bytes of an empty container.");
        }

        int flags = BinaryPrimitives.ReadUInt16LittleEndian(file.AsSpan(10));
        if (flags != 0)
        {
            throw new ImageFormatException($"The image header's reserved flags are 0x{flags:x4}, not 0: the header is damaged.");
        }

        ulong manifestLength = BinaryPrimitives.ReadUInt32LittleEndian(file.AsSpan(12));
        ulong dataLength = BinaryPrimitives.ReadUInt64LittleEndian(file.AsSpan(16));

        // Compared without overflow: each length is first held against what the file has room for.
        ulong room = (ulong)(file.Length - HeaderBytes - TrailerBytes);
        if (manifestLength > room || dataLength > room - manifestLength || manifestLength + dataLength != room)
        {
            string described = manifestLength <= room && dataLength <= room
                ? (manifestLength + dataLength + HeaderBytes + TrailerBytes).ToString(CultureInfo.InvariantCulture)
                : "more";
            throw new ImageFormatException($"The image is {file.Length} bytes but its header describes {described}: it is truncated, has bytes appended, or its header is damaged.");
        }

        int wholeEnd = file.Length - TrailerBytes;
        var expected = file.AsSpan(wholeEnd);
        Span<byte> actual = stackalloc byte[32];
        SHA256.HashData(file.AsSpan(0, wholeEnd), actual);
        if (!actual.SequenceEqual(expected))
        {
            throw new ImageFormatException("The image's SHA-256 does not match its contents: the file is damaged.");
        }

        var manifest = file.AsSpan(HeaderBytes, (int)manifestLength);
        var data = file.AsMemory(HeaderBytes + (int)manifestLength, (int)dataLength);
        ManifestDocument? document;
        try
        {
            document = JsonSerializer.Deserialize(manifest, ManifestJsonContext.Default.ManifestDocument);
        }
        catch (JsonException e)
        {
            string where = e.Path is { Length: > 1 } p ? $" at {p.TrimStart('$', '.')}" : string.Empty;
            throw new ImageFormatException(Messages.OneLine($"The image's manifest is not valid JSON of format version {version}{where}."), e);
        }
        catch (ArgumentException e)
        {
            // Invalid UTF-8 reaches the caller as an ArgumentException from the transcoder.
            throw new ImageFormatException("The image's manifest is not valid UTF-8 text.", e);
        }

        if (document is null)
        {
            throw new ImageFormatException("The image's manifest holds no object.");
        }

        return new ManifestReader(data.Span, version).Build(document);
    }

    /// <summary>Turns a parsed manifest into the model, checking every field and every byte range on the way.</summary>
    private ref struct ManifestReader(ReadOnlySpan<byte> data, int version)
    {
        private readonly ReadOnlySpan<byte> _data = data;
        private readonly int _version = version;
        private long _next;

        public TapeImage Build(ManifestDocument d)
        {
            if (d.Format != FormatName)
            {
                throw Bad($"its manifest's format is '{d.Format}', not '{FormatName}'");
            }

            if (d.FormatVersion != _version)
            {
                throw Bad($"its manifest says format version {d.FormatVersion?.ToString(CultureInfo.InvariantCulture) ?? "(none)"} but its header says {_version}");
            }

            string profileId = Required(d.ProfileId, "profileId");
            string codeVersion = Required(d.CodeVersion, "codeVersion");
            var created = d.CreatedUtc ?? throw Missing("createdUtc");
            var captures = ImmutableArray.CreateBuilder<ImageSource>();
            int index = 0;
            foreach (var c in Required(d.Captures, "captures"))
            {
                string at = $"captures[{index++}]";
                var capture = c ?? throw Missing(at);
                captures.Add(new ImageSource(
                    Required(capture.Sha256, at + ".sha256"),
                    Required(capture.FileName, at + ".fileName"),
                    Positive(capture.SampleRate, at + ".sampleRate"),
                    Positive(capture.Channels, at + ".channels"),
                    NonNegativeFinite(capture.DurationSeconds, at + ".durationSeconds")));
            }

            var blocks = ImmutableArray.CreateBuilder<ImageBlock>();
            index = 0;
            foreach (var b in Required(d.Blocks, "blocks"))
            {
                blocks.Add(Block(b ?? throw Missing($"blocks[{index}]"), index));
                index++;
            }

            if (_next != _data.Length)
            {
                throw Bad($"its data section holds {_data.Length - _next} bytes that no block claims");
            }

            var files = ImmutableArray.CreateBuilder<ImageFile>();
            index = 0;
            foreach (var f in Required(d.Files, "files"))
            {
                string at = $"files[{index++}]";
                var file = f ?? throw Missing(at);
                int first = NonNegative(file.FirstPosition, at + ".firstPosition");
                int count = NonNegative(file.BlockCount, at + ".blockCount");
                if (count > blocks.Count - first)
                {
                    throw Bad($"{at} names positions {first} to {(long)first + count - 1}, past the image's {blocks.Count} positions");
                }

                files.Add(new ImageFile(
                    Required(file.Name, at + ".name"),
                    NonNegative(file.Length, at + ".length"),
                    first,
                    count,
                    file.Complete ?? throw Missing(at + ".complete")));
            }

            return new TapeImage
            {
                ProfileId = profileId,
                CodeVersion = codeVersion,
                CreatedUtc = created,
                Captures = captures.ToImmutable(),
                Blocks = blocks.ToImmutable(),
                Files = files.ToImmutable(),
            };
        }

        private ImageBlock Block(BlockDocument b, int index)
        {
            string at = $"blocks[{index}]";
            if (b.Position != index)
            {
                throw Bad($"{at} has position {b.Position?.ToString(CultureInfo.InvariantCulture) ?? "(none)"}; positions must count up from 0");
            }

            var status = ParseStatus(b.Status, at);
            double confidence = Probability(b.Confidence, at + ".confidence");

            // Version 1 kept no key confidence: its confidence stands for the whole position, key and all, as stored.
            double keyConfidence = _version == 1
                ? b.KeyConfidence is null ? 1 : throw Bad($"{at} has a keyConfidence, which version 1 does not have")
                : Probability(b.KeyConfidence, at + ".keyConfidence");
            if (confidence > keyConfidence)
            {
                throw Bad($"{at} has confidence {confidence.ToString(CultureInfo.InvariantCulture)} above its key's {keyConfidence.ToString(CultureInfo.InvariantCulture)}: a position is never surer than its place");
            }

            long offset = b.Offset ?? throw Missing(at + ".offset");
            long headerLength = NonNegative(b.HeaderLength, at + ".headerLength");
            long payloadLength = NonNegative(b.PayloadLength, at + ".payloadLength");
            if (status == RecoveryStatus.Missing && (payloadLength != 0 || confidence != 0))
            {
                throw Bad($"{at} is missing yet holds {payloadLength} payload bytes at confidence {confidence.ToString(CultureInfo.InvariantCulture)}");
            }

            var stored = Take(offset, headerLength, at, payloadLength);
            CheckHash(stored, b.Sha256, at + ".sha256");
            var sources = ImmutableArray.CreateBuilder<BlockProvenance>();
            int s = 0;
            foreach (var source in Required(b.Sources, at + ".sources"))
            {
                string sat = $"{at}.sources[{s++}]";
                sources.Add(Provenance(source ?? throw Missing(sat), sat));
            }

            var conflicts = ImmutableArray.CreateBuilder<ConflictingReading>();
            int k = 0;
            foreach (var c in Required(b.Conflicts, at + ".conflicts"))
            {
                string cat = $"{at}.conflicts[{k++}]";
                var conflict = c ?? throw Missing(cat);
                var loser = Take(conflict.Offset ?? throw Missing(cat + ".offset"), 0, cat, NonNegative(conflict.Length, cat + ".length"));
                CheckHash(loser, conflict.Sha256, cat + ".sha256");
                conflicts.Add(new ConflictingReading(
                    [.. loser],
                    Provenance(conflict.Source ?? throw Missing(cat + ".source"), cat + ".source"),
                    NonNegative(conflict.AgreeingCaptures, cat + ".agreeingCaptures")));
            }

            return new ImageBlock
            {
                Position = index,
                Key = Required(b.Key, at + ".key"),
                FileName = b.FileName,
                FileId = b.FileId,
                BlockNumber = b.BlockNumber,
                Status = status,
                Confidence = confidence,
                KeyConfidence = keyConfidence,
                Header = [.. stored[..(int)headerLength]],
                Payload = [.. stored[(int)headerLength..]],
                Sources = sources.ToImmutable(),
                AgreeingCaptures = NonNegative(b.AgreeingCaptures, at + ".agreeingCaptures"),
                ConflictingPayloads = conflicts.ToImmutable(),
            };
        }

        /// <summary>The next stretch of the data section: ranges must follow each other with no gap and no overlap.</summary>
        private ReadOnlySpan<byte> Take(long offset, long first, string at, long second)
        {
            if (offset != _next)
            {
                throw Bad($"{at} starts at data offset {offset}, not at {_next} where the bytes before it end");
            }

            long left = _data.Length - _next;
            if (first > left || second > left - first)
            {
                throw Bad($"{at} claims more bytes than the data section has left ({left})");
            }

            var span = _data.Slice((int)_next, (int)(first + second));
            _next += first + second;
            return span;
        }

        private readonly BlockProvenance Provenance(SourceDocument s, string at) => new(
            Required(s.CaptureSha256, at + ".captureSha256"),
            Required(s.Setting, at + ".setting"),
            Required(s.CodeVersion, at + ".codeVersion"),
            Finite(s.StartSeconds, at + ".startSeconds"),
            Probability(s.Confidence, at + ".confidence"));

        private readonly void CheckHash(ReadOnlySpan<byte> bytes, string? recorded, string at)
        {
            if (!string.Equals(Sha256Hex(bytes), Required(recorded, at), StringComparison.Ordinal))
            {
                throw Bad($"the SHA-256 of the bytes of {at[..at.LastIndexOf('.')]} does not match the manifest");
            }
        }

        private readonly RecoveryStatus ParseStatus(string? text, string at) => Required(text, at + ".status") switch
        {
            "clean" => RecoveryStatus.Clean,
            "voted" => RecoveryStatus.Voted,
            "repaired" => RecoveryStatus.Repaired,
            "missing" => RecoveryStatus.Missing,
            _ => throw Bad($"{at}.status is '{text}', not clean, voted, repaired or missing"),
        };

        private readonly T Required<T>(T? value, string at)
            where T : class => value ?? throw Missing(at);

        private readonly int Positive(int? value, string at) =>
            value is { } v ? (v > 0 ? v : throw Bad($"{at} is {v}, not a positive number")) : throw Missing(at);

        private readonly int NonNegative(int? value, string at) =>
            value is { } v ? (v >= 0 ? v : throw Bad($"{at} is {v}, a negative number")) : throw Missing(at);

        private readonly long NonNegative(long? value, string at) =>
            value is { } v ? (v >= 0 ? v : throw Bad($"{at} is {v}, a negative number")) : throw Missing(at);

        private readonly double Finite(double? value, string at) =>
            value is { } v ? (double.IsFinite(v) ? v : throw Bad($"{at} is not a finite number")) : throw Missing(at);

        private readonly double NonNegativeFinite(double? value, string at) =>
            Finite(value, at) is var v && v >= 0 ? v : throw Bad($"{at} is negative");

        private readonly double Probability(double? value, string at) =>
            Finite(value, at) is var v && v is >= 0 and <= 1 ? v : throw Bad($"{at} is {v.ToString(CultureInfo.InvariantCulture)}, not a probability from 0 to 1");

        private readonly ImageFormatException Missing(string at) => Bad($"its manifest lacks {at}");

        private readonly ImageFormatException Bad(string what) => new(Messages.OneLine($"The image is not a valid version {_version} container: {what}."));
    }

    /// <summary>Refuses, before a byte is written, an image no reader would accept.</summary>
    private static void CheckWritable(TapeImage image)
    {
        ArgumentNullException.ThrowIfNull(image.ProfileId);
        ArgumentNullException.ThrowIfNull(image.CodeVersion);
        var all = Items(image.Blocks);
        for (int i = 0; i < all.Length; i++)
        {
            var block = all[i];
            string at = $"Block {i}";
            Check(block.Position == i, $"{at} has position {block.Position}; positions must count up from 0.");
            Check(Enum.IsDefined(block.Status), $"{at} has an unknown status {(int)block.Status}.");
            Check(block.Confidence is >= 0 and <= 1, $"{at} has confidence {block.Confidence}, not a probability.");
            Check(block.Confidence <= block.KeyConfidence, $"{at} has confidence {block.Confidence} above its key's {block.KeyConfidence}: a position is never surer than its place.");
            Check(block.AgreeingCaptures >= 0, $"{at} has a negative count of agreeing captures.");
            Check(
                block.Status != RecoveryStatus.Missing || (block.Payload.IsDefaultOrEmpty && block.Confidence == 0),
                $"{at} is missing yet has payload bytes or a confidence above 0.");
            foreach (var source in Items(block.Sources).Concat(Items(block.ConflictingPayloads).Select(c => c.Source)))
            {
                Check(double.IsFinite(source.StartSeconds), $"{at} has a reading whose start time is not finite.");
                Check(source.Confidence is >= 0 and <= 1, $"{at} has a reading whose confidence is not a probability.");
            }

            Check(Items(block.ConflictingPayloads).All(c => c.AgreeingCaptures >= 0), $"{at} has a conflict with a negative count of agreeing captures.");
        }

        foreach (var capture in Items(image.Captures))
        {
            Check(capture.SampleRate > 0 && capture.Channels > 0, $"Capture {capture.FileName} has no positive sample rate or channel count.");
            Check(double.IsFinite(capture.DurationSeconds) && capture.DurationSeconds >= 0, $"Capture {capture.FileName} has a duration that is not a finite non-negative number.");
        }

        foreach (var file in Items(image.Files))
        {
            Check(file.Length >= 0 && file.FirstPosition >= 0 && file.BlockCount >= 0, $"File {file.Name} has a negative length or position.");
            Check(file.BlockCount <= all.Length - file.FirstPosition, $"File {file.Name} names positions past the end of the image.");
        }
    }

    private static void Check(bool condition, string message)
    {
        if (!condition)
        {
            throw new ArgumentException(message);
        }
    }

    private static SourceDocument Source(BlockProvenance p) => new()
    {
        CaptureSha256 = p.CaptureSha256,
        Setting = p.SettingName,
        CodeVersion = p.CodeVersion,
        StartSeconds = p.StartSeconds,
        Confidence = p.Confidence,
    };

    internal static string StatusName(RecoveryStatus status) => Vocabulary.Of(status).Name;

    private static ReadOnlySpan<byte> Bytes(ImmutableArray<byte> bytes) => bytes.IsDefault ? [] : bytes.AsSpan();

    private static ImmutableArray<T> Items<T>(ImmutableArray<T> items) => items.IsDefault ? [] : items;

    private static string Sha256Hex(ReadOnlySpan<byte> bytes) => Convert.ToHexStringLower(SHA256.HashData(bytes));
}
