using System.Globalization;
using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.Audio;
using TapeVault.Core.Tests.OutsideChecks;
using TapeVault.Core.Tests.RoundTrip;
using Xunit;

namespace TapeVault.Core.Tests.Hardening;

/// <summary>
/// Valid files with signals no tape gives on purpose: nothing at all, one sample, DC, a hard-clipped square wave,
/// data on one side of a stereo file. Each decodes without error; where there is data it comes back whole, and where
/// there is none, no block is invented. Ground truth for the data cases is our own channel model (the blocks we
/// synthesised); SoX, an outside tool, writes the silence and does the clipping.
/// </summary>
public sealed class SignalEdgeCaseTests(AudioTempFolder temp) : IClassFixture<AudioTempFolder>
{
    private static readonly FormatProfile Demo = RoundTrips.Profile("orrin-80");

    public static TheoryData<string> ProfileIds() => [.. RoundTrips.ProfileIds];

    /// <summary>
    /// SoX writes ten minutes of silence at 22.05 kHz (half the usual rate, to keep the test quick), 16-bit: with <c>-D</c> digital zeros; without it, SoX's default
    /// TPDF dither of ±1 LSB, which is what an idle converter really records. Its own sample count is the reference.
    /// </summary>
    [Theory]
    [InlineData("digital zeros", "orrin-80")]
    [InlineData("dither of 1 LSB", "orrin-80")]
    [InlineData("dither of 1 LSB", "kcs-300")]
    [InlineData("dither of 1 LSB", "biphase-1200")]
    public void TenMinutesOfSilence_DecodeToNoBlock(string silence, string id)
    {
        string path = temp.File($"ten-minutes-of-{WavRefusalTests.Safe(silence)}.wav");
        // Written once for the class (the cases of one class run one after another) and kept in its temporary folder.
        if (!File.Exists(path))
        {
            string[] dither = silence == "digital zeros" ? ["-D"] : [];
            OutsideTool.Sox(["-n", .. dither, "-r", "22050", "-b", "16", "-c", "1", path, "trim", "0", "600"]);
            Assert.Equal("13230000", OutsideTool.SoxInfo("-s", path));
        }

        // How fast is the benchmark's question (tests/TapeVault.Bench throughput), never a timed test's.
        var result = CaptureDecoder.Decode(path, RoundTrips.Profile(id));

        Assert.True(result.Candidates.Count == 0, $"{id}: {result.Candidates.Count} candidates: {RoundTrips.Describe(result)}");
        Assert.Equal(13_230_000, result.Capture.FrameCount);
    }

    [Theory]
    [MemberData(nameof(ProfileIds))]
    public void ASingleSample_DecodesToNoBlock(string id)
    {
        string path = temp.Write($"one-sample-{id}.wav", WavBytes.Pcm16(44_100, 1, [12_345]));

        var result = CaptureDecoder.Decode(path, RoundTrips.Profile(id));

        Assert.Equal(1, result.Capture.FrameCount);
        Assert.Empty(result.Candidates);
    }

    [Theory]
    [MemberData(nameof(ProfileIds))]
    public void DcOnly_DecodesToNoBlock_AtHalfAndAtFullScale(string id)
    {
        foreach (short level in new short[] { 16_384, short.MaxValue, short.MinValue })
        {
            string path = temp.Write($"dc-{level}-{id}.wav", WavBytes.Pcm16(44_100, 1, [.. Enumerable.Repeat(level, 3 * 44_100)]));

            var result = CaptureDecoder.Decode(path, RoundTrips.Profile(id));

            Assert.True(result.Candidates.Count == 0, $"{id}, DC at {level}: {RoundTrips.Describe(result)}");
        }
    }

    [Fact]
    public void AHardClippedSquareWave_StillDecodesToEveryBlock()
    {
        var (clean, truth) = Synthesise("clip-source");

        // SoX, an outside tool, amplifies by 40 dB and clips: the read-back becomes a full-scale square wave.
        string clipped = temp.File("clipped.wav");
        OutsideTool.Sox(clean, clipped, "gain", "40");
        float[] samples = AudioSamples.ReadFile(clipped);
        double atFullScale = samples.Count(s => Math.Abs(s) >= 32_767f / 32_768f) / (double)samples.Length;
        Assert.True(atFullScale > 0.8, $"only {atFullScale:P0} of the samples are clipped");

        var result = CaptureDecoder.Decode(clipped, Demo);

        AssertEveryBlock(truth, result);
    }

    [Fact]
    public void StereoWithDataOnOneSide_DecodesFromThatSideAndFromTheMix_AndNothingFromTheSilentSide()
    {
        var (clean, truth) = Synthesise("stereo-source");
        float[] data = AudioSamples.ReadFile(clean);
        float[] silence = new float[data.Length];
        string dataLeft = temp.File("data-left.wav");
        string dataRight = temp.File("data-right.wav");
        CaptureWriter.WriteStereo(dataLeft, 44_100, CaptureEncoding.Pcm16, data, silence);
        CaptureWriter.WriteStereo(dataRight, 44_100, CaptureEncoding.Pcm16, silence, data);

        // Outside reference: SoX sees two channels, and the silent one has no level at all (remix picks one channel).
        Assert.Equal(2, OutsideTool.SoxChannels(dataLeft));
        string silentSide = temp.File("silent-side.wav");
        OutsideTool.Sox(dataLeft, silentSide, "remix", "2");
        Assert.Equal(0.0, OutsideTool.SoxRms(silentSide));

        // README and docs/capturing.md: left is the first channel, right the second, mix their average.
        AssertEveryBlock(truth, Decode(dataLeft, ChannelChoice.Left));
        AssertEveryBlock(truth, Decode(dataRight, ChannelChoice.Right));
        AssertEveryBlock(truth, Decode(dataLeft, ChannelChoice.Mix));
        AssertEveryBlock(truth, Decode(dataRight, ChannelChoice.Mix));
        Assert.Empty(Decode(dataLeft, ChannelChoice.Right).Candidates);
        Assert.Empty(Decode(dataRight, ChannelChoice.Left).Candidates);
    }

    private static DecodeResult Decode(string path, ChannelChoice channel) =>
        CaptureDecoder.Decode(path, Demo, options: new DecodeOptions { Channel = channel });

    /// <summary>A clean capture of the demo format and the blocks as written (our own channel model's ground truth).</summary>
    private (string Path, List<TruthBlock> Truth) Synthesise(string name)
    {
        string path = temp.File(name + ".wav");
        var capture = CaptureSynthesizer.Write(path, Demo, RoundTrips.Files(Demo), new ChannelDamage());
        return (path, RoundTrips.Truth(Demo, capture.Blocks));
    }

    private static void AssertEveryBlock(List<TruthBlock> truth, DecodeResult result)
    {
        string got = RoundTrips.Describe(result);
        Assert.True(truth.Count == result.Best.Count, string.Create(CultureInfo.InvariantCulture, $"{truth.Count} blocks written, {result.Best.Count} found: {got}"));
        for (int i = 0; i < truth.Count; i++)
        {
            Assert.True(result.Best[i].Status == BlockStatus.Clean && truth[i].Matches(result.Best[i]), $"block {i}: {got}");
        }
    }
}
