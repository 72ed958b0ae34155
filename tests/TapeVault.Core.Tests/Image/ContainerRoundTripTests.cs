using System.Buffers.Binary;
using System.Collections.Immutable;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using TapeVault.Core.Image;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Image;

/// <summary>The container keeps every field of an image, writes the same bytes every time, and is laid out as docs/image-format.md says.</summary>
public sealed class ContainerRoundTripTests : IDisposable
{
    private readonly OutsideTempFolder temp = new();

    public void Dispose() => temp.Dispose();

    [Fact]
    public void Read_GivesBackEveryFieldThatWriteWasGiven()
    {
        var image = ImageSamples.Standard();

        var read = ImageSamples.Read(ImageSamples.Container(image));

        ImageSamples.AssertSame(image, read);
        Assert.True(read.Blocks[1].Conflict);
        Assert.Equal(image.OverallConfidence, read.OverallConfidence);
    }

    [Fact]
    public void Read_GivesBackEachPositionsKeyConfidence_AndAnOverallConfidenceThatCountsTheLeastKeyOnce()
    {
        var image = ImageSamples.Keyed();

        byte[] container = ImageSamples.Container(image);
        var read = ImageSamples.Read(container);

        ImageSamples.AssertSame(image, read);

        // In the manifest as docs/image-format.md version 2 names it, read here by hand rather than through the reader.
        using var document = JsonDocument.Parse(container.AsMemory(24, (int)BinaryPrimitives.ReadUInt32LittleEndian(container.AsSpan(12))));
        Assert.Equal(
            image.Blocks.Select(b => b.KeyConfidence),
            document.RootElement.GetProperty("blocks").EnumerateArray().Select(b => b.GetProperty("keyConfidence").GetDouble()));

        // The image is right when every recovered payload is and every key is; the keys' doubts are nested, so all keys
        // are right with the least key's chance (the product rule for nested events, common practice): the payloads'
        // confidences as built (Standard's), times 0.85 · 0.9 once.
        double payloads = ImageSamples.Standard().Blocks.Where(b => b.Status != RecoveryStatus.Missing).Aggregate(1.0, (p, b) => p * b.Confidence);
        Assert.Equal(payloads * 0.85 * 0.9, read.OverallConfidence, 12);
    }

    [Fact]
    public void Read_AVersionOneContainer_GivesEachPositionItsConfidenceAsStored_AndItsKeyUndoubted()
    {
        // A version 1 container built by hand from the layout docs/image-format.md gave version 1 (ImageSamples).
        var image = ImageSamples.Standard();
        byte[] container = ImageSamples.VersionOneContainer(image);

        var read = ImageSamples.Read(container);
        using var stream = new MemoryStream(container, writable: false);
        var verification = TapeImageContainer.Verify(stream);

        ImageSamples.AssertSame(image, read);
        Assert.All(read.Blocks, b => Assert.Equal(1, b.KeyConfidence));
        Assert.True(verification.Ok, verification.FailureReason);
        Assert.Equal(1, verification.FormatVersion);

        // Version 1 kept one confidence, the whole position's as stored: the overall is their product, as it was.
        Assert.Equal(read.Blocks.Where(b => b.Status != RecoveryStatus.Missing).Aggregate(1.0, (p, b) => p * b.Confidence), read.OverallConfidence, 12);

        // Written again, it is version 2, and reads back the same.
        ImageSamples.AssertSame(image, ImageSamples.Read(ImageSamples.Container(read)));
    }

    [Fact]
    public void Read_GivesBackAnImageWithNoBlocksAndAnOffsetClock()
    {
        var image = new TapeImage
        {
            ProfileId = "kcs-300",
            CodeVersion = "v",
            CreatedUtc = new DateTimeOffset(2026, 1, 2, 3, 4, 5, TimeSpan.FromHours(-5)),
            Captures = [],
            Blocks = [],
            Files = [],
        };

        ImageSamples.AssertSame(image, ImageSamples.Read(ImageSamples.Container(image)));
    }

    [Fact]
    public void Write_GivesTheSameBytes_ForTheSameImage_AndForTheImageReadBack()
    {
        byte[] first = ImageSamples.Container(ImageSamples.Standard());
        byte[] second = ImageSamples.Container(ImageSamples.Standard());
        byte[] rewritten = ImageSamples.Container(ImageSamples.Read(first));

        Assert.Equal(first, second);
        Assert.Equal(first, rewritten);
    }

