using System.Buffers.Binary;
using TapeVault.Core.Tests.Audio;
using Xunit;

namespace TapeVault.Core.Tests.Hardening;

/// <summary>What every refusal of bad input must look like: one plain sentence that names the problem.</summary>
internal static class Refusal
{
    /// <summary>
    /// The message is one sentence (capital first, a full stop last, no line break, no second sentence after a full
    /// stop and a space), says none of the library's names, and contains every fragment.
    /// </summary>
    public static void AssertOneSentence(Exception error, params string[] fragments)
    {
        string message = error.Message;
        foreach (string fragment in fragments)
        {
            Assert.True(message.Contains(fragment, StringComparison.Ordinal), $"'{fragment}' is not in: {message}");
        }

        Assert.True(char.IsUpper(message[0]), message);
        Assert.EndsWith(".", message, StringComparison.Ordinal);
        Assert.DoesNotContain('\n', message);
        Assert.DoesNotContain("NAudio", message, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain("System.", message, StringComparison.Ordinal);
        Assert.DoesNotContain("Exception", message, StringComparison.Ordinal);
    }
}

/// <summary>
/// WAV files written byte by byte for the hardening cases, on top of <see cref="WavBytes"/>.
/// </summary>
/// <remarks>
/// The layout facts relied on here are from memory of the RIFF and WAVE specification
/// ("Multimedia Programming Interface and Data Specifications 1.0", 1991) and the published WAVEFORMATEXTENSIBLE
/// documentation, not from a copy at hand:
/// <list type="bullet">
/// <item>A file is "RIFF", a little-endian uint32 of the bytes that follow (file length − 8), the form type "WAVE",
/// then chunks.</item>
/// <item>A chunk is a four-character id, a little-endian uint32 body size that counts neither the 8-byte header nor
/// the pad, the body, and one pad byte (0) when the size is odd.</item>
/// <item>The fmt body starts wFormatTag u16, nChannels u16, nSamplesPerSec u32, nAvgBytesPerSec u32, nBlockAlign u16,
/// wBitsPerSample u16 (16 bytes, PCM's whole body); other tags add cbSize u16 (18 bytes). WAVE_FORMAT_EXTENSIBLE
/// (0xFFFE) has cbSize 22, wValidBitsPerSample u16, dwChannelMask u32 and a 16-byte SubFormat GUID: 40 bytes.</item>
/// <item>For PCM, nBlockAlign = nChannels × wBitsPerSample / 8; frames interleave the channels, left first.</item>
/// <item>8-bit samples are unsigned (128 is silence); wider PCM samples are signed two's complement, little-endian.</item>
/// <item>Format codes: 0x0001 PCM, 0x0002 Microsoft ADPCM, 0x0003 IEEE float, 0x0006 A-law, 0x0007 µ-law,
/// 0x0011 IMA ADPCM, 0x0055 MPEG Layer-3. Sub-format GUIDs are {code-0000-0010-8000-00AA00389B71}.</item>
/// </list>
/// </remarks>
internal static class HostileWav
{
    /// <summary>A mono 16-bit PCM fmt chunk at <paramref name="rate"/>.</summary>
    public static byte[] Fmt16(uint rate = 8000, ushort channels = 1) => WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, channels, rate, 16));

    /// <summary>A data chunk of <paramref name="frames"/> 16-bit samples of a little ramp.</summary>
    public static byte[] Data16(int samples = 200) =>
        WavBytes.Chunk("data", WavBytes.Pcm16Body([.. Enumerable.Range(0, samples).Select(i => (short)((i * 97) - 9000))]));

    /// <summary>A fmt chunk whose fields are written raw, with no helper deriving one from another.</summary>
    public static byte[] RawFmt(ushort tag, ushort channels, uint rate, uint bytesPerSecond, ushort blockAlign, ushort bits)
    {
        var body = new byte[16];
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(0), tag);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(2), channels);
        BinaryPrimitives.WriteUInt32LittleEndian(body.AsSpan(4), rate);
        BinaryPrimitives.WriteUInt32LittleEndian(body.AsSpan(8), bytesPerSecond);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(12), blockAlign);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(14), bits);
        return WavBytes.Chunk("fmt ", body);
    }

    /// <summary>A PCM fmt chunk of 16 bytes followed by <paramref name="extra"/> bytes of zeros inside the chunk.</summary>
    public static byte[] FmtWithExtraBytes(int extra, uint? declaredSize = null)
    {
        byte[] body = [.. WavBytes.FmtBody(WavBytes.Pcm, 1, 8000, 16), .. new byte[extra]];
        return WavBytes.Chunk("fmt ", body, declaredSize);
    }
}
