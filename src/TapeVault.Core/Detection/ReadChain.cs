using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using TapeVault.Core.Dsp;

namespace TapeVault.Core.Detection;

/// <summary>
/// The coefficients of one detector setting's read chain, worked out in this one place for the bank (which packs eight
/// settings' into the lanes of its vectors) and for the plots' scalar trace.
/// </summary>
internal readonly record struct ReadChainCoefficients(
    float HighPassA,
    BiquadCoefficients LowPass,
    float GainNow,
    float GainPrevious,
    float BandFixed,
    float BandRelative,
    float Decay,
    bool CountRising,
    bool CountFalling)
{
    /// <summary>Differentiation is scaled so that a tone of this frequency keeps its amplitude, which keeps fixed thresholds meaningful.</summary>
    private const double DerivativeUnityHz = 1000.0;

    /// <summary>A relative band's floor, in full-scale units: keeps digital silence from toggling the trigger.</summary>
    private const float RelativeBandFloor = 1e-4f;

    /// <summary>The envelope falls by 1/e in 20 ms: slow next to any bit cell, quick next to a level change between blocks.</summary>
    private const double EnvelopeFallSeconds = 0.020;

    public static ReadChainCoefficients For(DetectorSetting setting, int sampleRate)
    {
        ArgumentNullException.ThrowIfNull(setting);
        double dt = 1.0 / sampleRate;
        double rc = 1.0 / (2 * Math.PI * setting.HighPassHz);
        var lowPass = setting.LowPassHz is { } hz ? BiquadCoefficients.ButterworthLowPass(hz, sampleRate) : BiquadCoefficients.PassThrough;
        float sign = setting.Invert ? -1f : 1f;
        float k = (float)(sampleRate / (2 * Math.PI * DerivativeUnityHz));
        bool fixedBand = setting.ThresholdMode == ThresholdMode.Fixed;
        return new ReadChainCoefficients(
            (float)(rc / (rc + dt)),
            lowPass,
            setting.Differentiate ? sign * k : sign,
            setting.Differentiate ? -sign * k : 0f,
            fixedBand ? (float)setting.Hysteresis : RelativeBandFloor,
            fixedBand ? 0f : (float)setting.Hysteresis,
            (float)Math.Exp(-1.0 / (EnvelopeFallSeconds * sampleRate)),
            setting.Edges != EdgeSelection.Falling,
            setting.Edges != EdgeSelection.Rising);
    }
}

/// <summary>
/// The arithmetic of the read chain, written once as an operator with a scalar form (one setting: the plots' trace)
/// and a vector form (eight settings in the lanes of a <see cref="Vector256{T}"/>: the bank), side by side in the
/// manner of System.Numerics.Tensors' operators, step for step the same operations in single precision, so the trace
/// draws exactly what the bank detects.
/// </summary>
internal static class ReadChainStep
{
    /// <summary>
    /// One sample through the one-pole DC block y[n] = a·(y[n−1] + x[n] − x[n−1]) (<paramref name="dx"/> is
    /// x[n] − x[n−1]), the biquad low-pass (transposed direct form II), and the optional derivative and polarity folded
    /// into two gains; gives the conditioned sample the Schmitt trigger sees.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static float Condition(
        float dx, ref float hpY, ref float z1, ref float z2, ref float previousFiltered,
        float hpA, float b0, float b1, float b2, float a1, float a2, float gainNow, float gainPrevious)
    {
        hpY = hpA * (hpY + dx);
        float filtered = (b0 * hpY) + z1;
        z1 = (b1 * hpY) - (a1 * filtered) + z2;
        z2 = (b2 * hpY) - (a2 * filtered);
        float c = (gainNow * filtered) + (gainPrevious * previousFiltered);
        previousFiltered = filtered;
        return c;
    }

    /// <inheritdoc cref="Condition(float, ref float, ref float, ref float, ref float, float, float, float, float, float, float, float, float)"/>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<float> Condition(
        Vector256<float> dx, ref Vector256<float> hpY, ref Vector256<float> z1, ref Vector256<float> z2, ref Vector256<float> previousFiltered,
        Vector256<float> hpA, Vector256<float> b0, Vector256<float> b1, Vector256<float> b2, Vector256<float> a1, Vector256<float> a2, Vector256<float> gainNow, Vector256<float> gainPrevious)
    {
        hpY = hpA * (hpY + dx);
        var filtered = (b0 * hpY) + z1;
        z1 = (b1 * hpY) - (a1 * filtered) + z2;
        z2 = (b2 * hpY) - (a2 * filtered);
        var c = (gainNow * filtered) + (gainPrevious * previousFiltered);
        previousFiltered = filtered;
        return c;
    }

    /// <summary>The running peak envelope: |c|, or the last envelope decayed by one sample, whichever is larger.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static float Envelope(float c, float envelope, float decay) => MathF.Max(MathF.Abs(c), envelope * decay);

    /// <inheritdoc cref="Envelope(float, float, float)"/>
    // MaxNative: one vmaxps; the IEEE NaN and signed-zero care of Max is not needed for an envelope.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<float> Envelope(Vector256<float> c, Vector256<float> envelope, Vector256<float> decay) =>
        Vector256.MaxNative(Vector256.Abs(c), envelope * decay);

    /// <summary>The half-width of the trigger's switching band: a fixed part and a part relative to the envelope.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static float Band(float envelope, float bandFixed, float bandRelative) => bandFixed + (bandRelative * envelope);

    /// <inheritdoc cref="Band(float, float, float)"/>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<float> Band(Vector256<float> envelope, Vector256<float> bandFixed, Vector256<float> bandRelative) =>
        bandFixed + (bandRelative * envelope);

    /// <summary>
    /// The Schmitt trigger (state −1 low, +1 high): low goes high above +band, high goes low below −band; gives the new
    /// state and whether it went up or down.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static float Trigger(float c, float band, float state, out bool up, out bool down)
    {
        up = state < 0 && c > band;
        down = state > 0 && c < -band;
        return up ? 1 : down ? -1 : state;
    }

    /// <inheritdoc cref="Trigger(float, float, float, out bool, out bool)"/>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<float> Trigger(Vector256<float> c, Vector256<float> band, Vector256<float> state, out Vector256<float> up, out Vector256<float> down)
    {
        var zero = Vector256<float>.Zero;
        up = Vector256.BitwiseAnd(Vector256.LessThan(state, zero), Vector256.GreaterThan(c, band));
        down = Vector256.BitwiseAnd(Vector256.GreaterThan(state, zero), Vector256.LessThan(c, -band));
        return Vector256.ConditionalSelect(up, Vector256<float>.One, Vector256.ConditionalSelect(down, Vector256.Create(-1f), state));
    }
}
