using System.Buffers.Binary;
using System.Globalization;
using TapeVault.Core.Audio;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.OutsideChecks;

/// <summary>
/// FLAC captures made by Debian's flac (the reference encoder of RFC 9639) from outside-made WAV captures: TapeVault's
/// decoder must give back exactly the samples of the WAV, so the same bytes come off the tape, and the MD5 that flac
/// stored in STREAMINFO must match the decoded audio. flac missing is a failure, not a skip: scripts/test installs it.
/// </summary>
public sealed class FlacOutsideTests : IClassFixture<OutsideTempFolder>
{
    private readonly OutsideTempFolder temp;

    public FlacOutsideTests(OutsideTempFolder temp)
    {
        this.temp = temp;
    }

    [Theory]
    [InlineData(300, 44_100, 0, 0)]
    [InlineData(300, 48_000, 5, 0)]
    [InlineData(300, 44_100, 8, 0)]
    [InlineData(1200, 44_100, 0, 192)]
    [InlineData(1200, 48_000, 5, 576)]
    [InlineData(1200, 44_100, 8, 1152)]
    [InlineData(1200, 48_000, 8, 4608)]
    [InlineData(300, 48_000, 5, 4096)]
    public void FlacOfAMinimodemCapture_DecodesToTheSameBytesAsTheWav(int baud, int sampleRate, int level, int blockSize)
    {
        string name = string.Create(CultureInfo.InvariantCulture, $"kcs-{baud}-{sampleRate}-l{level}-b{blockSize}");
        string wav = KcsCaptures.Write(temp.Root, name, baud, sampleRate, stopBits: 2);
        string flac = Encode(wav, level, blockSize);
        var profile = ProfileCatalog.BuiltIn.Get($"kcs-{baud}");

        // Sample for sample, the FLAC file holds the WAV's audio (flac is lossless; RFC 9639).
        Assert.Equal(ReadAll(wav), ReadAll(flac));

        var fromWav = CaptureDecoder.Decode(wav, profile);
        var fromFlac = CaptureDecoder.Decode(flac, profile);

        // Outside reference: the text minimodem sent; both files give it, byte for byte.
        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), Assert.Single(fromFlac.Best).PayloadHex);
        Assert.Equal(fromWav.Best.Select(b => b.PayloadHex), fromFlac.Best.Select(b => b.PayloadHex));

        // The FLAC file's own SHA-256 is the capture's (sha256sum), the MD5 flac stored matched, and it is FLAC.
        Assert.Equal(OutsideTool.Sha256Sum(flac), fromFlac.Capture.Sha256);
        Assert.Null(fromFlac.Capture.FixityFinding);
        Assert.Equal("flac", fromFlac.Capture.Container);
        Assert.Equal(fromWav.Capture.FrameCount, fromFlac.Capture.FrameCount);
        Assert.Equal(OutsideTool.SoxSampleRate(flac), fromFlac.Capture.SampleRate);
    }

    [Theory]
    [InlineData(8, 1, 22_050)]
    [InlineData(16, 2, 44_100)]
    [InlineData(24, 2, 96_000)]
    [InlineData(24, 1, 192_000)]
    public void FlacOfSoxAudio_MatchesTheWavAtEveryDepth_InStereoToo(int bits, int channels, int rate)
    {
        string wav = temp.File($"sox-{bits}-{channels}-{rate}.wav");
        string invariant(int x) => x.ToString(CultureInfo.InvariantCulture);

        // Two different tones per channel plus noise, so left and right differ and stereo decorrelation is exercised.
        string three = temp.File($"sox-{bits}-{channels}-{rate}.three.wav");
        OutsideTool.Sox("-n", "-r", invariant(rate), "-b", invariant(bits), "-c", "3", three, "synth", "0.7", "sine", "1200", "sine", "2400", "whitenoise", "vol", "0.3");
        OutsideTool.Sox([three, wav, "remix", .. (channels == 1 ? new[] { "1,2,3" } : ["1,3", "2,3"])]);
        foreach (int level in new[] { 0, 5, 8 })
        {
            string flac = Encode(wav, level, 0, $"-l{level}");
            foreach (ChannelChoice choice in channels == 1 ? [ChannelChoice.Mix] : new[] { ChannelChoice.Left, ChannelChoice.Right, ChannelChoice.Mix })
            {
                Assert.Equal(ReadAll(wav, choice), ReadAll(flac, choice));
            }
        }
    }

    [Fact]
    public void An_Excerpt_OfAFlac_IsTheSameStretchAsFromTheWav()
    {
        string wav = temp.File("excerpt.wav");
        OutsideTool.Sox("-n", "-r", "48000", "-b", "16", "-c", "2", wav, "synth", "1.5", "sine", "1200", "sine", "2400", "vol", "0.5");
        string flac = Encode(wav, 8, 1152);

        // Across frame boundaries (1152 samples each), from a frame's middle, and running past the end.
        foreach (var (start, count) in new[] { (0L, 100), (1000L, 5000), (70_000L, 10_000) })
        {
            Assert.Equal(CaptureExcerpt.Read(wav, start, count, ChannelChoice.Right), CaptureExcerpt.Read(flac, start, count, ChannelChoice.Right));
        }
    }

    [Fact]
    public void A_StreamInfoMd5ThatDoesNotMatch_IsAFixityFinding_NotAFailedDecode()
    {
        string wav = temp.File("md5.wav");
        OutsideTool.Sox("-n", "-r", "44100", "-b", "16", "-c", "1", wav, "synth", "0.3", "sine", "1200");
        byte[] flac = File.ReadAllBytes(Encode(wav, 5, 0));

        // STREAMINFO is the first metadata block (RFC 9639, section 8.2): 4 + 4 bytes of headers, MD5 in its last 16 bytes.
        flac[8 + 18] ^= 0x01;
        string path = Path.Combine(temp.Root, "md5-changed.flac");
        File.WriteAllBytes(path, flac);

        using CaptureReader reader = CaptureReader.Open(path);
        Assert.Equal(ReadAll(wav), ReadAllFrom(reader));
        CaptureInfo info = reader.Complete();
        Assert.NotNull(info.FixityFinding);
        Assert.Contains("MD5", info.FixityFinding, StringComparison.Ordinal);
    }

    /// <summary>flac -<paramref name="level"/> (and --blocksize when not 0) of the WAV; flac verifies its own output (-V).</summary>
    internal string Encode(string wav, int level, int blockSize, string suffix = "")
    {
        string flac = Path.ChangeExtension(wav, null) + suffix + ".flac";
        List<string> arguments = ["--silent", "--force", "-V", "-" + level.ToString(CultureInfo.InvariantCulture)];
        if (blockSize > 0)
        {
            arguments.Add("--blocksize=" + blockSize.ToString(CultureInfo.InvariantCulture));
        }

        arguments.AddRange(["-o", flac, wav]);
        OutsideTool.Run(OutsideTool.FlacPath, arguments);
        return flac;
    }

    internal static float[] ReadAll(string path, ChannelChoice channel = ChannelChoice.Mix)
    {
        using CaptureReader reader = CaptureReader.Open(path, channel);
        return ReadAllFrom(reader);
    }

    private static float[] ReadAllFrom(CaptureReader reader)
    {
        var all = new float[reader.FrameCount];
        int at = 0;
        int n;
        while ((n = reader.Read(all.AsSpan(at, Math.Min(3000, all.Length - at)))) > 0)
        {
            at += n;
        }

        Assert.Equal(all.Length, at);
        return all;
    }
}
