using TapeVault.Core.Audio;
using TapeVault.Core.Decoding;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Pulses;

/// <summary>The survey of every setting in one pass, which the decode job makes for the plots, against one pass per setting.</summary>
public sealed class PulseSurveyTests : IDisposable
{
    private readonly OutsideTempFolder temp = new();

    public void Dispose() => temp.Dispose();

    [Fact]
    public void AllSettingsInOnePass_CountExactlyWhatOnePassPerSettingCounts_OnASignalSoxMade()
    {
        // SoX makes the signal (a 1 kHz square wave, frequency-modulated by 3 %, with pink noise), not our synthesiser.
        string wav = temp.File("square.wav");
        OutsideTool.Run(OutsideTool.SoxPath, ["-n", "-r", "44100", "-b", "16", "-c", "1", wav, "synth", "4", "square", "970-1030", "synth", "4", "pinknoise", "mix", "vol", "0.5"]);
        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");
        var settings = DetectorBanks.Default;
        var histograms = settings.Select(s => { var m = PulseMarks.For(profile, s); return new PulseHistogram(m.LowestSeconds, m.HighestSeconds, 90); }).ToList();

        IReadOnlyList<PulseHistogramResult> together;
        using (var reader = CaptureReader.Open(wav, ChannelChoice.Mix))
        {
            together = PulseSurvey.MeasureAll(reader, settings, histograms);
        }

        for (int i = 0; i < settings.Count; i++)
        {
            var marks = PulseMarks.For(profile, settings[i]);
            using var reader = CaptureReader.Open(wav, ChannelChoice.Mix);
            var alone = PulseSurvey.Measure(reader, settings[i], new PulseHistogram(marks.LowestSeconds, marks.HighestSeconds, 90));
            Assert.Equal(alone.Counts.ToArray(), together[i].Counts.ToArray());
            Assert.Equal(alone.Below, together[i].Below);
            Assert.Equal(alone.Above, together[i].Above);
        }

        Assert.Contains(together, r => r.InRange > 1000);
    }

    [Theory]
    [InlineData("orrin-80")]
    [InlineData("biphase-1200")]
    public void A_decode_counts_the_same_surveys_and_overview_in_its_own_pass_as_separate_passes_over_the_file(string profileId)
    {
        // SoX makes the signal, as above; the decode job keeps what the decode counted instead of reading the file again.
        string wav = temp.File($"decoded-{profileId}.wav");
        OutsideTool.Run(OutsideTool.SoxPath, ["-n", "-r", "44100", "-b", "16", "-c", "1", wav, "synth", "3", "square", "970-1030", "synth", "3", "pinknoise", "mix", "vol", "0.5"]);
        var profile = ProfileCatalog.BuiltIn.Get(profileId);
        var decoded = CaptureDecoder.Decode(wav, profile, options: new DecodeOptions { SurveyIntervals = true, OverviewColumns = 700 });

        Assert.NotNull(decoded.Surveys);
        Assert.Equal(decoded.Settings.Count, decoded.Surveys.Count);
        for (int i = 0; i < decoded.Settings.Count; i++)
        {
            var marks = PulseMarks.For(profile, decoded.Settings[i], speed: 1.013);
            var counted = decoded.Surveys[i].Into(new PulseHistogram(marks.LowestSeconds, marks.HighestSeconds, 90));
            using var reader = CaptureReader.Open(wav, ChannelChoice.Mix);
            var measured = PulseSurvey.Measure(reader, decoded.Settings[i], new PulseHistogram(marks.LowestSeconds, marks.HighestSeconds, 90));
            Assert.Equal(measured.Counts.ToArray(), counted.Counts.ToArray());
            Assert.Equal(measured.Below, counted.Below);
            Assert.Equal(measured.Above, counted.Above);
            Assert.True(counted.InRange > 1000, $"{decoded.Settings[i].Name}: only {counted.InRange} intervals in range");
        }

        var overview = WaveformOverview.Compute(wav, 700);
        Assert.NotNull(decoded.Overview);
        Assert.Equal(overview.Minimum.ToArray(), decoded.Overview.Minimum.ToArray());
        Assert.Equal(overview.Maximum.ToArray(), decoded.Overview.Maximum.ToArray());
    }

    [Fact]
    public void Fine_counting_puts_a_pulse_in_the_bin_a_direct_count_does_unless_it_lies_within_a_fine_step_of_an_edge()
    {
        // Every interval from 20 µs to 5 ms in steps of 0.37 µs, counted directly and through the fine survey: at most
        // the intervals within 1/4096 (relative) of one of the 60 bin edges may change bin.
        var direct = new PulseHistogram(40e-6, 4e-3, 60);
        var survey = new IntervalSurvey(44_100);
        var edges = new List<Edges.Edge>();
        double sample = 0;
        int count = 0;
        for (double seconds = 20e-6; seconds < 5e-3; seconds += 0.37e-6)
        {
            direct.Add(seconds);
            edges.Add(new Edges.Edge(sample, true, 1));
            sample += seconds * 44_100;
            count++;
        }

        edges.Add(new Edges.Edge(sample, true, 1));
        survey.AddIntervals(edges.ToArray());
        var fine = survey.Into(new PulseHistogram(40e-6, 4e-3, 60));
        var exact = direct.ToResult();
        Assert.Equal(count, survey.Total);
        Assert.Equal(exact.Total, fine.Total);
        long moved = 0;
        for (int b = 0; b < exact.Bins; b++)
        {
            moved += Math.Abs(exact.Counts[b] - fine.Counts[b]);
        }

        // Edges sit 1/4096 of an octave wide at most; 61 edges × 2 sides × (interval density near the edge).
        Assert.True(moved <= 61 * 2 * 2, $"{moved} pulses changed bin");
        Assert.InRange(Math.Abs(exact.Below - fine.Below), 0, 4);
    }
}
