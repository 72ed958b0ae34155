using System.Buffers.Binary;
using System.Security.Cryptography;
using System.Text;
using TapeVault.Core.Image;
using Xunit;

namespace TapeVault.Core.Tests.Image;

/// <summary>
/// A damaged container is refused with one sentence in an <see cref="ImageFormatException"/>: never another exception,
/// never a partial image, never an allocation sized by a length field instead of by the file.
/// </summary>
public sealed class ContainerRejectionTests
{
    private static readonly byte[] Good = ImageSamples.Container(ImageSamples.Standard());

    [Fact]
    public void EverySingleByteFlip_AtSampledOffsetsAcrossTheFile_IsRejected()
    {
        // Every header and trailer byte, plus 300 offsets drawn with a fixed seed across the manifest and the data.
        var random = new Random(20261202);
        var offsets = new SortedSet<int>(Enumerable.Range(0, 24).Concat(Enumerable.Range(Good.Length - 32, 32)));
        while (offsets.Count < 56 + 300)
        {
            offsets.Add(random.Next(Good.Length));
        }

        foreach (int offset in offsets)
        {
            byte[] damaged = (byte[])Good.Clone();
            damaged[offset] ^= (byte)random.Next(1, 256);

            var error = Rejects(damaged);

            Assert.True(Verify(damaged) is { Ok: false }, $"a flip at {offset} passed Verify");
            Assert.False(string.IsNullOrWhiteSpace(error.Message));
        }
    }

    [Fact]
    public void EveryBitFlip_InTheHeader_IsRejected()
    {
        for (int bit = 0; bit < 24 * 8; bit++)
        {
            byte[] damaged = (byte[])Good.Clone();
            damaged[bit / 8] ^= (byte)(1 << (bit % 8));
            Rejects(damaged);
        }
    }

    [Theory]
    [InlineData(0)]
    [InlineData(1)]
    [InlineData(7)]
    [InlineData(9)]
    [InlineData(23)]
    [InlineData(24)]
    [InlineData(55)]
    [InlineData(200)]
    [InlineData(-33)]
    [InlineData(-32)]
    [InlineData(-1)]
    public void Truncation_IsRejected(int keep)
    {
        int length = keep >= 0 ? keep : Good.Length + keep;

        var error = Rejects(Good[..length]);

        Assert.Matches("truncated|magic|describes", error.Message);
    }

