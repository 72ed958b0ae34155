using TapeVault.Core.Audio;
using Xunit;

namespace TapeVault.Core.Tests.Audio;

/// <summary>
/// Samples written in every supported encoding read back as the same values. Files in the encodings other than
/// 16-bit are made by SoX (the outside reference) from one 16-bit file, so NAudio and TapeVault are checked
/// against an independent writer; sox runs with -D (no dither) so its conversion is a plain rounding.
/// </summary>
public sealed class CaptureReaderRoundTripTests : IClassFixture<AudioTempFolder>
{
    private const int Rate = 44_100;
    private const int Frames = 5_003;
    private const double Step16 = 1.0 / 32768;

    private readonly AudioTempFolder temp;

    public CaptureReaderRoundTripTests(AudioTempFolder temp)
    {
        this.temp = temp;
    }

    public static TheoryData<string, ChannelChoice, double> SoxStereoCases()
    {
        var data = new TheoryData<string, ChannelChoice, double>();
        foreach (var (args, tolerance) in new[] { ("-b 16", 0.0), ("-b 8", 1.0 / 128), ("-b 24", 0.0), ("-b 32", 0.0), ("-e floating-point -b 32", 0.0), ("-e floating-point -b 64", 0.0) })
        {
            foreach (ChannelChoice choice in Enum.GetValues<ChannelChoice>())
            {
                data.Add(args, choice, tolerance);
            }
        }

        return data;
    }

    [Theory]
    [InlineData(CaptureEncoding.Pcm8, 8, "pcm", 0.5 / 128)]
    [InlineData(CaptureEncoding.Pcm16, 16, "pcm", 0.5 / 32768)]
    [InlineData(CaptureEncoding.Pcm24, 24, "pcm", 0.5 / 8388608)]
    [InlineData(CaptureEncoding.Float32, 32, "float", 0.0)]
    public void Reader_ReturnsWhatTheWriterWrote_WithinHalfAQuantisationStep(CaptureEncoding encoding, int bits, string encodingName, double tolerance)
    {
        float[] signal = AudioSamples.Tones(Frames, Rate, 1200, 2400);
        string path = temp.File($"writer-{encoding}.wav");
        CaptureWriter.WriteMono(path, Rate, encoding, signal);

        using CaptureReader reader = CaptureReader.Open(path);
        Assert.Equal(bits, reader.BitsPerSample);
        Assert.Equal(encodingName, reader.Encoding);
        Assert.Equal(1, reader.Channels);
        Assert.Equal(Rate, reader.SampleRate);
        Assert.Equal(Frames, reader.FrameCount);
        AudioSamples.AssertClose(signal, AudioSamples.ReadAll(reader), tolerance + 1e-9);
    }

    [Theory]
    [InlineData("-b 8", 8, "pcm", 1.0 / 128)]
    [InlineData("-b 24", 24, "pcm", 0.0)]
    [InlineData("-b 32", 32, "pcm", 0.0)]
    [InlineData("-e floating-point -b 32", 32, "float", 0.0)]
    [InlineData("-e floating-point -b 64", 64, "float", 0.0)]
    public void Reader_MatchesTheSixteenBitSource_ForFilesSoxConvertedFromIt(string soxOutputOptions, int bits, string encodingName, double tolerance)
    {
        float[] signal = AudioSamples.Tones(Frames, Rate, 1200, 2400);
        string source = temp.File($"sox-source-{bits}-{encodingName}.wav");
        CaptureWriter.WriteMono16(source, Rate, [signal.AsMemory(0, 1000), signal.AsMemory(1000)]);
        string converted = temp.File($"sox-{bits}-{encodingName}.wav");

        // SoX is the outside reference writer for the 8-, 24-, 32-bit and float files (24 and 32 come out as WAVE_FORMAT_EXTENSIBLE).
        ExternalTools.Sox(["-D", source, .. soxOutputOptions.Split(' '), converted]);

        float[] expected = AudioSamples.ReadFile(source);
        using CaptureReader reader = CaptureReader.Open(converted);
        Assert.Equal(bits, reader.BitsPerSample);
        Assert.Equal(encodingName, reader.Encoding);
        Assert.Equal(Rate, reader.SampleRate);
        Assert.Equal(long.Parse(ExternalTools.SoxInfo("-s", converted)), reader.FrameCount);
        AudioSamples.AssertClose(expected, AudioSamples.ReadAll(reader), tolerance + 1e-9);
        AudioSamples.AssertClose(signal, expected, (0.5 * Step16) + 1e-9);
    }

