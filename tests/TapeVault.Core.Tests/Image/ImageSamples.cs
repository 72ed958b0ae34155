using System.Buffers.Binary;
using System.Collections.Immutable;
using System.Security.Cryptography;
using System.Text;
using System.Text.Encodings.Web;
using System.Text.Json;
using System.Text.Json.Nodes;
using TapeVault.Core.Image;
using Xunit;

namespace TapeVault.Core.Tests.Image;

/// <summary>
/// Tape images built by hand for the container tests: every status, a conflict, several readings, and files that
/// are whole, incomplete, or named with characters no folder should see. The bytes are our own seeded values, the
/// ground truth the tests compare against.
/// </summary>
internal static class ImageSamples
{
    public const string CaptureA = "9f2c6d1e0b7a4c3f8e5d2a1b0c9f8e7d6c5b4a39281706f5e4d3c2b1a0f9e8d7";
    public const string CaptureB = "1a2b3c4d5e6f708192a3b4c5d6e7f8091a2b3c4d5e6f708192a3b4c5d6e7f809";

    /// <summary>Nine positions: files HELLO (0-1), a hostile name (2), GAME (3-5, position 4 missing), DATA (6-8, whole).</summary>
    public static TapeImage Standard() => Build(seed: 80, payloadBytes: 64);

    public static TapeImage Build(int seed, int payloadBytes)
    {
        var random = new Random(seed);
        byte[] Bytes(int n)
        {
            var b = new byte[n];
            random.NextBytes(b);
            return b;
        }

        var blocks = ImmutableArray.CreateBuilder<ImageBlock>();
        (string Name, int Blocks)[] layout = [("HELLO\0\0\0", 2), ("../../x\a", 1), ("GAME    ", 3), ("DATA", 3)];
        int position = 0;
        foreach (var (name, count) in layout)
        {
            for (int n = 0; n < count; n++, position++)
            {
                var status = position switch
                {
                    4 => RecoveryStatus.Missing,
                    5 => RecoveryStatus.Voted,
                    7 => RecoveryStatus.Repaired,
                    _ => RecoveryStatus.Clean,
                };
                bool missing = status == RecoveryStatus.Missing;
                var winner = new BlockProvenance(CaptureA, $"hp{position}-lp4800-both", "tapevault 0.1.0+test", 1.5 + (position * 0.731), missing ? 0 : 0.97 - (position * 0.01));
                var second = new BlockProvenance(CaptureB, "hp200-lp4800-rise", "tapevault 0.1.0+test", 1.25 + (position * 0.729), 0.5);
                blocks.Add(new ImageBlock
                {
                    Position = position,
                    Key = $"{name.TrimEnd('\0', ' ')}/{n}",
                    FileName = name,
                    FileId = position == 2 ? null : position / 3,
                    BlockNumber = n,
                    Status = status,
                    Confidence = missing ? 0 : 0.999 - (position / 1000.0),
                    Header = [.. Encoding.Latin1.GetBytes(name.PadRight(8)[..8]), (byte)n, 0, (byte)payloadBytes],
                    Payload = missing ? [] : [.. Bytes(payloadBytes - (n == count - 1 ? 7 : 0))],
                    Sources = missing ? [] : status == RecoveryStatus.Clean ? [winner] : [winner, second],
                    AgreeingCaptures = missing ? 0 : position % 2 == 0 ? 2 : 1,
                    ConflictingPayloads = position == 1 ? [new ConflictingReading([.. Bytes(payloadBytes)], second, 1)] : [],
                });
            }
        }

        var built = blocks.ToImmutable();
        var files = ImmutableArray.CreateBuilder<ImageFile>();
        position = 0;
        foreach (var (name, count) in layout)
        {
            var range = built.Skip(position).Take(count).ToList();
            bool complete = range.All(b => b.Status != RecoveryStatus.Missing);
            files.Add(new ImageFile(name, range.Sum(b => (long)b.Payload.Length), position, count, complete));
            position += count;
        }

        return new TapeImage
        {
            ProfileId = "orrin-80",
            CodeVersion = "tapevault 0.1.0+test",
            CreatedUtc = new DateTimeOffset(2026, 11, 30, 21, 4, 5, 123, TimeSpan.Zero),
            Captures =
            [
                new ImageSource(CaptureA, "side-a pass 1.wav", 44_100, 1, 93.25),
                new ImageSource(CaptureB, "side-a pass 2.wav", 48_000, 2, 93.5000001),
            ],
            Blocks = built,
            Files = files.ToImmutable(),
        };
    }

