using System.Collections.Immutable;
using System.Runtime.InteropServices;
using TapeVault.Core.Dsp;
using TapeVault.Core.Edges;

namespace TapeVault.Core.Detection;

/// <summary>
/// What one detector setting did, sample by sample, over a short stretch: the conditioned signal the Schmitt trigger
/// saw, the half-width of its switching band, its two-level output, and the edges it counted.
/// </summary>
/// <param name="FirstSample">The capture's sample index of element 0 of every array.</param>
/// <param name="Conditioned">The signal after DC block, low-pass, optional derivative and polarity.</param>
/// <param name="Band">The trigger switches up above +Band and down below −Band.</param>
/// <param name="High">The trigger's output: true while high.</param>
/// <param name="Edges">The counted switches, timed at the interpolated zero crossing before each, in capture samples.</param>
public sealed record DetectorTraceResult(
    long FirstSample,
    ImmutableArray<float> Conditioned,
    ImmutableArray<float> Band,
    ImmutableArray<bool> High,
    ImmutableArray<Edge> Edges);

/// <summary>
/// A plain scalar copy of the read chain of <see cref="DetectorBank"/> for one setting, which also hands out the
/// envelope-driven band and the trigger state the bank keeps inside its vector lanes and never exposes. It exists so
/// that a screen can draw the threshold over the signal; the bank stays the decoder's only path. The arithmetic is
/// the bank's, step for step in single precision, and a test holds the two to the same edges.
/// </summary>
public static class DetectorTrace
{
    // The bank's constants (see DetectorBank.LaneGroup.Create): the derivative's gain keeps a 1 kHz tone at its
    // amplitude, relative bands have a small floor, and the envelope falls by 1/e in 20 ms.
    private const double DerivativeUnityHz = 1000.0;
    private const float RelativeBandFloor = 1e-4f;
    private const double EnvelopeFallSeconds = 0.020;

    /// <summary>Runs <paramref name="setting"/> over <paramref name="samples"/>, which start at capture sample <paramref name="firstSample"/>, from a rested state.</summary>
    public static DetectorTraceResult Run(ReadOnlySpan<float> samples, int sampleRate, DetectorSetting setting, long firstSample = 0)
    {
        ArgumentNullException.ThrowIfNull(setting);
        ArgumentOutOfRangeException.ThrowIfLessThan(sampleRate, 1);
        double dt = 1.0 / sampleRate;
        double rc = 1.0 / (2 * Math.PI * setting.HighPassHz);
        float hpA = (float)(rc / (rc + dt));
        var lp = setting.LowPassHz is { } hz ? BiquadCoefficients.ButterworthLowPass(hz, sampleRate) : BiquadCoefficients.PassThrough;
        float sign = setting.Invert ? -1f : 1f;
        float k = (float)(sampleRate / (2 * Math.PI * DerivativeUnityHz));
        float gainNow = setting.Differentiate ? sign * k : sign;
        float gainPrev = setting.Differentiate ? -sign * k : 0f;
        bool fixedBand = setting.ThresholdMode == ThresholdMode.Fixed;
        float bandFixed = fixedBand ? (float)setting.Hysteresis : RelativeBandFloor;
        float bandRelative = fixedBand ? 0f : (float)setting.Hysteresis;
        float decay = (float)Math.Exp(-1.0 / (EnvelopeFallSeconds * sampleRate));
        bool countRising = setting.Edges != EdgeSelection.Falling;
        bool countFalling = setting.Edges != EdgeSelection.Rising;

        var conditioned = new float[samples.Length];
        var bands = new float[samples.Length];
        var high = new bool[samples.Length];
        var edges = ImmutableArray.CreateBuilder<Edge>();
        float previousSample = 0, hpY = 0, z1 = 0, z2 = 0, previousFiltered = 0, previousConditioned = 0, envelope = 0, state = -1;
        double lastCrossing = firstSample;
        for (int n = 0; n < samples.Length; n++)
        {
            float x = samples[n];
            hpY = hpA * (hpY + (x - previousSample));
            previousSample = x;
            float filtered = (lp.B0 * hpY) + z1;
            z1 = (lp.B1 * hpY) - (lp.A1 * filtered) + z2;
            z2 = (lp.B2 * hpY) - (lp.A2 * filtered);
            float c = (gainNow * filtered) + (gainPrev * previousFiltered);
            previousFiltered = filtered;
            envelope = MathF.Max(MathF.Abs(c), envelope * decay);
            float band = bandFixed + (bandRelative * envelope);
            if ((previousConditioned < 0) != (c < 0))
            {
                // The bank keeps this time in single precision relative to its slice; here it is kept whole, in double.
                lastCrossing = firstSample + n - 1 + (double)(previousConditioned / (previousConditioned - c));
            }

            previousConditioned = c;
            bool up = state < 0 && c > band;
            bool down = state > 0 && c < -band;
            state = up ? 1 : down ? -1 : state;
            if ((up && countRising) || (down && countFalling))
            {
                edges.Add(new Edge(lastCrossing, up, envelope));
            }

            conditioned[n] = c;
            bands[n] = band;
            high[n] = state > 0;
        }

        return new DetectorTraceResult(
            firstSample,
            ImmutableCollectionsMarshal.AsImmutableArray(conditioned),
            ImmutableCollectionsMarshal.AsImmutableArray(bands),
            ImmutableCollectionsMarshal.AsImmutableArray(high),
            edges.ToImmutable());
    }
}
