namespace TapeVault.Core.Dsp;

/// <summary>
/// The Goertzel algorithm: the power of one frequency over a block of samples with a second-order recursion
/// s[n] = x[n] + 2·cos(ω)·s[n−1] − s[n−2], |X(ω)|² = s1² + s2² − 2·cos(ω)·s1·s2 (Goertzel 1958; as in any DSP
/// textbook, e.g. Oppenheim and Schafer, Discrete-Time Signal Processing). Cheaper than an FFT when only a few dozen
/// frequencies matter.
/// </summary>
public static class Goertzel
{
    /// <summary>The power at <paramref name="frequencyHz"/> of <paramref name="samples"/>, normalised so that a sine of amplitude A gives about A²/4·N².</summary>
    public static double Power(ReadOnlySpan<float> samples, double frequencyHz, double sampleRate)
    {
        double coefficient = 2 * Math.Cos(2 * Math.PI * frequencyHz / sampleRate);
        double s1 = 0;
        double s2 = 0;
        foreach (float x in samples)
        {
            double s0 = x + (coefficient * s1) - s2;
            s2 = s1;
            s1 = s0;
        }

        return (s1 * s1) + (s2 * s2) - (coefficient * s1 * s2);
    }
}