    [Theory]
    [InlineData(1)]
    [InlineData(32)]
    [InlineData(4096)]
    public void AppendedBytes_AreRejected(int extra)
    {
        var error = Rejects([.. Good, .. new byte[extra]]);

        Assert.Contains("appended", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void TwoContainersEndToEnd_AreRejected()
    {
        Rejects([.. Good, .. Good]);
    }

    [Theory]
    [InlineData(0)]
    [InlineData(3)]
    [InlineData(65535)]
    public void UnknownVersion_IsRejectedAndNamed_EvenWithTheWholeHashRecomputed(int version)
    {
        byte[] other = (byte[])Good.Clone();
        BinaryPrimitives.WriteUInt16LittleEndian(other.AsSpan(8), (ushort)version);
        Rehash(other);

        var error = Rejects(other);

        Assert.Contains($"version {version}", error.Message, StringComparison.Ordinal);
        Assert.Equal(version, Verify(other).FormatVersion);
    }

    [Fact]
    public void ManifestVersionThatDisagreesWithTheHeader_IsRejected()
    {
        byte[] other = EditManifest(Good, m => m.Replace("\"formatVersion\": 2", "\"formatVersion\": 1", StringComparison.Ordinal));

        Assert.Contains("version", Rejects(other).Message, StringComparison.Ordinal);
    }

    [Fact]
    public void AVersionTwoBlockWithoutKeyConfidence_IsRejected_AndAVersionOneBlockWithOne()
    {
        // Version 2 names keyConfidence for every block; version 1 has none (docs/image-format.md).
        byte[] lacking = EditManifest(Good, m => m.Replace("\"keyConfidence\": 1,", string.Empty, StringComparison.Ordinal));
        byte[] v1 = ImageSamples.VersionOneContainer(ImageSamples.Standard());
        byte[] v1WithKey = EditManifest(v1, m => ReplaceFirst(m, "\"agreeingCaptures\"", "\"keyConfidence\": 1, \"agreeingCaptures\""));

        Assert.Contains("keyConfidence", Rejects(lacking).Message, StringComparison.Ordinal);
        Assert.Contains("keyConfidence", Rejects(v1WithKey).Message, StringComparison.Ordinal);
        Assert.Contains("version 1", Rejects(v1WithKey).Message, StringComparison.Ordinal);
    }

    [Fact]
    public void APositionSurerThanItsKey_IsRejected_EvenWithTheWholeHashRecomputed()
    {
        byte[] hostile = EditManifest(Good, m => ReplaceFirst(m, "\"keyConfidence\": 1,", "\"keyConfidence\": 0.5,"));

        Assert.Contains("key", Rejects(hostile).Message, StringComparison.Ordinal);
    }

    private static string ReplaceFirst(string text, string what, string with)
    {
        int at = text.IndexOf(what, StringComparison.Ordinal);
        Assert.True(at >= 0, what);
        return string.Concat(text.AsSpan(0, at), with, text.AsSpan(at + what.Length));
    }

    [Theory]
    [InlineData("")]
    [InlineData("PK\u0003\u0004")]
    [InlineData("RIFF")]
    [InlineData("TVIMG\n\n\u001a")]
    public void WrongMagic_IsRejected(string start)
    {
        byte[] other = (byte[])Good.Clone();
        byte[] magic = Encoding.Latin1.GetBytes(start.PadRight(8, '\0'));
        magic.CopyTo(other, 0);
        Rehash(other);

        Assert.Contains("magic", Rejects(other).Message, StringComparison.Ordinal);
    }

    [Fact]
    public void TextFile_IsRejectedAsNotAnImage()
    {
        Assert.Contains("magic", Rejects(Encoding.ASCII.GetBytes("Side A: three programs, recorded twice.\n")).Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(uint.MaxValue, 0UL)]
    [InlineData(0U, ulong.MaxValue)]
    [InlineData(uint.MaxValue, ulong.MaxValue)]
    [InlineData(uint.MaxValue, ulong.MaxValue - uint.MaxValue + 1)]
    [InlineData(1U << 30, 1UL << 40)]
    public void AbsurdLengthFields_AreRejected_WithoutAllocatingWhatTheyClaim(uint manifestLength, ulong dataLength)
    {
        byte[] hostile = (byte[])Good.Clone();
        BinaryPrimitives.WriteUInt32LittleEndian(hostile.AsSpan(12), manifestLength);
        BinaryPrimitives.WriteUInt64LittleEndian(hostile.AsSpan(16), dataLength);
        Rehash(hostile);

        long before = GC.GetAllocatedBytesForCurrentThread();
        var error = Rejects(hostile);
        long allocated = GC.GetAllocatedBytesForCurrentThread() - before;

        Assert.Contains("describes", error.Message, StringComparison.Ordinal);
        Assert.InRange(allocated, 0, (4 * Good.Length) + (256 * 1024));
    }

    [Theory]
    [InlineData("payloadLength", "1099511627776")]
    [InlineData("payloadLength", "9223372036854775807")]
    [InlineData("headerLength", "9223372036854775807")]
    [InlineData("payloadLength", "-5")]
    [InlineData("offset", "-1")]
    [InlineData("payloadLength", "1e30")]
    public void AbsurdLengthsInTheManifest_AreRejected_WithoutAllocatingWhatTheyClaim(string field, string value)
    {
        byte[] hostile = EditManifest(Good, m => ReplaceFirstNumber(m, field, value));

        long before = GC.GetAllocatedBytesForCurrentThread();
        Rejects(hostile);
        long allocated = GC.GetAllocatedBytesForCurrentThread() - before;

        Assert.InRange(allocated, 0, (8 * Good.Length) + (1024 * 1024));
    }

    [Fact]
    public void ABlockWhoseBytesDoNotMatchItsHash_IsRejected_EvenWithTheWholeHashRecomputed()
    {
        // The last byte before the trailer is the last byte of the data section: a payload byte of the last block.
        byte[] damaged = (byte[])Good.Clone();
        damaged[^33] ^= 0x01;
        Rehash(damaged);

        var error = Rejects(damaged);

        Assert.Contains("SHA-256 of the bytes of blocks[8]", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void ABlockHashEditedInTheManifest_IsRejected()
    {
        byte[] damaged = EditManifest(Good, m =>
        {
            // The first block's hash: the first "sha256" after its payload length (the captures' come before).
            int at = m.IndexOf("\"sha256\": \"", m.IndexOf("\"payloadLength\"", StringComparison.Ordinal), StringComparison.Ordinal) + 11;
            return string.Concat(m.AsSpan(0, at), m[at] == '0' ? "1" : "0", m.AsSpan(at + 1));
        });

        Assert.Contains("SHA-256", Rejects(damaged).Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("\"status\": \"clean\"", "\"status\": \"fine\"")]
    [InlineData("\"status\": \"clean\"", "\"status\": 0")]
    [InlineData("\"confidence\": 0.999", "\"confidence\": 1.5")]
    [InlineData("\"position\": 1,", "\"position\": 7,")]
    [InlineData("\"key\": \"HELLO/0\",", "\"key\": null,")]
    [InlineData("\"key\": \"HELLO/0\",", "")]
    [InlineData("\"profileId\": \"orrin-80\",", "\"profileId\": \"orrin-80\", \"extra\": 1,")]
    [InlineData("\"profileId\": \"orrin-80\",", "\"profileId\": \"orrin-80\", \"profileId\": \"kcs-300\",")]
    [InlineData("\"firstPosition\": 6", "\"firstPosition\": 8")]
    [InlineData("\"format\": \"tapevault-image\"", "\"format\": \"other\"")]
    public void AManifestThatBreaksTheSchema_IsRejected_EvenWithTheWholeHashRecomputed(string from, string to)
    {
        byte[] damaged = EditManifest(Good, m =>
        {
            Assert.Contains(from, m, StringComparison.Ordinal);
            int at = m.IndexOf(from, StringComparison.Ordinal);
            return string.Concat(m.AsSpan(0, at), to, m.AsSpan(at + from.Length));
        });

        Rejects(damaged);
    }

    [Fact]
    public void ManifestByteFlips_WithTheWholeHashRecomputed_AreReadOrRefused_NeverThrowOtherwise()
    {
        // The parser's own robustness, with the whole hash out of the way: 400 seeded flips in the manifest.
        var random = new Random(4);
        int manifestLength = (int)BinaryPrimitives.ReadUInt32LittleEndian(Good.AsSpan(12));
        int refused = 0;
        for (int i = 0; i < 400; i++)
        {
            byte[] damaged = (byte[])Good.Clone();
            damaged[24 + random.Next(manifestLength)] ^= (byte)random.Next(1, 256);
            Rehash(damaged);
            try
            {
                ImageSamples.Read(damaged);
            }
            catch (ImageFormatException)
            {
                refused++;
            }
        }

        // Most flips break the JSON or a field; a few change a digit of a number into another digit and are read.
        Assert.InRange(refused, 300, 400);
    }

    [Fact]
    public void DataBytesThatNoBlockClaims_AreRejected()
    {
        // One more byte in the data section, the header's data length and the whole hash kept consistent.
        byte[] longer = [.. Good[..^32], 0x00, .. new byte[32]];
        ulong dataLength = BinaryPrimitives.ReadUInt64LittleEndian(longer.AsSpan(16));
        BinaryPrimitives.WriteUInt64LittleEndian(longer.AsSpan(16), dataLength + 1);
        Rehash(longer);

        Assert.Contains("no block claims", Rejects(longer).Message, StringComparison.Ordinal);
    }

    [Fact]
    public void ATruncatedStreamThatCannotSeek_IsRejected()
    {
        using var stream = new ForwardOnlyStream(Good[..^5]);

        Assert.Throws<ImageFormatException>(() => TapeImageContainer.Read(stream));
    }

    private static ImageFormatException Rejects(byte[] container)
    {
        var error = Assert.Throws<ImageFormatException>(() => ImageSamples.Read(container));
        Assert.DoesNotContain('\n', error.Message);
        Assert.EndsWith(".", error.Message, StringComparison.Ordinal);
        return error;
    }

    private static ImageVerification Verify(byte[] container)
    {
        using var stream = new MemoryStream(container, writable: false);
        return TapeImageContainer.Verify(stream);
    }

    /// <summary>Puts a correct whole-file hash in the trailer, so that a test reaches the checks behind it.</summary>
    private static void Rehash(byte[] container)
    {
        if (container.Length >= 32)
        {
            SHA256.HashData(container.AsSpan(0, container.Length - 32), container.AsSpan(container.Length - 32));
        }
    }

    /// <summary>Rewrites the manifest text and fixes up its length and the whole hash.</summary>
    private static byte[] EditManifest(byte[] container, Func<string, string> edit)
    {
        int manifestLength = (int)BinaryPrimitives.ReadUInt32LittleEndian(container.AsSpan(12));
        string manifest = Encoding.UTF8.GetString(container, 24, manifestLength);
        byte[] edited = Encoding.UTF8.GetBytes(edit(manifest));
        byte[] result = [.. container[..24], .. edited, .. container[(24 + manifestLength)..]];
        BinaryPrimitives.WriteUInt32LittleEndian(result.AsSpan(12), (uint)edited.Length);
        Rehash(result);
        return result;
    }

    private static string ReplaceFirstNumber(string manifest, string field, string value)
    {
        string key = $"\"{field}\": ";
        int start = manifest.IndexOf(key, StringComparison.Ordinal) + key.Length;
        int end = start;
        while (end < manifest.Length && (char.IsAsciiDigit(manifest[end]) || manifest[end] == '-'))
        {
            end++;
        }

        return string.Concat(manifest.AsSpan(0, start), value, manifest.AsSpan(end));
    }
}
