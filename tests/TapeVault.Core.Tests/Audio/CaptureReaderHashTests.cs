using TapeVault.Core.Audio;
using Xunit;

namespace TapeVault.Core.Tests.Audio;

/// <summary>
/// The SHA-256 the reader computes while it streams the audio equals what GNU coreutils' sha256sum (the outside
/// reference, run as a process) prints for the same file, whatever chunks the file holds and wherever they lie.
/// </summary>
public sealed class CaptureReaderHashTests : IClassFixture<AudioTempFolder>
{
    private readonly AudioTempFolder temp;

    public CaptureReaderHashTests(AudioTempFolder temp)
    {
        this.temp = temp;
    }

    [Fact]
    public void Reader_HashEqualsSha256sum_OfTheWholeFile()
    {
        string path = temp.File("plain.wav");
        CaptureWriter.WriteMono16(path, 44_100, [AudioSamples.Tones(20_000, 44_100, 1200, 2400)]);

        AssertHashMatchesSha256sum(path);
    }

    [Fact]
    public void Reader_HashEqualsSha256sum_WithAListChunkBeforeTheData()
    {
        short[] samples = Enumerable.Range(0, 3000).Select(i => (short)((i * 37 % 2000) - 1000)).ToArray();
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 1, 22_050, 16)),
            WavBytes.Chunk("LIST", WavBytes.ListInfoBody("Side A, recorded from a Datassette")),
            WavBytes.Chunk("data", WavBytes.Pcm16Body(samples)));
        string path = temp.Write("list-before-data.wav", file);

        CaptureInfo info = AssertHashMatchesSha256sum(path);
        Assert.Equal(3000, info.FrameCount);
        Assert.Equal(samples.Select(s => s / 32768f).ToArray(), AudioSamples.ReadFile(path));
    }

    [Fact]
    public void Reader_HashEqualsSha256sum_WithAnOddSizedChunkAndItsPadByte()
    {
        // An odd-sized chunk before the data, odd-sized 8-bit audio, each followed by its pad byte, and a chunk after the data.
        byte[] audio = Enumerable.Range(0, 1001).Select(i => (byte)(128 + (i % 50) - 25)).ToArray();
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 1, 8000, 8)),
            WavBytes.Chunk("junk", [1, 2, 3, 4, 5]),
            WavBytes.Chunk("data", audio),
            WavBytes.Chunk("LIST", WavBytes.ListInfoBody("odd")));
        string path = temp.Write("odd-chunks.wav", file);
        Assert.Equal(0, file[12 + 24 + 8 + 5]);

        CaptureInfo info = AssertHashMatchesSha256sum(path);
        Assert.Equal(1001, info.FrameCount);
        Assert.Equal(audio.Select(b => (b / 128f) - 1f).ToArray(), AudioSamples.ReadFile(path));
    }

    [Theory]
    [InlineData("-b 8")]
    [InlineData("-b 16")]
    [InlineData("-b 24")]
    [InlineData("-b 32")]
    [InlineData("-e floating-point -b 32")]
    [InlineData("-e floating-point -b 64")]
    public void Reader_HashEqualsSha256sum_ForStereoFilesSoxWrote(string soxOutputOptions)
    {
        string tag = soxOutputOptions.Replace(' ', '_');
        string path = temp.File($"sox-hash-{tag}.wav");

        // SoX (outside reference) synthesises a stereo file; 24/32-bit ones carry fact chunks and WAVE_FORMAT_EXTENSIBLE.
        ExternalTools.Sox(["-n", "-r", "44100", "-c", "2", .. soxOutputOptions.Split(' '), path, "synth", "0.3", "sine", "1200", "sine", "2400"]);

        CaptureInfo info = AssertHashMatchesSha256sum(path);
        Assert.Equal(long.Parse(ExternalTools.SoxInfo("-s", path)), info.FrameCount);
    }

    [Fact]
    public void Reader_HashEqualsSha256sum_WhenTheHeaderClaimsMoreDataThanTheFileHolds()
    {
        short[] samples = Enumerable.Range(0, 999).Select(i => (short)(i * 20)).ToArray();
        string path = temp.Write("truncated-hash.wav", WavBytes.Pcm16(8000, 1, samples, declaredDataSize: 100_000));

        CaptureInfo info = AssertHashMatchesSha256sum(path);
        Assert.Equal(999, info.FrameCount);
    }

    [Fact]
    public void Reader_HashEqualsSha256sum_WithBytesAfterTheEndOfTheRiffChunk()
    {
        string path = temp.File("trailing-junk.wav");
        CaptureWriter.WriteMono16(path, 8000, [AudioSamples.Tones(2000, 8000, 1200, 2400)]);
        using (var append = new FileStream(path, FileMode.Append))
        {
            append.Write("JUNK AFTER THE RIFF END, NOT DESCRIBED BY ANY HEADER"u8);
        }

        CaptureInfo info = AssertHashMatchesSha256sum(path);
        Assert.Equal(2000, info.FrameCount);
    }

    [Theory]
    [InlineData(0, 1_000, 0)]
    [InlineData(0, 1_000, 5_001)]
    [InlineData(5_001, 1_000, 0)]
    [InlineData(0, 1_200_000, 4_000)]
    [InlineData(700_001, 1_200_000, 0)]
    [InlineData(300_000, 600_000, 300_001)]
    public void Reader_HashEqualsSha256sum_AndReadsEveryByteFromDiskOnce_WhereverTheOtherChunksLie(int chunkBeforeData, int audioFrames, int chunkAfterData)
    {
        // NAudio steps over chunk bodies, and over the audio to find chunks after it; the hashing stream must still
        // see every byte once, and the file must still be read from disk once (only chunk headers twice).
        short[] samples = Enumerable.Range(0, audioFrames).Select(i => (short)((i * 7919L % 60_000) - 30_000)).ToArray();
        var chunks = new List<byte[]> { WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 1, 44_100, 16)) };
        if (chunkBeforeData > 0)
        {
            chunks.Add(WavBytes.Chunk("JUNK", Enumerable.Repeat((byte)0x5A, chunkBeforeData).ToArray()));
        }

        chunks.Add(WavBytes.Chunk("data", WavBytes.Pcm16Body(samples)));
        if (chunkAfterData > 0)
        {
            chunks.Add(WavBytes.Chunk("LIST", WavBytes.ListInfoBody("trailing metadata")));
            chunks.Add(WavBytes.Chunk("cue ", Enumerable.Repeat((byte)0xA5, chunkAfterData).ToArray()));
        }

        byte[] file = WavBytes.Wave([.. chunks]);
        string path = temp.Write($"layout-{chunkBeforeData}-{audioFrames}-{chunkAfterData}.wav", file);

        using CaptureReader reader = CaptureReader.Open(path);
        float[] read = AudioSamples.ReadAll(reader, 10_000);
        CaptureInfo info = reader.Info;

        Assert.Equal(ExternalTools.Sha256Sum(path), info.Sha256);
        Assert.Equal(file.Length, info.FileBytes);
        Assert.Equal(audioFrames, info.FrameCount);
        Assert.Equal(samples[^1] / 32768f, read[^1]);
        Assert.InRange(reader.SourceBytesRead, file.Length, file.Length + 256);
    }

    [Fact]
    public void Complete_WithoutReadingAnySamples_GivesTheSameHash()
    {
        string path = temp.File("complete-only.wav");
        CaptureWriter.WriteStereo(path, 44_100, CaptureEncoding.Pcm16, AudioSamples.Tones(9000, 44_100, 1200, 2400), AudioSamples.Tones(9000, 44_100, 600, 1200));

        using CaptureReader reader = CaptureReader.Open(path);
        CaptureInfo info = reader.Complete();
        Assert.Equal(ExternalTools.Sha256Sum(path), info.Sha256);
        Assert.Equal(9000, info.FrameCount);
        Assert.Equal(0, reader.Read(new float[16]));
    }

    [Fact]
    public void Complete_AfterReadingPartOfTheSamples_DiscardsTheRest_AndGivesTheFullInfo()
    {
        string path = temp.File("complete-half.wav");
        CaptureWriter.WriteMono(path, 22_050, CaptureEncoding.Pcm8, AudioSamples.Tones(11_025, 22_050, 1200, 2400));

        using CaptureReader reader = CaptureReader.Open(path);
        Assert.Equal(5000, reader.Read(new float[5000]));
        Assert.Null(reader.Sha256);

        CaptureInfo info = reader.Complete();
        Assert.Equal(new CaptureInfo(ExternalTools.Sha256Sum(path), new FileInfo(path).Length, 22_050, 1, 8, "pcm", 11_025, 0.5), info);
        Assert.Equal(5000, reader.FramesRead);
    }

    [Fact]
    public void Sha256_IsNullAndInfoThrows_UntilReadHasReturnedZero()
    {
        string path = temp.File("until-end.wav");
        CaptureWriter.WriteMono16(path, 8000, [new float[100]]);

        using CaptureReader reader = CaptureReader.Open(path);
        var buffer = new float[100];
        Assert.Equal(100, reader.Read(buffer));
        Assert.Null(reader.Sha256);
        Assert.Throws<InvalidOperationException>(() => reader.Info);

        Assert.Equal(0, reader.Read(buffer));
        Assert.Equal(ExternalTools.Sha256Sum(path), reader.Sha256);
        Assert.Equal(reader.Sha256, reader.Info.Sha256);
    }

    private static CaptureInfo AssertHashMatchesSha256sum(string path)
    {
        using CaptureReader reader = CaptureReader.Open(path);
        AudioSamples.ReadAll(reader, 777);
        CaptureInfo info = reader.Info;
        Assert.Equal(ExternalTools.Sha256Sum(path), info.Sha256);
        Assert.Equal(new FileInfo(path).Length, info.FileBytes);
        return info;
    }
}