    [Theory]
    [MemberData(nameof(SoxStereoCases))]
    public void Reader_PicksLeftRightOrMix_FromStereoFilesSoxMergedFromTwoMonoFiles(string soxOutputOptions, ChannelChoice choice, double tolerance)
    {
        string tag = soxOutputOptions.Replace(' ', '_');
        string left = temp.File($"st-left-{tag}-{choice}.wav");
        string right = temp.File($"st-right-{tag}-{choice}.wav");
        CaptureWriter.WriteMono(left, Rate, CaptureEncoding.Pcm16, AudioSamples.Tones(Frames, Rate, 1200, 2400, 0.8, seed: 1));
        CaptureWriter.WriteMono(right, Rate, CaptureEncoding.Pcm16, AudioSamples.Tones(Frames, Rate, 600, 1800, 0.7, seed: 2));
        string stereo = temp.File($"st-{tag}-{choice}.wav");

        // SoX (outside reference) merges the two mono files into one interleaved stereo file.
        ExternalTools.Sox(["-D", "-M", left, right, .. soxOutputOptions.Split(' '), stereo]);

        float[] l = AudioSamples.ReadFile(left);
        float[] r = AudioSamples.ReadFile(right);
        float[] expected = choice switch
        {
            ChannelChoice.Left => l,
            ChannelChoice.Right => r,
            _ => l.Zip(r, (a, b) => (a + b) * 0.5f).ToArray(),
        };

        using CaptureReader reader = CaptureReader.Open(stereo, choice);
        Assert.Equal(2, reader.Channels);
        Assert.Equal(choice, reader.Channel);
        AudioSamples.AssertClose(expected, AudioSamples.ReadAll(reader), tolerance + 1e-9);
    }

    [Theory]
    [InlineData(CaptureEncoding.Pcm8, 0.5 / 128)]
    [InlineData(CaptureEncoding.Pcm16, 0.5 / 32768)]
    [InlineData(CaptureEncoding.Pcm24, 0.5 / 8388608)]
    [InlineData(CaptureEncoding.Float32, 0.0)]
    public void Reader_PicksEachChannel_OfStereoFilesTheWriterWrote(CaptureEncoding encoding, double tolerance)
    {
        float[] left = AudioSamples.Tones(Frames, Rate, 1200, 2400, 0.8, seed: 3);
        float[] right = AudioSamples.Tones(Frames, Rate, 300, 900, 0.5, seed: 4);
        string path = temp.File($"writer-stereo-{encoding}.wav");
        CaptureWriter.WriteStereo(path, Rate, encoding, left, right);

        float[] readLeft = AudioSamples.ReadFile(path, ChannelChoice.Left);
        float[] readRight = AudioSamples.ReadFile(path, ChannelChoice.Right);
        float[] readMix = AudioSamples.ReadFile(path, ChannelChoice.Mix);
        AudioSamples.AssertClose(left, readLeft, tolerance + 1e-9);
        AudioSamples.AssertClose(right, readRight, tolerance + 1e-9);
        AudioSamples.AssertClose(readLeft.Zip(readRight, (a, b) => (a + b) * 0.5f).ToArray(), readMix, 0);
    }

