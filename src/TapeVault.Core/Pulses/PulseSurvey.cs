using TapeVault.Core.Audio;
using TapeVault.Core.Detection;
using TapeVault.Core.Edges;

namespace TapeVault.Core.Pulses;

/// <summary>
/// The intervals between one setting's counted edges over a whole capture, counted into a histogram in one streaming
/// pass. A decode counts the same intervals as it goes (<see cref="Decoding.DecodeOptions.SurveyIntervals"/>), so a
/// decode job needs no pass of its own; both count through <see cref="IntervalSurvey"/> and give the same counts.
/// </summary>
public static class PulseSurvey
{
    private const int ChunkFrames = 64 * 1024;

    /// <summary>Runs <paramref name="setting"/> through the detector bank over every sample <paramref name="reader"/> has left.</summary>
    public static PulseHistogramResult Measure(CaptureReader reader, DetectorSetting setting, PulseHistogram histogram, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(setting);
        ArgumentNullException.ThrowIfNull(histogram);
        return MeasureAll(reader, [setting], [histogram], cancellation)[0];
    }

    /// <summary>
    /// Every setting's survey in one streaming pass: the bank runs all settings over each chunk (eight to a vector), so
    /// the capture is read once whatever their number. <paramref name="histograms"/>[i] receives setting i's intervals.
    /// </summary>
    public static IReadOnlyList<PulseHistogramResult> MeasureAll(CaptureReader reader, IReadOnlyList<DetectorSetting> settings, IReadOnlyList<PulseHistogram> histograms, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(reader);
        ArgumentNullException.ThrowIfNull(settings);
        ArgumentNullException.ThrowIfNull(histograms);
        if (settings.Count != histograms.Count || settings.Count == 0)
        {
            throw new ArgumentException("One histogram for each setting, and at least one setting.", nameof(histograms));
        }

        var bank = new DetectorBank(settings, reader.SampleRate);
        var edges = new EdgeBuffer[settings.Count];
        var surveys = new IntervalSurvey[settings.Count];
        for (int i = 0; i < edges.Length; i++)
        {
            edges[i] = new EdgeBuffer();
            surveys[i] = new IntervalSurvey(reader.SampleRate);
        }

        var chunk = new float[ChunkFrames];
        int read;
        while ((read = reader.Read(chunk)) > 0)
        {
            cancellation.ThrowIfCancellationRequested();
            foreach (var buffer in edges)
            {
                buffer.Clear();
            }

            bank.Process(chunk.AsSpan(0, read), edges);
            for (int i = 0; i < edges.Length; i++)
            {
                surveys[i].AddIntervals(edges[i].Items);
            }
        }

        var results = new PulseHistogramResult[settings.Count];
        for (int i = 0; i < results.Length; i++)
        {
            results[i] = surveys[i].Into(histograms[i]);
        }

        return results;
    }
}
