using TapeVault.Core.Audio;
using Xunit;

namespace TapeVault.Core.Tests.Audio;

/// <summary>
/// Files TapeVault cannot decode are refused at Open with a CaptureFormatException whose message is one plain
/// sentence saying what is wrong; a file cut off inside its audio is read up to where it ends.
/// </summary>
public sealed class CaptureReaderBadInputTests : IClassFixture<AudioTempFolder>
{
    private readonly AudioTempFolder temp;

    public CaptureReaderBadInputTests(AudioTempFolder temp)
    {
        this.temp = temp;
    }

    [Fact]
    public void Open_Throws_WhenTheFileDoesNotExist()
    {
        string path = temp.File("no-such-file.wav");
        var error = Assert.Throws<CaptureFormatException>(() => CaptureReader.Open(path));
        Assert.Equal($"The file does not exist: {path}.", error.Message);
    }

    [Fact]
    public void Open_Throws_WhenTheFolderOfTheFileDoesNotExist()
    {
        string path = temp.File(Path.Combine("no-such-folder", "a.wav"));
        var error = Assert.Throws<CaptureFormatException>(() => CaptureReader.Open(path));
        Assert.Equal($"The file does not exist: {path}.", error.Message);
    }

    [Fact]
    public void Open_Throws_WhenThePathIsAFolder()
    {
        AssertOneSentence(Assert.Throws<CaptureFormatException>(() => CaptureReader.Open(temp.Root)), "folder");
    }

    [Fact]
    public void Open_Throws_ForAZeroLengthFile()
    {
        AssertRejected("empty.wav", [], "empty", "0 bytes");
    }

    [Fact]
    public void Open_Throws_ForBytesThatAreNotRiff()
    {
        AssertRejected("not-riff.wav", "ID3\u0004 this is an MP3, not a WAV file at all"u8.ToArray(), "not a WAV file", "no RIFF header");
    }

    [Fact]
    public void Open_Throws_ForAFileShorterThanARiffId()
    {
        AssertRejected("three-bytes.wav", "RIF"u8.ToArray(), "no RIFF header");
    }

    [Fact]
    public void Open_Throws_ForAFileThatEndsInsideTheRiffHeader()
    {
        AssertRejected("short-riff.wav", "RIFF\u0004\0\0\0WA"u8.ToArray(), "too short");
    }

    [Fact]
    public void Open_Throws_ForARiffFileThatIsNotWave()
    {
        byte[] avi = WavBytes.Riff("AVI ", null, WavBytes.Chunk("LIST", new byte[16]));
        AssertRejected("avi.wav", avi, "not a WAV file", "'AVI '");
    }

