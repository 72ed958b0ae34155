using System.Globalization;
using TapeVault.Core.Audio;
using TapeVault.Core.Tests.Audio;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Hardening;

/// <summary>
/// Unusual but valid WAV layouts that must be read, written by hand (layout facts in <see cref="HostileWav"/>). SoX,
/// an outside WAV reader, is the judge: it must see the same format, the same number of samples and, decoded to raw
/// 32-bit float, the same sample values TapeVault reads.
/// </summary>
public sealed class WavAcceptanceTests(AudioTempFolder temp) : IClassFixture<AudioTempFolder>
{
    private static readonly short[] Ramp = [.. Enumerable.Range(0, 2 * 301).Select(i => (short)(((i * 211) % 64_000) - 32_000))];

    public static TheoryData<string> Names() => [.. Cases.Keys];

    /// <summary>Case name → the file, and what SoX must report as its encoding (sox --i -e).</summary>
    internal static readonly Dictionary<string, (byte[] File, string SoxEncoding)> Cases = new()
    {
        ["extensible PCM 16-bit stereo"] = (
            WavBytes.Wave(WavBytes.Chunk("fmt ", WavBytes.ExtensibleFmtBody(2, 8000, 16, WavBytes.SubFormat(WavBytes.Pcm))), WavBytes.Chunk("data", WavBytes.Pcm16Body(Ramp))),
            "Signed Integer PCM"),
        ["extensible PCM 24-bit mono"] = (
            WavBytes.Wave(WavBytes.Chunk("fmt ", WavBytes.ExtensibleFmtBody(1, 8000, 24, WavBytes.SubFormat(WavBytes.Pcm))), WavBytes.Chunk("data", Pcm24Body(Ramp))),
            "Signed Integer PCM"),
        ["extensible float 32-bit stereo"] = (
            WavBytes.Wave(WavBytes.Chunk("fmt ", WavBytes.ExtensibleFmtBody(2, 8000, 32, WavBytes.SubFormat(WavBytes.IeeeFloat))), WavBytes.Chunk("data", WavBytes.Float32Body([.. Ramp.Select(s => s / 40000f)]))),
            "Floating Point PCM"),
        ["odd-length LIST chunk with its pad byte before the data"] = (
            WavBytes.Wave(HostileWav.Fmt16(), WavBytes.Chunk("LIST", [.. "INFO"u8, .. WavBytes.Chunk("ICMT", "side A."u8.ToArray(), pad: false)]), WavBytes.Chunk("data", WavBytes.Pcm16Body(Ramp))),
            "Signed Integer PCM"),
        ["odd-length 8-bit data chunk with its pad byte and a chunk after it"] = (
            WavBytes.Wave(WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 1, 8000, 8)), WavBytes.Chunk("data", [.. Enumerable.Range(0, 301).Select(i => unchecked((byte)(i * 7)))]), WavBytes.Chunk("LIST", WavBytes.ListInfoBody("after the audio"))),
            "Unsigned Integer PCM"),
        ["extra chunk after the data"] = (
            WavBytes.Wave(HostileWav.Fmt16(), WavBytes.Chunk("data", WavBytes.Pcm16Body(Ramp)), WavBytes.Chunk("LIST", WavBytes.ListInfoBody("recorded on deck 2, head cleaned"))),
            "Signed Integer PCM"),
        ["JUNK chunk before fmt"] = (
            WavBytes.Wave(WavBytes.Chunk("JUNK", new byte[28]), HostileWav.Fmt16(), WavBytes.Chunk("data", WavBytes.Pcm16Body(Ramp))),
            "Signed Integer PCM"),
        ["PCM fmt of 18 bytes with cbSize 0"] = (
            WavBytes.Wave(WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 1, 8000, 16, withCbSize: true)), WavBytes.Chunk("data", WavBytes.Pcm16Body(Ramp))),
            "Signed Integer PCM"),
        ["PCM fmt of 20 bytes (4 extra bytes from the writer)"] = (
            WavBytes.Wave(HostileWav.FmtWithExtraBytes(4), WavBytes.Chunk("data", WavBytes.Pcm16Body(Ramp))),
            "Signed Integer PCM"),
        ["a single sample"] = (
            WavBytes.Wave(HostileWav.Fmt16(), WavBytes.Chunk("data", WavBytes.Pcm16Body([12345]))),
            "Signed Integer PCM"),
    };

    [Theory]
    [MemberData(nameof(Names))]
    public void Reader_ReadsWhatSoxReads(string name)
    {
        var (file, soxEncoding) = Cases[name];
        string path = temp.Write(WavRefusalTests.Safe(name) + ".wav", file);

        // Outside reference: SoX's header reading and its decode of every sample to raw little-endian 32-bit float.
        int channels = OutsideTool.SoxChannels(path);
        Assert.Equal(soxEncoding, OutsideTool.SoxInfo("-e", path));
        long soxSamples = long.Parse(OutsideTool.SoxInfo("-s", path), CultureInfo.InvariantCulture);
        string raw = temp.File(WavRefusalTests.Safe(name) + ".f32");
        OutsideTool.Sox(path, "-t", "raw", "-e", "floating-point", "-b", "32", "-L", raw);
        float[] soxInterleaved = AudioSamples.ReadRawFloat32(raw);
        Assert.Equal(soxSamples * channels, soxInterleaved.Length);

        foreach (var channel in new[] { ChannelChoice.Left, ChannelChoice.Right, ChannelChoice.Mix })
        {
            using var reader = CaptureReader.Open(path, channel);
            Assert.Equal(OutsideTool.SoxSampleRate(path), reader.SampleRate);
            Assert.Equal(channels, reader.Channels);
            Assert.Equal(soxSamples, reader.FrameCount);
            Assert.False(reader.Truncated);
            float[] expected = [.. Enumerable.Range(0, (int)soxSamples).Select(i => Pick(soxInterleaved, channels, i, channel))];
            AudioSamples.AssertClose(expected, AudioSamples.ReadAll(reader, 97), 1e-6);

            // Outside reference: GNU sha256sum over the whole file, chunks after the audio included.
            Assert.Equal(OutsideTool.Sha256Sum(path), reader.Info.Sha256);
            Assert.Equal(file.Length, reader.Info.FileBytes);
        }
    }

    [Fact]
    public void Reader_ReadsTheExtensiblePcmThatSoxWritesFor24Bits()
    {
        // SoX itself writes WAVE_FORMAT_EXTENSIBLE for 24-bit PCM: format tag 0xFFFE at byte 20, sub-format code 1 at byte 44.
        string path = temp.File("sox-24-bit.wav");
        OutsideTool.Sox("-n", "-r", "8000", "-b", "24", "-c", "1", path, "synth", "0.25", "sine", "1200", "vol", "0.7");
        byte[] bytes = File.ReadAllBytes(path);
        Assert.Equal([0xFE, 0xFF], bytes[20..22]);
        Assert.Equal([0x01, 0x00], bytes[44..46]);
        string raw = temp.File("sox-24-bit.f32");
        OutsideTool.Sox(path, "-t", "raw", "-e", "floating-point", "-b", "32", "-L", raw);

        using var reader = CaptureReader.Open(path);

        Assert.Equal("pcm", reader.Encoding);
        Assert.Equal(24, reader.BitsPerSample);
        AudioSamples.AssertClose(AudioSamples.ReadRawFloat32(raw), AudioSamples.ReadAll(reader), 1e-6);
    }

    [Fact]
    public void Reader_ReadsToTheRealEnd_WhenTheDataChunkClaimsMoreThanTheFileHolds()
    {
        byte[] file = WavBytes.Wave(HostileWav.Fmt16(), WavBytes.Chunk("data", WavBytes.Pcm16Body(Ramp), declaredSize: 1_000_000));
        string path = temp.Write("longer-than-the-file.wav", file);

        using var reader = CaptureReader.Open(path);

        Assert.True(reader.Truncated);
        Assert.Equal(Ramp.Length, reader.FrameCount);
        Assert.Equal(Ramp.Select(s => s / 32768f).ToArray(), AudioSamples.ReadAll(reader));
        Assert.Equal(OutsideTool.Sha256Sum(path), reader.Info.Sha256);
    }

    private static float Pick(float[] interleaved, int channels, int frame, ChannelChoice channel) => channels == 1
        ? interleaved[frame]
        : channel switch
        {
            ChannelChoice.Left => interleaved[frame * channels],
            ChannelChoice.Right => interleaved[(frame * channels) + 1],
            _ => (interleaved[frame * channels] + interleaved[(frame * channels) + 1]) * 0.5f,
        };

    private static byte[] Pcm24Body(short[] samples)
    {
        // 24-bit little-endian: the 16-bit value in the top two bytes and a low byte that makes the values distinct.
        var body = new byte[samples.Length * 3];
        for (int i = 0; i < samples.Length; i++)
        {
            int value = (samples[i] * 256) + (i % 256);
            body[i * 3] = (byte)(value & 0xFF);
            body[(i * 3) + 1] = (byte)((value >> 8) & 0xFF);
            body[(i * 3) + 2] = (byte)((value >> 16) & 0xFF);
        }

        return body;
    }
}
