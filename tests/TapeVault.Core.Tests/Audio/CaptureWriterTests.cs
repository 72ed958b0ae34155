using TapeVault.Core.Audio;
using Xunit;

namespace TapeVault.Core.Tests.Audio;

/// <summary>
/// The writer's files are what SoX (the outside reference) says they are, and hold the values written,
/// clipped to [-1, 1].
/// </summary>
public sealed class CaptureWriterTests : IClassFixture<AudioTempFolder>
{
    private readonly AudioTempFolder temp;

    public CaptureWriterTests(AudioTempFolder temp)
    {
        this.temp = temp;
    }

    [Theory]
    [InlineData(CaptureEncoding.Pcm8, "8", "Unsigned Integer PCM", 0.5 / 128)]
    [InlineData(CaptureEncoding.Pcm16, "16", "Signed Integer PCM", 0.5 / 32768)]
    [InlineData(CaptureEncoding.Pcm24, "24", "Signed Integer PCM", 0.5 / 8388608)]
    [InlineData(CaptureEncoding.Float32, "32", "Floating Point PCM", 1.0 / (1 << 23))] // SoX passes floats through 32-bit integers, a few ulps off.
    public void Writer_WritesFilesThatSoxDecodesToTheSameValues(CaptureEncoding encoding, string bits, string soxEncoding, double tolerance)
    {
        float[] signal = AudioSamples.Tones(3001, 32_000, 1200, 2400);
        string path = temp.File($"w-{encoding}.wav");
        string raw = temp.File($"w-{encoding}.f32");
        CaptureWriter.WriteMono(path, 32_000, encoding, signal);

        // SoX inspects the header and decodes the samples to raw little-endian floats, independently of NAudio.
        Assert.Equal("32000", ExternalTools.SoxInfo("-r", path));
        Assert.Equal("1", ExternalTools.SoxInfo("-c", path));
        Assert.Equal(bits, ExternalTools.SoxInfo("-b", path));
        Assert.Equal(soxEncoding, ExternalTools.SoxInfo("-e", path));
        Assert.Equal("3001", ExternalTools.SoxInfo("-s", path));
        ExternalTools.Sox(path, "-t", "raw", "-e", "floating-point", "-b", "32", "-L", raw);

        AudioSamples.AssertClose(signal, AudioSamples.ReadRawFloat32(raw), tolerance + 1e-9);
    }

    [Fact]
    public void Writer_WritesStereoFramesInterleaved_AsSoxSeesThem()
    {
        float[] left = [0.5f, -0.25f, 0f, 1f];
        float[] right = [-0.5f, 0.125f, 0.75f, -1f];
        string path = temp.File("w-stereo.wav");
        string raw = temp.File("w-stereo.f32");
        CaptureWriter.WriteStereo(path, 8000, CaptureEncoding.Pcm16, left, right);

        Assert.Equal("2", ExternalTools.SoxInfo("-c", path));
        ExternalTools.Sox(path, "-t", "raw", "-e", "floating-point", "-b", "32", "-L", raw);
        Assert.Equal([0.5f, -0.5f, -0.25f, 0.125f, 0f, 0.75f, 32767 / 32768f, -1f], AudioSamples.ReadRawFloat32(raw));
    }

    [Theory]
    [InlineData(CaptureEncoding.Pcm8, 127 / 128f)]
    [InlineData(CaptureEncoding.Pcm16, 32767 / 32768f)]
    [InlineData(CaptureEncoding.Pcm24, 8388607 / 8388608f)]
    [InlineData(CaptureEncoding.Float32, 1f)]
    public void Writer_ClipsToPlusMinusOne_AndWritesNaNAsSilence(CaptureEncoding encoding, float fullScale)
    {
        float[] samples = [2f, -2f, float.NaN, float.PositiveInfinity, float.NegativeInfinity, 1f, -1f, 0.5f];
        string path = temp.File($"clip-{encoding}.wav");
        CaptureWriter.WriteMono(path, 8000, encoding, samples);

        Assert.Equal([fullScale, -1f, 0f, fullScale, -1f, fullScale, -1f, 0.5f], AudioSamples.ReadFile(path));
    }

    [Fact]
    public void WriteMono16_WritesEveryChunkInOrder_IncludingEmptyOnes()
    {
        float[] signal = AudioSamples.Tones(10_000, 22_050, 1200, 2400);
        string path = temp.File("chunks.wav");
        CaptureWriter.WriteMono16(path, 22_050, [signal.AsMemory(0, 1), ReadOnlyMemory<float>.Empty, signal.AsMemory(1, 5000), signal.AsMemory(5001)]);

        AudioSamples.AssertClose(signal, AudioSamples.ReadFile(path), (0.5 / 32768) + 1e-9);
    }

    [Fact]
    public void WriterStream_CountsFrames_AndFinishesTheHeaderOnDispose()
    {
        string path = temp.File("stream.wav");
        using (CaptureWriterStream stream = CaptureWriter.Create(path, 11_025, CaptureEncoding.Pcm24, channels: 2))
        {
            for (int i = 0; i < 10; i++)
            {
                stream.Write(new float[1000], new float[1000]);
            }

            Assert.Equal(10_000, stream.FramesWritten);
        }

        using CaptureReader reader = CaptureReader.Open(path);
        Assert.Equal(10_000, reader.FrameCount);
        Assert.Equal(2, reader.Channels);
        Assert.Equal(24, reader.BitsPerSample);
    }

    [Fact]
    public void WriterStream_RefusesMonoWritesToStereo_AndStereoWritesToMono_AndUnequalChannels()
    {
        using (CaptureWriterStream stereo = CaptureWriter.Create(temp.File("refuse-stereo.wav"), 8000, CaptureEncoding.Pcm16, channels: 2))
        {
            Assert.Throws<InvalidOperationException>(() => stereo.Write(new float[4]));
            Assert.Throws<ArgumentException>(() => stereo.Write(new float[4], new float[3]));
        }

        using CaptureWriterStream mono = CaptureWriter.Create(temp.File("refuse-mono.wav"), 8000);
        Assert.Throws<InvalidOperationException>(() => mono.Write(new float[4], new float[4]));
    }

    [Fact]
    public void WriterStream_RefusesBadArguments()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => CaptureWriter.Create(temp.File("bad1.wav"), 8000, CaptureEncoding.Pcm16, channels: 3));
        Assert.Throws<ArgumentOutOfRangeException>(() => CaptureWriter.Create(temp.File("bad2.wav"), 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => CaptureWriter.Create(temp.File("bad3.wav"), 8000, (CaptureEncoding)99));
    }
}
