using TapeVault.Core.Audio;
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
}
