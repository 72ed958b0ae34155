namespace TapeVault.Core.Dsp;

/// <summary>Coefficients of a second-order section, normalised so that a0 = 1.</summary>
public readonly record struct BiquadCoefficients(float B0, float B1, float B2, float A1, float A2)
{
    public static BiquadCoefficients PassThrough { get; } = new(1, 0, 0, 0, 0);

    /// <summary>Second-order Butterworth low-pass (Q = 1/√2), from the RBJ "Audio EQ Cookbook".</summary>
    public static BiquadCoefficients ButterworthLowPass(double cutoffHz, double sampleRate)
    {
        if (!(cutoffHz > 0) || cutoffHz >= sampleRate * 0.49)
        {
            return PassThrough;
        }

        double w0 = 2 * Math.PI * cutoffHz / sampleRate;
        double alpha = Math.Sin(w0) / (2 * Math.Sqrt(0.5));
        double cos = Math.Cos(w0);
        double a0 = 1 + alpha;
        return new BiquadCoefficients(
            (float)((1 - cos) / 2 / a0),
            (float)((1 - cos) / a0),
            (float)((1 - cos) / 2 / a0),
            (float)(-2 * cos / a0),
            (float)((1 - alpha) / a0));
    }

    /// <summary>
    /// The section's gain in dB at a frequency: 20·log10|H(e^jω)|, ω = 2πf/fs, with
    /// H(z) = (b0 + b1·z⁻¹ + b2·z⁻²) / (1 + a1·z⁻¹ + a2·z⁻²).
    /// </summary>
    public double GainDb(double frequencyHz, double sampleRate)
    {
        double w = 2 * Math.PI * frequencyHz / sampleRate;
        double c1 = Math.Cos(w), s1 = Math.Sin(w), c2 = Math.Cos(2 * w), s2 = Math.Sin(2 * w);
        double numRe = B0 + (B1 * c1) + (B2 * c2), numIm = -(B1 * s1) - (B2 * s2);
        double denRe = 1 + (A1 * c1) + (A2 * c2), denIm = -(A1 * s1) - (A2 * s2);
        return 10 * Math.Log10(((numRe * numRe) + (numIm * numIm)) / ((denRe * denRe) + (denIm * denIm)));
    }
}

/// <summary>A streaming second-order section (transposed direct form II): state is two numbers.</summary>
public struct Biquad(BiquadCoefficients c)
{
    private readonly BiquadCoefficients _c = c;
    private float _z1;
    private float _z2;

    public void Process(Span<float> signal)
    {
        var c = _c;
        float z1 = _z1, z2 = _z2;
        for (int i = 0; i < signal.Length; i++)
        {
            float x = signal[i];
            float y = c.B0 * x + z1;
            z1 = c.B1 * x - c.A1 * y + z2;
            z2 = c.B2 * x - c.A2 * y;
            signal[i] = y;
        }

        _z1 = z1;
        _z2 = z2;
    }
}