    [Fact]
    public void Read_AcceptsAStreamThatCannotSeek()
    {
        var image = ImageSamples.Standard();
        using var stream = new ForwardOnlyStream(ImageSamples.Container(image));

        ImageSamples.AssertSame(image, TapeImageContainer.Read(stream));
    }

    [Fact]
    public void Verify_ReportsTheVersionTheCountsByStatus_AndTheFileSha256ThatGnuSha256sumGives()
    {
        var image = ImageSamples.Standard();
        string path = temp.File("standard.tvimg");
        File.WriteAllBytes(path, ImageSamples.Container(image));

        ImageVerification verification;
        using (var stream = File.OpenRead(path))
        {
            verification = TapeImageContainer.Verify(stream);
        }

        Assert.True(verification.Ok, verification.FailureReason);
        Assert.Null(verification.FailureReason);
        Assert.Equal(2, verification.FormatVersion);
        Assert.Equal(new FileInfo(path).Length, verification.Length);

        // Outside reference: GNU coreutils' sha256sum of the file on disk.
        Assert.Equal(OutsideTool.Sha256Sum(path), verification.FileSha256);

        // Counts from the image as built by hand (positions 4 missing, 5 voted, 7 repaired, the other six clean).
        Assert.Equal((9, 6, 1, 1, 1), (verification.Blocks, verification.Clean, verification.Voted, verification.Repaired, verification.Missing));
    }

    [Fact]
    public void Trailer_IsTheSha256OfEveryByteBeforeIt_AsGnuSha256sumComputesIt()
    {
        byte[] container = ImageSamples.Container(ImageSamples.Standard());
        string body = temp.File("body.bin");
        File.WriteAllBytes(body, container[..^32]);

        // Outside reference: GNU coreutils' sha256sum over the bytes before the 32-byte trailer.
        Assert.Equal(OutsideTool.Sha256Sum(body), Convert.ToHexStringLower(container.AsSpan(container.Length - 32)));
    }

    [Fact]
    public void Header_IsMagicVersionFlagsAndLittleEndianLengths_AndTheLengthsAddUpToTheFile()
    {
        byte[] container = ImageSamples.Container(ImageSamples.Standard());

        // The layout of docs/image-format.md, read here by hand rather than through the reader.
        Assert.Equal("TVIMG\r\n\u001a"u8.ToArray(), container[..8]);
        Assert.Equal(2, BinaryPrimitives.ReadUInt16LittleEndian(container.AsSpan(8)));
        Assert.Equal(0, BinaryPrimitives.ReadUInt16LittleEndian(container.AsSpan(10)));
        long manifest = BinaryPrimitives.ReadUInt32LittleEndian(container.AsSpan(12));
        long data = (long)BinaryPrimitives.ReadUInt64LittleEndian(container.AsSpan(16));
        Assert.Equal(container.Length, 24 + manifest + data + 32);
        using var document = JsonDocument.Parse(container.AsMemory(24, (int)manifest));
        Assert.Equal("tapevault-image", document.RootElement.GetProperty("format").GetString());
        Assert.Equal(2, document.RootElement.GetProperty("formatVersion").GetInt32());
    }

