using System.Buffers.Binary;
using System.Collections.Immutable;
using System.Text;
using TapeVault.Core.Audio;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;

namespace TapeVault.Core.Tests.Hardening.Fuzzing;

/// <summary>One reader under fuzzing: its valid seed inputs and how to run it on one input.</summary>
internal sealed class FuzzTarget
{
    public required string Name { get; init; }

    public required InputKind Kind { get; init; }

    public required IReadOnlyList<byte[]> Seeds { get; init; }

    /// <summary>The one exception type the reader documents for bad input; anything else escaping is a failure.</summary>
    public required Type Documented { get; init; }

    /// <summary>
    /// Gets an input ready (outside the measured work: writing a file, say) and returns the work to measure, which
    /// returns for an accepted input and throws for a refused one, and what to do afterwards.
    /// </summary>
    public required Func<byte[], Random, (Action Work, Action Cleanup)> Prepare { get; init; }
}

/// <summary>The three readers that take files from outside: WAV captures, format profiles and image containers.</summary>
internal static class FuzzTargets
{
    public static IReadOnlyList<FuzzTarget> All(string folder) => [Wav(folder), Profiles(), Images()];

    /// <summary>
    /// <see cref="CaptureReader"/> from Open to the last sample and the hash. An accepted file must also keep its
    /// promises: exactly <see cref="CaptureReader.FrameCount"/> samples, no more frames than the bytes allow, and
    /// the hash over every byte of the file.
    /// </summary>
    public static FuzzTarget Wav(string folder)
    {
        int next = 0;
        return new FuzzTarget
        {
            Name = "wav",
            Kind = InputKind.Wav,
            Seeds = WavSeeds(),
            Documented = typeof(CaptureFormatException),
            Prepare = (input, random) =>
            {
                string path = Path.Combine(folder, $"input-{next++}.wav");
                File.WriteAllBytes(path, input);
                var channel = (ChannelChoice)random.Next(3);
                return (() => ReadWav(path, channel, input.Length), () => File.Delete(path));
            },
        };
    }

    /// <summary><see cref="ProfileLoader.Parse"/> of the bytes as UTF-8 text.</summary>
    public static FuzzTarget Profiles() => new()
    {
        Name = "profile",
        Kind = InputKind.Json,
        Seeds = ProfileSeeds(),
        Documented = typeof(ProfileException),
        Prepare = (input, _) => (() => ProfileLoader.Parse(Encoding.UTF8.GetString(input), "fuzz.json"), () => { }),
    };

    /// <summary>
    /// <see cref="TapeImageContainer.Read"/>, and <see cref="TapeImageContainer.Verify"/>, which must never throw and
    /// must agree with Read, sentence for sentence.
    /// </summary>
    public static FuzzTarget Images() => new()
    {
        Name = "image",
        Kind = InputKind.Image,
        Seeds = ImageSeeds(),
        Documented = typeof(ImageFormatException),
        Prepare = (input, _) => (() => ReadImage(input), () => { }),
    };

    private static void ReadWav(string path, ChannelChoice channel, long fileBytes)
    {
        using var reader = CaptureReader.Open(path, channel);
        if (reader.FrameCount * reader.Channels * (reader.BitsPerSample / 8) > fileBytes)
        {
            throw new InvalidOperationException($"The reader promises {reader.FrameCount} frames, more than a {fileBytes}-byte file holds.");
        }

        Span<float> buffer = stackalloc float[1000];
        long total = 0;
        int n;
        while ((n = reader.Read(buffer)) > 0)
        {
            total += n;
        }

        var info = reader.Complete();
        if (total != reader.FrameCount || info.FileBytes != fileBytes)
        {
            throw new InvalidOperationException($"The reader returned {total} of {reader.FrameCount} frames and hashed {info.FileBytes} of {fileBytes} bytes.");
        }
    }

