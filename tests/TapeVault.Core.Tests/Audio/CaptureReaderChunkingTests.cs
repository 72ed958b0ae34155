using TapeVault.Core.Audio;
using Xunit;

namespace TapeVault.Core.Tests.Audio;

/// <summary>The samples a reader returns do not depend on how large the caller's chunks are.</summary>
public sealed class CaptureReaderChunkingTests : IClassFixture<AudioTempFolder>
{
    // Not a multiple of 7, nor of 4096, nor of the reader's internal buffer.
    private const int Frames = 10_007;

    private readonly AudioTempFolder temp;

    public CaptureReaderChunkingTests(AudioTempFolder temp)
    {
        this.temp = temp;
    }

    [Theory]
    [InlineData(CaptureEncoding.Pcm8, 1, ChannelChoice.Mix)]
    [InlineData(CaptureEncoding.Pcm16, 1, ChannelChoice.Mix)]
    [InlineData(CaptureEncoding.Pcm24, 1, ChannelChoice.Mix)]
    [InlineData(CaptureEncoding.Float32, 1, ChannelChoice.Mix)]
    [InlineData(CaptureEncoding.Pcm16, 2, ChannelChoice.Left)]
    [InlineData(CaptureEncoding.Pcm16, 2, ChannelChoice.Right)]
    [InlineData(CaptureEncoding.Pcm24, 2, ChannelChoice.Mix)]
    [InlineData(CaptureEncoding.Pcm8, 2, ChannelChoice.Mix)]
    public void ReadingInChunksOf1_7And4096_GivesIdenticalSamples(CaptureEncoding encoding, int channels, ChannelChoice choice)
    {
        string path = temp.File($"chunks-{encoding}-{channels}-{choice}.wav");
        float[] left = AudioSamples.Tones(Frames, 44_100, 1200, 2400, 0.8, seed: 5);
        if (channels == 1)
        {
            CaptureWriter.WriteMono(path, 44_100, encoding, left);
        }
        else
        {
            CaptureWriter.WriteStereo(path, 44_100, encoding, left, AudioSamples.Tones(Frames, 44_100, 2400, 4800, 0.6, seed: 6));
        }

        float[] by4096 = AudioSamples.ReadFile(path, choice, 4096);
        float[] by7 = AudioSamples.ReadFile(path, choice, 7);
        float[] by1 = AudioSamples.ReadFile(path, choice, 1);
        float[] allAtOnce = AudioSamples.ReadFile(path, choice, Frames + 100);

        Assert.Equal(Frames, by4096.Length);
        Assert.Equal(by4096, by7);
        Assert.Equal(by4096, by1);
        Assert.Equal(by4096, allAtOnce);
    }

    [Fact]
    public void Read_FillsTheWholeSpan_UntilTheAudioEnds()
    {
        string path = temp.File("fill.wav");
        CaptureWriter.WriteMono16(path, 8000, [new float[Frames]]);

        using CaptureReader reader = CaptureReader.Open(path);
        var buffer = new float[3000];
        Assert.Equal(3000, reader.Read(buffer));
        Assert.Equal(3000, reader.Read(buffer));
        Assert.Equal(3000, reader.Read(buffer));
        Assert.Equal(Frames - 9000, reader.Read(buffer));
        Assert.Equal(0, reader.Read(buffer));
        Assert.Equal(0, reader.Read(buffer));
        Assert.Equal(Frames, reader.FramesRead);
    }

    [Fact]
    public void Read_OfAnEmptySpan_ReturnsZero_WithoutEndingTheAudio()
    {
        string path = temp.File("empty-span.wav");
        CaptureWriter.WriteMono16(path, 8000, [new float[10]]);

        using CaptureReader reader = CaptureReader.Open(path);
        Assert.Equal(0, reader.Read([]));
        Assert.False(reader.IsComplete);
        Assert.Equal(10, reader.Read(new float[20]));
    }
}
