using System.Collections.Immutable;
using System.Text;
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