    /// <summary>
    /// <see cref="Standard"/> with its keys doubted as a stream merge doubts them, nested (each later key's doubt holds
    /// every earlier one): 1 for positions 0 to 2, 0.85 from 3, 0.85 · 0.9 from 6; each position's confidence is its
    /// payload's times its key's.
    /// </summary>
    public static TapeImage Keyed()
    {
        var image = Standard();
        return image with
        {
            Blocks = [.. image.Blocks.Select(b =>
            {
                double key = b.Position < 3 ? 1 : b.Position < 6 ? 0.85 : 0.85 * 0.9;
                return b with { Confidence = b.Confidence * key, KeyConfidence = key };
            })],
        };
    }

    /// <summary>
    /// A container of format version 1 as docs/image-format.md lays it out, built here field by field, apart from the
    /// product's writer (which writes version 2 only): the header (magic, version 1, flags 0, the two lengths, little-
    /// endian), the manifest's properties in the documented order (two-space indentation, LF, '+' and letters
    /// unescaped), each block's header and payload then its conflicts' payloads, and the SHA-256 of all of it
    /// (System.Security.Cryptography, FIPS 180-4). A version 1 block has no key confidence: it is refused if the image
    /// has one below 1. When version 2 came, these bytes were checked to be, byte for byte, what the version 1 writer
    /// wrote (the container's code as it was, built beside it) for <see cref="Standard"/> and two other samples.
    /// </summary>
    public static byte[] VersionOneContainer(TapeImage image)
    {
        using var data = new MemoryStream();
        var blocks = new JsonArray();
        static string Sha(ReadOnlySpan<byte> bytes) => Convert.ToHexStringLower(SHA256.HashData(bytes));
        static JsonObject Source(BlockProvenance p) => new()
        {
            ["captureSha256"] = p.CaptureSha256,
            ["setting"] = p.SettingName,
            ["codeVersion"] = p.CodeVersion,
            ["startSeconds"] = p.StartSeconds,
            ["confidence"] = p.Confidence,
        };
        foreach (var b in image.Blocks)
        {
            Assert.Equal(1, b.KeyConfidence);
            long offset = data.Length;
            byte[] stored = [.. b.Header, .. b.Payload];
            data.Write(stored);
            var conflicts = new JsonArray();
            foreach (var c in b.ConflictingPayloads)
            {
                conflicts.Add(new JsonObject
                {
                    ["offset"] = data.Length,
                    ["length"] = c.Payload.Length,
                    ["sha256"] = Sha(c.Payload.AsSpan()),
                    ["agreeingCaptures"] = c.AgreeingCaptures,
                    ["source"] = Source(c.Source),
                });
                data.Write(c.Payload.AsSpan());
            }

            blocks.Add(new JsonObject
            {
                ["position"] = b.Position,
                ["key"] = b.Key,
                ["fileName"] = b.FileName,
                ["fileId"] = b.FileId,
                ["blockNumber"] = b.BlockNumber,
                ["status"] = b.Status.ToString().ToLowerInvariant(),
                ["confidence"] = b.Confidence,
                ["agreeingCaptures"] = b.AgreeingCaptures,
                ["offset"] = offset,
                ["headerLength"] = b.Header.Length,
                ["payloadLength"] = b.Payload.Length,
                ["sha256"] = Sha(stored),
                ["sources"] = new JsonArray([.. b.Sources.Select(s => (JsonNode)Source(s))]),
                ["conflicts"] = conflicts,
            });
        }

        var manifest = new JsonObject
        {
            ["format"] = "tapevault-image",
            ["formatVersion"] = 1,
            ["profileId"] = image.ProfileId,
            ["codeVersion"] = image.CodeVersion,
            ["createdUtc"] = image.CreatedUtc,
            ["captures"] = new JsonArray([.. image.Captures.Select(c => (JsonNode)new JsonObject
            {
                ["sha256"] = c.CaptureSha256,
                ["fileName"] = c.FileName,
                ["sampleRate"] = c.SampleRate,
                ["channels"] = c.Channels,
                ["durationSeconds"] = c.DurationSeconds,
            })]),
            ["blocks"] = blocks,
            ["files"] = new JsonArray([.. image.Files.Select(f => (JsonNode)new JsonObject
            {
                ["name"] = f.Name,
                ["length"] = f.Length,
                ["firstPosition"] = f.FirstPosition,
                ["blockCount"] = f.BlockCount,
                ["complete"] = f.Complete,
            })]),
        };
        using var json = new MemoryStream();
        using (var writer = new Utf8JsonWriter(json, new JsonWriterOptions { Indented = true, NewLine = "\n", Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping }))
        {
            manifest.WriteTo(writer);
        }

        byte[] head = new byte[24];
        "TVIMG\r\n\u001a"u8.CopyTo(head);
        BinaryPrimitives.WriteUInt16LittleEndian(head.AsSpan(8), 1);
        BinaryPrimitives.WriteUInt32LittleEndian(head.AsSpan(12), (uint)json.Length);
        BinaryPrimitives.WriteUInt64LittleEndian(head.AsSpan(16), (ulong)data.Length);
        byte[] body = [.. head, .. json.ToArray(), .. data.ToArray()];
        return [.. body, .. SHA256.HashData(body)];
    }

