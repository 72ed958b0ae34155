using TapeVault.Core.Synthesis;

namespace TapeVault.Core.Tests.Synthesis;

/// <summary>Renders hand-made reversal lists through the channel model and measures what comes out.</summary>
internal static class ChannelProbe
{
    /// <summary>A clean high-rate channel: no deck low-pass, no noise, unit level, head chain unless told otherwise.</summary>
    public static ChannelDamage Clean(int sampleRate = 192_000) => new()
    {
        SampleRate = sampleRate,
        Chain = ReadChain.HeadAmplifier,
        DeckLowPassHz = null,
        SnrDb = null,
        Level = 1,
        MarginSeconds = 0.2,
    };

    /// <summary>Every sample the model renders for <paramref name="reversals"/> (the last time marks the end, as in <see cref="FluxWriter"/>).</summary>
    public static float[] Render(IReadOnlyList<double> reversals, ChannelDamage damage)
    {
        var model = new ChannelModel(reversals, damage, reversals[^1]);
        var samples = new float[model.TotalSamples];
        int done = 0;
        int count;
        while ((count = model.Render(samples.AsSpan(done, Math.Min(4096, samples.Length - done)))) > 0)
        {
            done += count;
        }

        return samples;
    }

    /// <summary>Reversals of a steady square-wave recording of <paramref name="frequencyHz"/> for <paramref name="seconds"/> of tape.</summary>
    public static List<double> SquareWave(double frequencyHz, double seconds)
    {
        var reversals = new List<double>();
        double half = 0.5 / frequencyHz;
        for (int k = 0; k * half < seconds; k++)
        {
            reversals.Add(0.01 + k * half);
        }

        reversals.Add(reversals[^1] + 0.05);
        return reversals;
    }

    /// <summary>
    /// The amplitude of the <paramref name="frequencyHz"/> component over <paramref name="length"/> samples from
    /// <paramref name="start"/>, by a single-bin DFT (the Goertzel sum written out); the window should hold whole periods.
    /// </summary>
    public static double ToneAmplitude(ReadOnlySpan<float> samples, int start, int length, double frequencyHz, int sampleRate)
    {
        double re = 0, im = 0;
        double w = 2 * Math.PI * frequencyHz / sampleRate;
        for (int n = 0; n < length; n++)
        {
            double x = samples[start + n];
            re += x * Math.Cos(w * (start + n));
            im -= x * Math.Sin(w * (start + n));
        }

        return 2 * Math.Sqrt(re * re + im * im) / length;
    }
}
