using TapeVault.Core.Audio;
using TapeVault.Core.Detection;
using TapeVault.Core.Dsp;
using TapeVault.Core.Edges;

namespace TapeVault.Core.Drafting;

/// <summary>
/// The bounded stretch of a capture a draft is made from: its first samples (up to a limit in seconds, so that a
/// draft of an hour-long capture costs what a draft of a short one does), held in memory so that the detector bank
/// and trial decodes can run over them several times.
/// </summary>
public sealed class CaptureStretch
{
    /// <summary>The default stretch: the first two minutes hold dozens of blocks of any format we know.</summary>
    public const double DefaultSeconds = 120;

    private CaptureStretch(float[] samples, int sampleRate, double captureSeconds, string source)
    {
        Samples = samples;
        SampleRate = sampleRate;
        CaptureSeconds = captureSeconds;
        Source = source;
    }

    public float[] Samples { get; }

    public int SampleRate { get; }

    /// <summary>The whole capture's length, of which <see cref="Seconds"/> were read.</summary>
    public double CaptureSeconds { get; }

    public double Seconds => (double)Samples.Length / SampleRate;

    /// <summary>The capture's file name, for the draft's description.</summary>
    public string Source { get; }

    public static CaptureStretch Read(string path, double maximumSeconds = DefaultSeconds, ChannelChoice channel = ChannelChoice.Mix, CancellationToken cancellation = default)
    {
        using var reader = CaptureReader.Open(path, channel);
        return Read(reader, maximumSeconds, cancellation);
    }

    public static CaptureStretch Read(CaptureReader reader, double maximumSeconds = DefaultSeconds, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(reader);
        if (!(maximumSeconds > 0) || maximumSeconds > 3600)
        {
            throw new ArgumentOutOfRangeException(nameof(maximumSeconds), maximumSeconds, "A draft reads between 0 and 3600 seconds of a capture.");
        }

        long limit = Math.Min(reader.FrameCount, (long)(maximumSeconds * reader.SampleRate));
        var samples = new float[limit];
        int done = 0;
        while (done < limit)
        {
            cancellation.ThrowIfCancellationRequested();
            int read = reader.Read(samples.AsSpan(done, (int)Math.Min(64 * 1024, limit - done)));
            if (read == 0)
            {
                break;
            }

            done += read;
        }

        if (done < samples.Length)
        {
            Array.Resize(ref samples, done);
        }

        return new CaptureStretch(samples, reader.SampleRate, reader.DurationSeconds, Path.GetFileName(reader.Path));
    }

    /// <summary>Samples already in memory (tests, and captures that are not files).</summary>
    public static CaptureStretch FromSamples(float[] samples, int sampleRate, string source)
    {
        ArgumentNullException.ThrowIfNull(samples);
        return new CaptureStretch(samples, sampleRate, (double)samples.Length / sampleRate, source);
    }

    /// <summary>The counted edges of one detector setting over the stretch, through the detector bank.</summary>
    public IReadOnlyList<Edge> Edges(DetectorSetting setting, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(setting);
        var bank = new DetectorBank([setting], SampleRate);
        var buffers = new[] { new EdgeBuffer() };
        var all = new List<Edge>();
        const int chunk = 64 * 1024;
        for (int offset = 0; offset < Samples.Length; offset += chunk)
        {
            cancellation.ThrowIfCancellationRequested();
            buffers[0].Clear();
            bank.Process(Samples.AsSpan(offset, Math.Min(chunk, Samples.Length - offset)), buffers);
            foreach (var edge in buffers[0].Items)
            {
                all.Add(edge);
            }
        }

        return all;
    }

    /// <summary>
    /// The tone spectrum: Goertzel power at log-spaced frequencies from 200 Hz to 8 kHz (or the Nyquist limit),
    /// summed over blocks of 10 ms spread through the stretch. Returns (frequency, relative power) with the strongest at 1.
    /// </summary>
    public IReadOnlyList<(double Hz, double Power)> Spectrum(int points = 96, int blocks = 64)
    {
        double top = Math.Min(8000, 0.45 * SampleRate);
        var result = new (double Hz, double Power)[points];
        int length = Math.Max(64, SampleRate / 100);
        int usable = Math.Max(0, Samples.Length - length);
        for (int p = 0; p < points; p++)
        {
            result[p].Hz = 200 * Math.Pow(top / 200, (double)p / (points - 1));
        }

        for (int b = 0; b < blocks && usable > 0; b++)
        {
            var block = Samples.AsSpan((int)((long)usable * b / blocks), length);
            for (int p = 0; p < points; p++)
            {
                result[p].Power += Goertzel.Power(block, result[p].Hz, SampleRate);
            }
        }

        double max = result.Max(r => r.Power);
        for (int p = 0; p < points && max > 0; p++)
        {
            result[p].Power /= max;
        }

        return result;
    }
}