    [Fact]
    public void Open_Throws_ForAnUnsupportedFormatCode_WrittenByHand()
    {
        byte[] mp3 = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(0x0055, 2, 44_100, 0, blockAlign: 1, withCbSize: true)),
            WavBytes.Chunk("data", new byte[400]));
        AssertRejected("mp3-in-wav.wav", mp3, "unsupported encoding", "format code 0x0055", "PCM 8/16/24/32-bit and IEEE float");
    }

    [Fact]
    public void Open_Throws_ForExtensibleWithASubFormatOtherThanPcmOrFloat()
    {
        byte[] adpcm = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.ExtensibleFmtBody(1, 8000, 16, WavBytes.SubFormat(0x0002))),
            WavBytes.Chunk("data", new byte[400]));
        AssertRejected("extensible-adpcm.wav", adpcm, "unsupported encoding", "WAVE_FORMAT_EXTENSIBLE", "0x0002");
    }

    [Fact]
    public void Open_Throws_ForExtensibleWithANonStandardSubFormatGuid()
    {
        byte[] guid = Guid.Parse("6dba3190-67bd-11cf-a0f7-0020afd156e4").ToByteArray();
        byte[] odd = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.ExtensibleFmtBody(1, 8000, 16, guid)),
            WavBytes.Chunk("data", new byte[400]));
        AssertRejected("extensible-guid.wav", odd, "unsupported encoding", "6dba3190-67bd-11cf-a0f7-0020afd156e4");
    }

    [Fact]
    public void Open_Throws_ForExtensibleWhoseFormatChunkIsTooShortToNameTheSubFormat()
    {
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Extensible, 1, 8000, 16, withCbSize: true)),
            WavBytes.Chunk("data", new byte[400]));
        AssertRejected("extensible-short.wav", file, "WAVE_FORMAT_EXTENSIBLE", "sub-format");
    }

    [Theory]
    [InlineData(WavBytes.Pcm, 12, "12-bit PCM")]
    [InlineData(WavBytes.Pcm, 4, "4-bit PCM")]
    [InlineData(WavBytes.IeeeFloat, 16, "16-bit IEEE float")]
    public void Open_Throws_ForAnUnsupportedSampleSize(ushort tag, ushort bits, string expected)
    {
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(tag, 1, 8000, bits, blockAlign: 2)),
            WavBytes.Chunk("data", new byte[400]));
        AssertRejected($"bits-{tag}-{bits}.wav", file, expected, "not supported");
    }

    [Fact]
    public void Open_Throws_ForZeroChannels_WrittenByHand()
    {
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 0, 44_100, 16)),
            WavBytes.Chunk("data", new byte[400]));
        AssertRejected("zero-channels.wav", file, "0 audio channels");
    }

    [Fact]
    public void Open_Throws_ForMoreThanEightChannels()
    {
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 9, 44_100, 16)),
            WavBytes.Chunk("data", new byte[18 * 10]));
        AssertRejected("nine-channels.wav", file, "9 audio channels", "at most 8");
    }

    [Fact]
    public void Open_Throws_ForAZeroSampleRate()
    {
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 1, 0, 16)),
            WavBytes.Chunk("data", new byte[400]));
        AssertRejected("zero-rate.wav", file, "sample rate of 0 Hz");
    }

    [Fact]
    public void Open_Throws_WhenTheBlockAlignmentDoesNotMatchTheChannelsAndSampleSize()
    {
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 2, 8000, 16, blockAlign: 3)),
            WavBytes.Chunk("data", new byte[400]));
        AssertRejected("block-align.wav", file, "block alignment (3 bytes)", "(4 bytes)");
    }

    [Fact]
    public void Open_Throws_ForAFormatChunkShorterThanSixteenBytes()
    {
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 1, 8000, 16)[..14]),
            WavBytes.Chunk("data", new byte[400]));
        AssertRejected("short-fmt.wav", file, "format chunk is too short", "14 bytes");
    }

    [Fact]
    public void Open_Throws_WhenThereIsNoFormatChunk()
    {
        AssertRejected("no-fmt.wav", WavBytes.Wave(WavBytes.Chunk("data", new byte[400])), "no format (fmt) chunk");
    }

    [Fact]
    public void Open_Throws_WhenThereIsNoDataChunk()
    {
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 1, 8000, 16)),
            WavBytes.Chunk("LIST", WavBytes.ListInfoBody("no audio here")));
        AssertRejected("no-data.wav", file, "no data chunk", "no audio samples");
    }

    [Fact]
    public void Open_Throws_WhenTheDataChunkIsEmpty()
    {
        AssertRejected("empty-data.wav", WavBytes.Pcm16(8000, 1, []), "holds no audio samples");
    }

    [Fact]
    public void Open_Throws_WhenTheDataChunkIsCutOffBeforeTheFirstFrame()
    {
        byte[] file = WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 2, 8000, 16)),
            WavBytes.Chunk("data", [1, 2], declaredSize: 4000, pad: false));
        AssertRejected("cut-before-first-frame.wav", file, "holds no audio samples", "cut off");
    }

    [Fact]
    public void Reader_StopsAtTheRealEnd_AndReportsTruncated_WhenTheHeaderClaimsMoreDataThanTheFileHolds()
    {
        short[] samples = Enumerable.Range(0, 1000).Select(i => (short)(i * 30 - 15_000)).ToArray();
        string path = temp.Write("truncated.wav", WavBytes.Pcm16(8000, 1, samples, declaredDataSize: 2 * 5000));

        using CaptureReader reader = CaptureReader.Open(path);
        Assert.True(reader.Truncated);
        Assert.Equal(1000, reader.FrameCount);
        Assert.Equal(1000.0 / 8000, reader.DurationSeconds);
        Assert.Equal(samples.Select(s => s / 32768f).ToArray(), AudioSamples.ReadAll(reader, 300));
        Assert.Equal(1000, reader.Info.FrameCount);
    }

    [Fact]
    public void Reader_DropsThePartialLastFrame_OfAStereoFileCutOffInsideAFrame()
    {
        short[] interleaved = Enumerable.Range(0, 2 * 700).Select(i => (short)(i % 2 == 0 ? i : -i)).ToArray();
        byte[] whole = WavBytes.Pcm16(8000, 2, interleaved, declaredDataSize: 4 * 2000);

        // Cut the file two bytes into frame 700: the left sample of that frame is there, its right one is not.
        byte[] cut = [.. whole, 0x34, 0x12];
        string path = temp.Write("truncated-mid-frame.wav", cut);

        using CaptureReader reader = CaptureReader.Open(path, ChannelChoice.Left);
        Assert.True(reader.Truncated);
        Assert.Equal(700, reader.FrameCount);
        float[] left = AudioSamples.ReadAll(reader, 7);
        Assert.Equal(interleaved.Where((_, i) => i % 2 == 0).Select(s => s / 32768f).ToArray(), left);
        Assert.Equal(ExternalTools.Sha256Sum(path), reader.Info.Sha256);
    }

    [Fact]
    public void Reader_ReadsAStreamingHeader_WhoseDataSizeIsTheMaximum_AsTruncated()
    {
        short[] samples = Enumerable.Range(0, 4000).Select(i => (short)(i * 8)).ToArray();
        string path = temp.Write("streaming-header.wav", WavBytes.Pcm16(8000, 1, samples, declaredDataSize: uint.MaxValue));

        using CaptureReader reader = CaptureReader.Open(path);
        Assert.True(reader.Truncated);
        Assert.Equal(4000, reader.FrameCount);
        Assert.Equal(samples.Select(s => s / 32768f).ToArray(), AudioSamples.ReadAll(reader));
    }

    [Fact]
    public void Reader_IsNotTruncated_WhenTheDataChunkIsWhole()
    {
        string path = temp.Write("whole.wav", WavBytes.Pcm16(8000, 1, [1, 2, 3]));
        using CaptureReader reader = CaptureReader.Open(path);
        Assert.False(reader.Truncated);
        Assert.Equal(3, reader.FrameCount);
    }

    private void AssertRejected(string name, byte[] bytes, params string[] fragments)
    {
        string path = temp.Write(name, bytes);
        var error = Assert.Throws<CaptureFormatException>(() => CaptureReader.Open(path));
        AssertOneSentence(error, fragments);
    }

    private static void AssertOneSentence(CaptureFormatException error, params string[] fragments)
    {
        foreach (string fragment in fragments)
        {
            Assert.Contains(fragment, error.Message, StringComparison.Ordinal);
        }

        Assert.EndsWith(".", error.Message, StringComparison.Ordinal);
        Assert.True(char.IsUpper(error.Message[0]), error.Message);
        Assert.DoesNotContain('\n', error.Message);
        Assert.DoesNotContain("NAudio", error.Message, StringComparison.OrdinalIgnoreCase);
    }
}