    [Fact]
    public void BlockHashes_AreSha256OfEachBlocksHeaderAndPayloadRange_AndOfEachConflictingPayload()
    {
        var image = ImageSamples.Standard();
        byte[] container = ImageSamples.Container(image);
        int manifestLength = (int)BinaryPrimitives.ReadUInt32LittleEndian(container.AsSpan(12));
        int dataStart = 24 + manifestLength;
        using var document = JsonDocument.Parse(container.AsMemory(24, manifestLength));
        var blocks = document.RootElement.GetProperty("blocks").EnumerateArray().ToList();

        Assert.Equal(image.Blocks.Length, blocks.Count);
        int conflicts = 0;
        for (int i = 0; i < blocks.Count; i++)
        {
            var entry = blocks[i];
            int offset = entry.GetProperty("offset").GetInt32();
            int length = entry.GetProperty("headerLength").GetInt32() + entry.GetProperty("payloadLength").GetInt32();
            var range = container.AsSpan(dataStart + offset, length);

            // The range holds the header then the payload, as built.
            Assert.Equal([.. image.Blocks[i].Header, .. image.Blocks[i].Payload], range.ToArray());

            // System.Security.Cryptography.SHA256, the SHA-256 of FIPS 180-4, over the documented range.
            Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(range)), entry.GetProperty("sha256").GetString());
            foreach (var conflict in entry.GetProperty("conflicts").EnumerateArray())
            {
                var loser = container.AsSpan(dataStart + conflict.GetProperty("offset").GetInt32(), conflict.GetProperty("length").GetInt32());
                Assert.Equal(image.Blocks[i].ConflictingPayloads[conflicts++].Payload.ToArray(), loser.ToArray());
                Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(loser)), conflict.GetProperty("sha256").GetString());
            }
        }

        Assert.Equal(1, conflicts);
    }

    [Fact]
    public void BlockHash_OfTheBytesAbc_IsTheFips180Example()
    {
        // FIPS 180-4's worked example (NIST, "SHA-256 example", one-block message "abc"); value from the NIST examples.
        const string AbcSha256 = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad";
        var one = ImageSamples.Standard().Blocks[0] with { Header = [.. "a"u8], Payload = [.. "bc"u8], ConflictingPayloads = [] };
        var image = ImageSamples.Standard() with { Blocks = [one], Files = [] };
        byte[] container = ImageSamples.Container(image);

        using var document = JsonDocument.Parse(container.AsMemory(24, (int)BinaryPrimitives.ReadUInt32LittleEndian(container.AsSpan(12))));

        Assert.Equal(AbcSha256, document.RootElement.GetProperty("blocks")[0].GetProperty("sha256").GetString());
    }

    [Fact]
    public void Write_RefusesAMissingBlockThatHoldsBytes()
    {
        var image = ImageSamples.Standard();
        var filled = image.Blocks[4] with { Payload = [.. Encoding.ASCII.GetBytes("invented")] };
        var bad = image with { Blocks = image.Blocks.SetItem(4, filled) };
        using var stream = new MemoryStream();

        var error = Assert.Throws<ArgumentException>(() => TapeImageContainer.Write(stream, bad));

        Assert.Contains("missing", error.Message, StringComparison.Ordinal);
        Assert.Equal(0, stream.Length);
    }

    [Fact]
    public void Write_RefusesAPositionSurerThanItsKey()
    {
        var image = ImageSamples.Standard();
        var bad = image with { Blocks = image.Blocks.SetItem(0, image.Blocks[0] with { KeyConfidence = 0.5 }) };
        using var stream = new MemoryStream();

        var error = Assert.Throws<ArgumentException>(() => TapeImageContainer.Write(stream, bad));

        Assert.Contains("key", error.Message, StringComparison.Ordinal);
        Assert.Equal(0, stream.Length);
    }

    [Theory]
    [InlineData(-0.1)]
    [InlineData(1.5)]
    [InlineData(double.NaN)]
    public void ImageBlock_RefusesAKeyConfidenceThatIsNoProbability(double key)
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => ImageSamples.Standard().Blocks[0] with { KeyConfidence = key });
    }

    [Fact]
    public void Write_RefusesPositionsOutOfOrder()
    {
        var image = ImageSamples.Standard();
        var bad = image with { Blocks = ImmutableArray.Create(image.Blocks[1], image.Blocks[0]) , Files = [] };

        Assert.Throws<ArgumentException>(() => TapeImageContainer.Write(new MemoryStream(), bad));
    }
}

/// <summary>A stream that can only be read forward, as a pipe or a network download is.</summary>
internal sealed class ForwardOnlyStream(byte[] bytes) : Stream
{
    private readonly MemoryStream inner = new(bytes, writable: false);

    public override bool CanRead => true;
    public override bool CanSeek => false;
    public override bool CanWrite => false;
    public override long Length => throw new NotSupportedException();
    public override long Position { get => throw new NotSupportedException(); set => throw new NotSupportedException(); }
    public override void Flush() { }
    public override int Read(byte[] buffer, int offset, int count) => inner.Read(buffer, offset, Math.Min(count, 7));
    public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();
    public override void SetLength(long value) => throw new NotSupportedException();
    public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();

    protected override void Dispose(bool disposing)
    {
        if (disposing)
        {
            inner.Dispose();
        }

        base.Dispose(disposing);
    }
}