    /// <summary>The container's bytes for an image.</summary>
    public static byte[] Container(TapeImage image)
    {
        using var stream = new MemoryStream();
        TapeImageContainer.Write(stream, image);
        return stream.ToArray();
    }

    public static TapeImage Read(byte[] container)
    {
        using var stream = new MemoryStream(container, writable: false);
        return TapeImageContainer.Read(stream);
    }

    /// <summary>Field by field: the records hold immutable arrays, whose own equality is by reference.</summary>
    public static void AssertSame(TapeImage expected, TapeImage actual)
    {
        Assert.Equal(expected.ProfileId, actual.ProfileId);
        Assert.Equal(expected.CodeVersion, actual.CodeVersion);
        Assert.Equal(expected.CreatedUtc, actual.CreatedUtc);
        Assert.Equal(expected.CreatedUtc.Offset, actual.CreatedUtc.Offset);
        Assert.Equal(expected.Captures.ToArray(), actual.Captures.ToArray());
        Assert.Equal(expected.Files.ToArray(), actual.Files.ToArray());
        Assert.Equal(expected.Blocks.Length, actual.Blocks.Length);
        for (int i = 0; i < expected.Blocks.Length; i++)
        {
            var e = expected.Blocks[i];
            var a = actual.Blocks[i];
            Assert.Equal(e.Position, a.Position);
            Assert.Equal(e.Key, a.Key);
            Assert.Equal(e.FileName, a.FileName);
            Assert.Equal(e.FileId, a.FileId);
            Assert.Equal(e.BlockNumber, a.BlockNumber);
            Assert.Equal(e.Status, a.Status);
            Assert.Equal(e.Confidence, a.Confidence);
            Assert.Equal(e.KeyConfidence, a.KeyConfidence);
            Assert.Equal(e.Header.ToArray(), a.Header.ToArray());
            Assert.Equal(e.Payload.ToArray(), a.Payload.ToArray());
            Assert.Equal(e.Sources.ToArray(), a.Sources.ToArray());
            Assert.Equal(e.AgreeingCaptures, a.AgreeingCaptures);
            Assert.Equal(e.Conflict, a.Conflict);
            Assert.Equal(e.ConflictingPayloads.Length, a.ConflictingPayloads.Length);
            for (int k = 0; k < e.ConflictingPayloads.Length; k++)
            {
                Assert.Equal(e.ConflictingPayloads[k].Payload.ToArray(), a.ConflictingPayloads[k].Payload.ToArray());
                Assert.Equal(e.ConflictingPayloads[k].Source, a.ConflictingPayloads[k].Source);
                Assert.Equal(e.ConflictingPayloads[k].AgreeingCaptures, a.ConflictingPayloads[k].AgreeingCaptures);
            }
        }
    }
}