    private static void ReadImage(byte[] input)
    {
        ImageVerification verification;
        using (var stream = new MemoryStream(input, writable: false))
        {
            verification = TapeImageContainer.Verify(stream);
        }

        try
        {
            using var stream = new MemoryStream(input, writable: false);
            TapeImageContainer.Read(stream);
        }
        catch (ImageFormatException e) when (verification.Ok || verification.FailureReason != e.Message)
        {
            throw new InvalidOperationException($"Read refused ({e.Message}) where Verify said {(verification.Ok ? "whole" : verification.FailureReason)}.", e);
        }

        if (!verification.Ok)
        {
            throw new InvalidOperationException($"Read accepted what Verify refused ({verification.FailureReason}).");
        }
    }

    /// <summary>Four small valid WAV files of different layouts (layout facts in <c>HostileWav</c>'s remarks).</summary>
    private static List<byte[]> WavSeeds()
    {
        short[] ramp = [.. Enumerable.Range(0, 400).Select(i => (short)(((i * 331) % 60_000) - 30_000))];
        byte[] pcm16 = Samples16(ramp);
        byte[] pcm24 = [.. Enumerable.Range(0, 100 * 2 * 3).Select(i => unchecked((byte)(i * 37)))];
        byte[] pcm8 = [.. Enumerable.Range(0, 151).Select(i => unchecked((byte)(128 + (i * 5))))];
        byte[] float32 = new byte[100 * 4];
        for (int i = 0; i < 100; i++)
        {
            BinaryPrimitives.WriteSingleLittleEndian(float32.AsSpan(i * 4), MathF.Sin(i * 0.3f) * 0.8f);
        }

        byte[] list = [.. "INFO"u8, .. Chunk("ICMT", "pass 2, deck B."u8.ToArray())];
        return
        [
            Riff(Chunk("fmt ", Fmt(0x0001, 1, 8000, 2, 16)), Chunk("data", pcm16)),
            Riff(Chunk("fmt ", Extensible(2, 44_100, 24, 0x0001)), Chunk("data", pcm24), Chunk("LIST", list)),
            Riff(Chunk("fmt ", Fmt(0x0001, 1, 11_025, 1, 8)), Chunk("LIST", list), Chunk("data", pcm8)),
            Riff(Chunk("fmt ", [.. Fmt(0x0003, 1, 48_000, 4, 32), 0, 0]), Chunk("fact", [100, 0, 0, 0]), Chunk("data", float32)),
        ];
    }

    /// <summary>The built-in profiles' JSON as it is embedded in the core: every family and most fields.</summary>
    private static List<byte[]> ProfileSeeds()
    {
        var assembly = typeof(ProfileCatalog).Assembly;
        var seeds = new List<byte[]>();
        foreach (string name in assembly.GetManifestResourceNames().Where(n => n.StartsWith("TapeVault.Core.Formats.BuiltIn.", StringComparison.Ordinal) && n.EndsWith(".json", StringComparison.Ordinal)).Order(StringComparer.Ordinal))
        {
            using var stream = assembly.GetManifestResourceStream(name)!;
            using var copy = new MemoryStream();
            stream.CopyTo(copy);
            seeds.Add(copy.ToArray());
        }

        return seeds.Count > 0 ? seeds : throw new InvalidOperationException("The core embeds no built-in profile to fuzz.");
    }

