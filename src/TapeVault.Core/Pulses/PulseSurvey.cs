using TapeVault.Core.Audio;
using TapeVault.Core.Detection;
using TapeVault.Core.Edges;

namespace TapeVault.Core.Pulses;

/// <summary>The intervals between one setting's counted edges over a whole capture, counted into a histogram in one streaming pass.</summary>
public static class PulseSurvey
{
    private const int ChunkFrames = 64 * 1024;

    /// <summary>Runs <paramref name="setting"/> through the detector bank over every sample <paramref name="reader"/> has left.</summary>
    public static PulseHistogramResult Measure(CaptureReader reader, DetectorSetting setting, PulseHistogram histogram, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(reader);
        ArgumentNullException.ThrowIfNull(setting);
        ArgumentNullException.ThrowIfNull(histogram);
        var bank = new DetectorBank([setting], reader.SampleRate);
        var edges = new[] { new EdgeBuffer() };
        var chunk = new float[ChunkFrames];
        int read;
        while ((read = reader.Read(chunk)) > 0)
        {
            cancellation.ThrowIfCancellationRequested();
            edges[0].Clear();
            bank.Process(chunk.AsSpan(0, read), edges);
            histogram.AddIntervals(edges[0].Items, reader.SampleRate);
        }

        return histogram.ToResult();
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
        for (int i = 0; i < edges.Length; i++)
        {
            edges[i] = new EdgeBuffer();
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
                histograms[i].AddIntervals(edges[i].Items, reader.SampleRate);
            }
        }

        return [.. histograms.Select(h => h.ToResult())];
    }
}