    [Fact]
    public void Reader_MixAveragesAllFourChannels_AndLeftRightPickTheFirstTwo_OfASoxMadeFourChannelFile()
    {
        var paths = new string[4];
        var channels = new float[4][];
        for (int c = 0; c < 4; c++)
        {
            paths[c] = temp.File($"quad-{c}.wav");
            CaptureWriter.WriteMono(paths[c], Rate, CaptureEncoding.Pcm16, AudioSamples.Tones(Frames, Rate, 500 * (c + 1), 700 * (c + 1), 0.6, seed: 10 + c));
            channels[c] = AudioSamples.ReadFile(paths[c]);
        }

        string quad = temp.File("quad.wav");
        ExternalTools.Sox(["-M", .. paths, quad]);

        using (CaptureReader reader = CaptureReader.Open(quad))
        {
            Assert.Equal(4, reader.Channels);
            float[] expected = Enumerable.Range(0, Frames).Select(i => (channels[0][i] + channels[1][i] + channels[2][i] + channels[3][i]) * 0.25f).ToArray();
            AudioSamples.AssertClose(expected, AudioSamples.ReadAll(reader), 1e-7);
        }

        AudioSamples.AssertClose(channels[0], AudioSamples.ReadFile(quad, ChannelChoice.Left), 0);
        AudioSamples.AssertClose(channels[1], AudioSamples.ReadFile(quad, ChannelChoice.Right), 0);
    }

    [Fact]
    public void Reader_IgnoresTheChannelChoice_ForMonoFiles()
    {
        string path = temp.File("mono-choice.wav");
        CaptureWriter.WriteMono16(path, Rate, [AudioSamples.Tones(Frames, Rate, 1200, 2400)]);

        float[] mix = AudioSamples.ReadFile(path, ChannelChoice.Mix);
        Assert.Equal(mix, AudioSamples.ReadFile(path, ChannelChoice.Left));
        Assert.Equal(mix, AudioSamples.ReadFile(path, ChannelChoice.Right));
    }

    [Fact]
    public void Reader_ReadsExtensibleFloat_WrittenByHand()
    {
        float[] signal = AudioSamples.Tones(1000, 22_050, 1200, 2400);
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.ExtensibleFmtBody(1, 22_050, 32, WavBytes.SubFormat(WavBytes.IeeeFloat))),
            WavBytes.Chunk("data", WavBytes.Float32Body(signal)));
        string path = temp.Write("extensible-float.wav", file);

        using CaptureReader reader = CaptureReader.Open(path);
        Assert.Equal("float", reader.Encoding);
        Assert.Equal(32, reader.BitsPerSample);
        Assert.Equal(signal, AudioSamples.ReadAll(reader));
    }

    [Fact]
    public void Reader_ReadsExtensiblePcm16_WrittenByHand()
    {
        short[] samples = [0, 1000, -1000, short.MaxValue, short.MinValue, 12345];
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.ExtensibleFmtBody(1, 8000, 16, WavBytes.SubFormat(WavBytes.Pcm))),
            WavBytes.Chunk("data", WavBytes.Pcm16Body(samples)));
        string path = temp.Write("extensible-pcm16.wav", file);

        using CaptureReader reader = CaptureReader.Open(path);
        Assert.Equal("pcm", reader.Encoding);
        Assert.Equal(16, reader.BitsPerSample);
        Assert.Equal(samples.Select(s => s / 32768f).ToArray(), AudioSamples.ReadAll(reader));
    }

    [Fact]
    public void Open_ReportsTheFormat_BeforeAnySampleIsRead_AndTheHashOnlyAfterTheLast()
    {
        string path = temp.File("props.wav");
        CaptureWriter.WriteStereo(path, 48_000, CaptureEncoding.Pcm24, new float[24_000], new float[24_000]);

        using CaptureReader reader = CaptureReader.Open(path, ChannelChoice.Left);
        Assert.Equal(48_000, reader.SampleRate);
        Assert.Equal(2, reader.Channels);
        Assert.Equal(24, reader.BitsPerSample);
        Assert.Equal("pcm", reader.Encoding);
        Assert.Equal(24_000, reader.FrameCount);
        Assert.Equal(0.5, reader.DurationSeconds);
        Assert.False(reader.Truncated);
        Assert.Null(reader.Sha256);
        Assert.False(reader.IsComplete);
        Assert.Throws<InvalidOperationException>(() => reader.Info);

        CaptureInfo info = reader.Complete();
        Assert.Equal(new CaptureInfo(ExternalTools.Sha256Sum(path), new FileInfo(path).Length, 48_000, 2, 24, "pcm", 24_000, 0.5), info);
        Assert.Equal(info, reader.Info);
        Assert.Equal(info.Sha256, reader.Sha256);
    }
}
