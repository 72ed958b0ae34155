using System.Buffers.Binary;
using System.Security.Cryptography;
using System.Text;
using TapeVault.Core.Image;
using TapeVault.Core.Tests.Image;
using Xunit;

namespace TapeVault.Core.Tests.Hardening;

/// <summary>
/// Damaged containers beyond those of <see cref="ContainerRejectionTests"/>: manifests that are well-formed enough
/// to get past the whole-file SHA-256 (it is recomputed, as a careless tool or a deliberate edit would) but break
/// the text, the nesting or the rules of the data section. Each is refused with one sentence, and Verify reports
/// the same sentence without throwing.
/// </summary>
public sealed class ImageDamageTests
{
    private static readonly byte[] Good = ImageSamples.Container(ImageSamples.Standard());

    internal static readonly Dictionary<string, (Func<byte[]> Container, string[] Expected)> Cases = new()
    {
        ["manifest is the JSON literal null"] = (() => WithManifest("null"u8.ToArray()), ["manifest holds no object"]),
        ["manifest is not UTF-8"] = (() => EditManifestBytes(m => Replace(m, "\"profileId\": \"orrin-80\""u8.ToArray(), [.. "\"profileId\": \"orrin-"u8, 0xC3, 0x28, .. "\""u8])), ["manifest is not valid"]),
        ["manifest nested 200 deep"] = (() => EditManifest(m => m.Replace("\"captures\": [", "\"captures\": [" + new string('[', 200) + new string(']', 200) + ",", StringComparison.Ordinal)), ["manifest is not valid JSON", "captures"]),
        ["manifest cut short, lengths fixed up"] = (() => EditManifest(m => m[..(m.Length / 2)]), ["manifest is not valid JSON"]),
        ["confidence written as NaN"] = (() => EditManifest(m => ReplaceFirst(m, "\"confidence\": 0.999", "\"confidence\": NaN")), ["manifest is not valid JSON", "confidence"]),
        ["a block whose bytes overlap the block before"] = (() => EditManifest(m => ReplaceFirst(m, "\"offset\": 75", "\"offset\": 74")), ["blocks[1] starts at data offset 74, not at 75"]),
        ["a file with a negative block count"] = (() => EditManifest(m => ReplaceFirst(m, "\"blockCount\": 2", "\"blockCount\": -2")), ["files[0].blockCount is -2, a negative number"]),
        ["a capture with sample rate 0"] = (() => EditManifest(m => ReplaceFirst(m, "\"sampleRate\": 44100", "\"sampleRate\": 0")), ["captures[0].sampleRate is 0, not a positive number"]),
        ["a capture with a negative duration"] = (() => EditManifest(m => ReplaceFirst(m, "\"durationSeconds\": 93.25", "\"durationSeconds\": -93.25")), ["captures[0].durationSeconds is negative"]),
        ["a creation time that is not a date"] = (() => EditManifest(m => ReplaceFirst(m, "\"createdUtc\": \"2026-11-30T21:04:05.123+00:00\"", "\"createdUtc\": \"last Tuesday\"")), ["manifest is not valid JSON", "createdUtc"]),
        ["a missing block marked missing but holding bytes"] = (() => EditManifest(m => ReplaceFirst(m, "\"status\": \"repaired\"", "\"status\": \"missing\"")), ["blocks[7] is missing yet holds"]),
        ["a line break escaped into a status"] = (() => EditManifest(m => ReplaceFirst(m, "\"status\": \"clean\"", "\"status\": \"cl\\nean\"")), [@"blocks[0].status is 'cl\u000aean', not clean"]),
        ["a WAV file given as an image"] = (() => [.. "RIFF"u8, .. new byte[60]], ["not a TapeVault image", "magic bytes"]),
    };

    public static TheoryData<string> Names() => [.. Cases.Keys];

    [Theory]
    [MemberData(nameof(Names))]
    public void Read_RefusesWithOneSentence_AndVerifySaysTheSame(string name)
    {
        var (container, expected) = Cases[name];
        byte[] bytes = container();

        var error = Assert.Throws<ImageFormatException>(() => ImageSamples.Read(bytes));
        using var stream = new MemoryStream(bytes, writable: false);
        var verification = TapeImageContainer.Verify(stream);

        Refusal.AssertOneSentence(error, expected);
        Assert.False(verification.Ok);
        Assert.Equal(error.Message, verification.FailureReason);
        Assert.Null(verification.Image);
    }

    [Fact]
    public void TheManifestEditsOfTheseCases_LeaveAReadableImage_WhenTheyChangeNothing()
    {
        // The editing helpers themselves must not damage a container: an identity edit reads back as the sample.
        ImageSamples.AssertSame(ImageSamples.Standard(), ImageSamples.Read(EditManifest(m => m)));
        Assert.Contains("\"offset\": 75", Manifest(Good), StringComparison.Ordinal);
        Assert.Contains("\"blockCount\": 2", Manifest(Good), StringComparison.Ordinal);
    }

    private static string Manifest(byte[] container) =>
        Encoding.UTF8.GetString(container, TapeImageContainer.HeaderBytes, (int)BinaryPrimitives.ReadUInt32LittleEndian(container.AsSpan(12)));

    private static byte[] EditManifest(Func<string, string> edit) => WithManifest(Encoding.UTF8.GetBytes(edit(Manifest(Good))));

    private static byte[] EditManifestBytes(Func<byte[], byte[]> edit) => WithManifest(edit(Encoding.UTF8.GetBytes(Manifest(Good))));

    /// <summary>The good container with another manifest, its length field and whole-file SHA-256 made to match.</summary>
    private static byte[] WithManifest(byte[] manifest)
    {
        int oldLength = (int)BinaryPrimitives.ReadUInt32LittleEndian(Good.AsSpan(12));
        byte[] data = Good[(TapeImageContainer.HeaderBytes + oldLength)..^TapeImageContainer.TrailerBytes];
        byte[] result = [.. Good[..TapeImageContainer.HeaderBytes], .. manifest, .. data, .. new byte[TapeImageContainer.TrailerBytes]];
        BinaryPrimitives.WriteUInt32LittleEndian(result.AsSpan(12), (uint)manifest.Length);
        SHA256.HashData(result.AsSpan(0, result.Length - 32), result.AsSpan(result.Length - 32));
        return result;
    }

    private static string ReplaceFirst(string text, string from, string to)
    {
        int at = text.IndexOf(from, StringComparison.Ordinal);
        Assert.True(at >= 0, $"the sample manifest has no {from}");
        return string.Concat(text.AsSpan(0, at), to, text.AsSpan(at + from.Length));
    }

    private static byte[] Replace(byte[] text, byte[] from, byte[] to)
    {
        int at = text.AsSpan().IndexOf(from);
        Assert.True(at >= 0, "the sample manifest lacks the bytes to replace");
        return [.. text[..at], .. to, .. text[(at + from.Length)..]];
    }
}
