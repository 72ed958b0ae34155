using System.Buffers.Binary;
using System.Text;

namespace TapeVault.Web.Tests.Support;

/// <summary>
/// WAV files written byte by byte, so that each bad input is exactly the damage it names. The layout relied on is the
/// RIFF/WAVE layout of the "Multimedia Programming Interface and Data Specifications 1.0" (1991), quoted
/// from memory, and common practice since:
/// <list type="bullet">
/// <item>"RIFF", a little-endian uint32 holding the file's length minus 8, then the form type "WAVE";</item>
/// <item>chunks of a four-character id, a little-endian uint32 body length and the body, padded to an even length;</item>
/// <item>"fmt " (16 bytes for PCM): uint16 format code (1 = PCM, 2 = ADPCM, 3 = IEEE float), uint16 channels, uint32
/// sample rate, uint32 bytes per second (= rate × block align), uint16 block align (= channels × bits / 8), uint16 bits
/// per sample;</item>
/// <item>"data": the samples, interleaved by channel; 16-bit PCM is signed little-endian.</item>
/// </list>
/// </summary>
public static class WavBytes
{
    public const int HeaderBytes = 44;

    /// <summary>A valid 16-bit PCM mono WAV: a tone of <paramref name="frames"/> samples whose pattern depends on <paramref name="seed"/>.</summary>
    public static byte[] Pcm16(int frames, int seed = 1, int sampleRate = 22_050, ushort channels = 1, ushort formatCode = 1, uint? declaredDataBytes = null)
    {
        int blockAlign = channels * 2;
        int dataBytes = frames * Math.Max(1, (int)channels) * 2;
        var bytes = new byte[HeaderBytes + dataBytes];
        var span = bytes.AsSpan();
        Encoding.ASCII.GetBytes("RIFF").CopyTo(span);
        BinaryPrimitives.WriteUInt32LittleEndian(span[4..], (uint)(bytes.Length - 8));
        Encoding.ASCII.GetBytes("WAVE").CopyTo(span[8..]);
        Encoding.ASCII.GetBytes("fmt ").CopyTo(span[12..]);
        BinaryPrimitives.WriteUInt32LittleEndian(span[16..], 16);
        BinaryPrimitives.WriteUInt16LittleEndian(span[20..], formatCode);
        BinaryPrimitives.WriteUInt16LittleEndian(span[22..], channels);
        BinaryPrimitives.WriteUInt32LittleEndian(span[24..], (uint)sampleRate);
        BinaryPrimitives.WriteUInt32LittleEndian(span[28..], (uint)(sampleRate * blockAlign));
        BinaryPrimitives.WriteUInt16LittleEndian(span[32..], (ushort)blockAlign);
        BinaryPrimitives.WriteUInt16LittleEndian(span[34..], 16);
        Encoding.ASCII.GetBytes("data").CopyTo(span[36..]);
        BinaryPrimitives.WriteUInt32LittleEndian(span[40..], declaredDataBytes ?? (uint)dataBytes);
        for (int i = 0; i < dataBytes / 2; i++)
        {
            // A square-ish tone whose period depends on the seed, so different seeds give different bytes.
            short sample = (short)((i / (5 + seed)) % 2 == 0 ? 8000 : -8000);
            BinaryPrimitives.WriteInt16LittleEndian(span[(HeaderBytes + (2 * i))..], sample);
        }

        return bytes;
    }
}
