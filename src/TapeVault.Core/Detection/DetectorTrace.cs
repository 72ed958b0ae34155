using System.Collections.Immutable;
using System.Runtime.InteropServices;
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
/// The read chain of <see cref="DetectorBank"/> for one setting, sample by sample, handing out the envelope-driven band
/// and the trigger state the bank keeps inside its vector lanes and never exposes. It exists so that a screen can draw
/// the threshold over the signal; the bank stays the decoder's only path. Both call the read chain's operator
/// (<see cref="ReadChainStep"/>, its scalar form here) with the same coefficients (<see cref="ReadChainCoefficients"/>),
/// and a test holds the two to the same edges.
/// </summary>
public static class DetectorTrace
{
    /// <summary>Runs <paramref name="setting"/> over <paramref name="samples"/>, which start at capture sample <paramref name="firstSample"/>, from a rested state.</summary>
    public static DetectorTraceResult Run(ReadOnlySpan<float> samples, int sampleRate, DetectorSetting setting, long firstSample = 0)
    {
        ArgumentNullException.ThrowIfNull(setting);
        ArgumentOutOfRangeException.ThrowIfLessThan(sampleRate, 1);
        var k = ReadChainCoefficients.For(setting, sampleRate);
        var lp = k.LowPass;

        var conditioned = new float[samples.Length];
        var bands = new float[samples.Length];
        var high = new bool[samples.Length];
        var edges = ImmutableArray.CreateBuilder<Edge>();
        float previousSample = 0, hpY = 0, z1 = 0, z2 = 0, previousFiltered = 0, previousConditioned = 0, envelope = 0, state = -1;
        double lastCrossing = firstSample;
        for (int n = 0; n < samples.Length; n++)
        {
            float x = samples[n];
            float c = ReadChainStep.Condition(
                x - previousSample, ref hpY, ref z1, ref z2, ref previousFiltered, k.HighPassA, lp.B0, lp.B1, lp.B2, lp.A1, lp.A2, k.GainNow, k.GainPrevious);
            previousSample = x;
            envelope = ReadChainStep.Envelope(c, envelope, k.Decay);
            float band = ReadChainStep.Band(envelope, k.BandFixed, k.BandRelative);
            if ((previousConditioned < 0) != (c < 0))
            {
                // The bank keeps this time in single precision relative to its slice; here it is kept whole, in double.
                lastCrossing = firstSample + n - 1 + (double)(previousConditioned / (previousConditioned - c));
            }

            previousConditioned = c;
            state = ReadChainStep.Trigger(c, band, state, out bool up, out bool down);
            if ((up && k.CountRising) || (down && k.CountFalling))
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
