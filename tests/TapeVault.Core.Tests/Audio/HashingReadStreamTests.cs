using System.Security.Cryptography;
using TapeVault.Core.Audio;
using Xunit;

namespace TapeVault.Core.Tests.Audio;

/// <summary>
/// The read-through hashing stream gives the hash of the whole stream whatever its reader does: backward seeks
/// re-read without hashing twice, forward seeks leave gaps that <c>HashUpTo</c>, later reads or <c>Finish</c> fill.
/// </summary>
public sealed class HashingReadStreamTests
{
    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    [InlineData(4)]
    [InlineData(5)]
    public void HashingStream_HashesTheWholeStream_WhateverTheSeeksAndReadsBeforeFinish(int seed)
    {
        var random = new Random(seed);
        byte[] data = new byte[800_000 + random.Next(1000)];
        random.NextBytes(data);
        var buffer = new byte[70_000];

        using var stream = new HashingReadStream(new MemoryStream(data, writable: false));
        for (int step = 0; step < 300; step++)
        {
            int action = random.Next(4);
            if (action == 0)
            {
                stream.Position = random.NextInt64(data.Length + 10);
            }
            else if (action == 1)
            {
                stream.Seek(random.Next(-2000, 200_000), SeekOrigin.Current);
                stream.Position = Math.Clamp(stream.Position, 0, data.Length);
            }
            else
            {
                long at = stream.Position;
                int n = stream.Read(buffer, 0, random.Next(1, buffer.Length));
                Assert.Equal(data.AsSpan((int)Math.Min(at, data.Length), n).ToArray(), buffer.AsSpan(0, n).ToArray());
            }
        }

        Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(data)), stream.Finish());
        Assert.Equal(data.Length, stream.HashedBytes);
        Assert.Equal(stream.Sha256, stream.Finish());
    }

    [Fact]
    public void HashingStream_HashesSkippedBytesOnlyWhenAskedOrAtTheEnd_AndReadsEachByteOnce()
    {
        byte[] data = new byte[600_000];
        new Random(8).NextBytes(data);
        using var stream = new HashingReadStream(new MemoryStream(data, writable: false));
        var buffer = new byte[16];

        // A header parser: reads 16 bytes, skips a chunk body, reads the next header.
        stream.ReadExactly(buffer);
        stream.Position = 1000;
        stream.ReadExactly(buffer);
        Assert.Equal(16, stream.HashedBytes);

        // The owner closes the gap before the audio; the position is kept.
        stream.HashUpTo(1016);
        Assert.Equal(1016, stream.HashedBytes);
        Assert.Equal(1016, stream.Position);
        Assert.Equal(16 + 16 + 1000, stream.SourceBytesRead); // the header at 1000 was read twice

        // The audio, read in order, continues the hash; a jump past its end leaves a gap that Finish fills.
        var audio = new byte[100_000];
        stream.ReadExactly(audio);
        Assert.Equal(101_016, stream.HashedBytes);
        stream.Position = data.Length - 16;
        stream.ReadExactly(buffer);
        Assert.Equal(101_016, stream.HashedBytes);

        Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(data)), stream.Finish());
        Assert.Equal(data.Length, stream.HashedBytes);
        Assert.Equal(data.Length + 16 + 16, stream.SourceBytesRead); // and so was the one at the end
    }

    [Fact]
    public void HashingStream_HashUpTo_DoesNothingForBytesAlreadyHashed()
    {
        byte[] data = new byte[1000];
        new Random(9).NextBytes(data);
        using var stream = new HashingReadStream(new MemoryStream(data, writable: false));
        stream.ReadExactly(new byte[500]);
        stream.HashUpTo(100);
        Assert.Equal(500, stream.HashedBytes);
        Assert.Equal(500, stream.SourceBytesRead);
        Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(data)), stream.Finish());
    }

    [Fact]
    public void HashingStream_ReadFillsTheBuffer_EvenWhenTheSourceReturnsShortReads()
    {
        byte[] data = Enumerable.Range(0, 10_000).Select(i => (byte)(i & 0xFF)).ToArray();
        using var stream = new HashingReadStream(new TrickleStream(data));
        var buffer = new byte[4096];
        Assert.Equal(4096, stream.Read(buffer, 0, buffer.Length));
        Assert.Equal(data[..4096], buffer);
        Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(data)), stream.Finish());
    }

    /// <summary>A seekable stream that returns at most 3 bytes per read.</summary>
    private sealed class TrickleStream(byte[] data) : MemoryStream(data, writable: false)
    {
        public override int Read(Span<byte> buffer) => base.Read(buffer[..Math.Min(3, buffer.Length)]);

        public override int Read(byte[] buffer, int offset, int count) => base.Read(buffer, offset, Math.Min(3, count));
    }
}
