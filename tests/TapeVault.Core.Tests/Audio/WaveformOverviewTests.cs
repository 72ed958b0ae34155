using System.Globalization;
using TapeVault.Core.Audio;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Audio;

/// <summary>The min/max overview of a capture and the excerpt reader behind the capture page's plots.</summary>
public sealed class WaveformOverviewTests(AudioTempFolder temp) : IClassFixture<AudioTempFolder>
{
    private const int SampleRate = 44_100;

    [Theory]
    [InlineData(97)]
    [InlineData(1000)]
    [InlineData(70_001)]
    public void Each_column_holds_the_lowest_and_highest_sample_of_its_stretch(int columns)
    {
        // Stereo noise with a few lone spikes, mixed to mono: the spikes must survive decimation.
        int frames = 70_001;
        var left = new float[frames];
        var right = new float[frames];
        var random = new Random(6);
        for (int i = 0; i < frames; i++)
        {
            left[i] = (float)((random.NextDouble() - 0.5) * 0.4);
            right[i] = (float)((random.NextDouble() - 0.5) * 0.4);
        }

        left[12_345] = 0.99f;
        right[12_345] = 0.99f;
        left[54_321] = -0.97f;
        right[54_321] = -0.97f;
        string path = temp.File($"noise-{columns}.wav");
        CaptureWriter.WriteStereo(path, SampleRate, CaptureEncoding.Pcm16, left, right);

        var all = new float[frames];
        using (var reader = CaptureReader.Open(path))
        {
            Assert.Equal(frames, reader.Read(all));
        }

        var overview = WaveformOverview.Compute(path, columns);

        // Brute force over the same tiling: column c holds frames [c·N/C, (c+1)·N/C).
        Assert.Equal(Math.Min(columns, frames), overview.Columns);
        Assert.Equal(frames, overview.FrameCount);
        for (int c = 0; c < overview.Columns; c++)
        {
            long from = (long)c * frames / overview.Columns;
            long to = (long)(c + 1) * frames / overview.Columns;
            float min = float.PositiveInfinity, max = float.NegativeInfinity;
            for (long i = from; i < to; i++)
            {
                min = Math.Min(min, all[i]);
                max = Math.Max(max, all[i]);
            }

            Assert.Equal(from, overview.FirstFrame(c));
            Assert.Equal(min, overview.Minimum[c]);
            Assert.Equal(max, overview.Maximum[c]);
        }

        Assert.Equal(all.Max(), overview.Maximum.Max());
        Assert.Equal(all.Min(), overview.Minimum.Min());
    }

    [Fact]
    public void The_peaks_of_a_sox_synth_file_match_what_sox_stat_measures()
    {
        // SoX writes the file (a 440 Hz sine at 0.7 of full scale, 16-bit) and measures it; TapeVault only reads it, so
        // the extremes and the length it is held to are SoX's own figures, not ours.
        string path = temp.File("sox-synth.wav");
        OutsideTool.Sox("-n", "-r", "44100", "-b", "16", "-c", "1", path, "synth", "2.5", "sine", "440", "vol", "0.7");
        var overview = WaveformOverview.Compute(path, 600);

        // `sox FILE -n stat` prints "Maximum amplitude" and "Minimum amplitude" (full scale 1, six decimals) on stderr.
        string report = OutsideTool.Run(OutsideTool.SoxPath, [path, "-n", "stat"]).StandardError;
        double soxMax = StatValue(report, "Maximum amplitude:");
        double soxMin = StatValue(report, "Minimum amplitude:");
        Assert.Equal(soxMax, overview.Maximum.Max(), 1.5e-6);
        Assert.Equal(soxMin, overview.Minimum.Min(), 1.5e-6);

        // `sox --i -s` counts the samples per channel, `-D` gives the duration.
        Assert.Equal(long.Parse(OutsideTool.SoxInfo("-s", path), CultureInfo.InvariantCulture), overview.FrameCount);
        Assert.Equal(OutsideTool.SoxDurationSeconds(path), overview.DurationSeconds, 1e-4);

        // Every column of a steady 440 Hz sine is longer than a period, so each reaches close to both peaks.
        Assert.All(overview.Maximum, m => Assert.InRange(m, soxMax * 0.98, soxMax + 1.5e-6));
    }

    [Fact]
    public void An_overview_written_to_a_cache_file_reads_back_equal_and_anything_else_reads_as_null()
    {
        var samples = Enumerable.Range(0, 5000).Select(i => (float)Math.Sin(i * 0.01) * 0.5f).ToArray();
        var overview = WaveformOverview.FromSamples(samples, SampleRate, 321);
        using var stream = new MemoryStream();
        overview.WriteTo(stream);
        var back = WaveformOverview.ReadFrom(stream.ToArray());

        Assert.NotNull(back);
        Assert.Equal(overview.SampleRate, back.SampleRate);
        Assert.Equal(overview.FrameCount, back.FrameCount);
        Assert.Equal(overview.Minimum.ToArray(), back.Minimum.ToArray());
        Assert.Equal(overview.Maximum.ToArray(), back.Maximum.ToArray());
        Assert.Null(WaveformOverview.ReadFrom(stream.ToArray().AsSpan(0, (int)stream.Length - 3)));
        Assert.Null(WaveformOverview.ReadFrom("not an overview at all"u8));
    }

    [Theory]
    [InlineData(0, 1000)]
    [InlineData(4095, 5000)]
    [InlineData(29_000, 5000)]
    [InlineData(40_000, 10)]
    public void An_excerpt_is_the_same_stretch_a_full_read_returns(long start, int count)
    {
        int frames = 30_000;
        var left = Enumerable.Range(0, frames).Select(i => (float)Math.Sin(i * 0.003) * 0.6f).ToArray();
        var right = Enumerable.Range(0, frames).Select(i => (float)Math.Cos(i * 0.007) * 0.3f).ToArray();
        string path = temp.File($"excerpt-{start}-{count}.wav");
        CaptureWriter.WriteStereo(path, SampleRate, CaptureEncoding.Pcm24, left, right);
        var all = new float[frames];
        using (var reader = CaptureReader.Open(path, ChannelChoice.Mix))
        {
            reader.Read(all);
        }

        var excerpt = CaptureExcerpt.Read(path, start, count, ChannelChoice.Mix);

        var expected = all.Skip((int)Math.Min(start, frames)).Take(count).ToArray();
        Assert.Equal(expected, excerpt);
    }

    private static double StatValue(string report, string label)
    {
        foreach (string line in report.Split('\n'))
        {
            if (line.StartsWith(label, StringComparison.Ordinal))
            {
                return double.Parse(line[label.Length..].Trim(), CultureInfo.InvariantCulture);
            }
        }

        throw new InvalidOperationException($"sox stat printed no '{label}': {report}");
    }
}