    /// <summary>A small image with every status, a conflict and two files, and an empty one.</summary>
    private static List<byte[]> ImageSeeds()
    {
        const string captureA = "4f1c2d3e4b5a69788796a5b4c3d2e1f00f1e2d3c4b5a69788796a5b4c3d2e1f0";
        const string captureB = "0a1b2c3d4e5f60718293a4b5c6d7e8f90a1b2c3d4e5f60718293a4b5c6d7e8f9";
        var first = new BlockProvenance(captureA, "line-rise", "tapevault fuzz", 2.5, 0.97);
        var second = new BlockProvenance(captureB, "head-both", "tapevault fuzz", 2.75, 0.6);
        ImageBlock Block(int position, RecoveryStatus status, int payloadBytes, ImmutableArray<BlockProvenance> sources, ImmutableArray<ConflictingReading> conflicts) => new()
        {
            Position = position,
            Key = $"PROG/{position}",
            FileName = "PROG",
            FileId = 1,
            BlockNumber = position,
            Status = status,
            Confidence = status == RecoveryStatus.Missing ? 0 : 0.9 - (position * 0.1),
            Header = [(byte)'P', (byte)'R', (byte)'O', (byte)'G', (byte)position],
            Payload = [.. Enumerable.Range(0, payloadBytes).Select(i => unchecked((byte)((i * 13) + position)))],
            Sources = sources,
            AgreeingCaptures = sources.Length,
            ConflictingPayloads = conflicts,
        };

        var image = new TapeImage
        {
            ProfileId = "orrin-80",
            CodeVersion = "tapevault fuzz",
            CreatedUtc = new DateTimeOffset(2026, 12, 2, 10, 0, 0, TimeSpan.Zero),
            Captures = [new ImageSource(captureA, "pass 1.wav", 44_100, 1, 61.5), new ImageSource(captureB, "pass 2.wav", 48_000, 2, 61.25)],
            Blocks =
            [
                Block(0, RecoveryStatus.Clean, 32, [first], [new ConflictingReading([.. new byte[32]], second, 1)]),
                Block(1, RecoveryStatus.Voted, 32, [first, second], []),
                Block(2, RecoveryStatus.Missing, 0, [], []),
                Block(3, RecoveryStatus.Repaired, 20, [second], []),
            ],
            Files = [new ImageFile("PROG", 84, 0, 3, false), new ImageFile("TAIL", 20, 3, 1, true)],
        };
        var empty = image with { Blocks = [], Files = [], Captures = [] };
        return [Container(image), Container(empty)];
    }

    private static byte[] Container(TapeImage image)
    {
        using var stream = new MemoryStream();
        TapeImageContainer.Write(stream, image);
        return stream.ToArray();
    }

    private static byte[] Samples16(short[] samples)
    {
        var bytes = new byte[samples.Length * 2];
        for (int i = 0; i < samples.Length; i++)
        {
            BinaryPrimitives.WriteInt16LittleEndian(bytes.AsSpan(i * 2), samples[i]);
        }

        return bytes;
    }

    private static byte[] Fmt(ushort tag, ushort channels, uint rate, ushort blockAlign, ushort bits)
    {
        var body = new byte[16];
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(0), tag);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(2), channels);
        BinaryPrimitives.WriteUInt32LittleEndian(body.AsSpan(4), rate);
        BinaryPrimitives.WriteUInt32LittleEndian(body.AsSpan(8), rate * blockAlign);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(12), blockAlign);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(14), bits);
        return body;
    }

    private static byte[] Extensible(ushort channels, uint rate, ushort bits, ushort subFormat)
    {
        var body = new byte[40];
        Fmt(0xFFFE, channels, rate, (ushort)(channels * bits / 8), bits).CopyTo(body, 0);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(16), 22);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(18), bits);
        BinaryPrimitives.WriteUInt32LittleEndian(body.AsSpan(20), 0x3);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(24), subFormat);
        byte[] tail = [0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71];
        tail.CopyTo(body, 28);
        return body;
    }

    private static byte[] Chunk(string id, byte[] body)
    {
        byte[] size = new byte[4];
        BinaryPrimitives.WriteUInt32LittleEndian(size, (uint)body.Length);
        return [.. Encoding.ASCII.GetBytes(id), .. size, .. body, .. (body.Length % 2 == 1 ? new byte[] { 0 } : [])];
    }

    private static byte[] Riff(params byte[][] chunks)
    {
        byte[] body = [.. "WAVE"u8, .. chunks.SelectMany(c => c)];
        byte[] size = new byte[4];
        BinaryPrimitives.WriteUInt32LittleEndian(size, (uint)body.Length);
        return [.. "RIFF"u8, .. size, .. body];
    }
}
