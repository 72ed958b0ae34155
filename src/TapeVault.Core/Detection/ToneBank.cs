using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;

namespace TapeVault.Core.Detection;

/// <summary>
/// The tone correlators of every FSK setting of a bank, four settings to the lanes of one <see cref="Vector256{T}"/>
/// of doubles: for each setting, two sliding quadrature correlators one bit long measure the energy at the mark and at
/// the space tone (a recursive sliding DFT: each sample adds its product with the local oscillator and takes away the
/// product that leaves the window, O(1) a sample whatever the window). Every setting of a profile shares the tones,
/// the window and so the oscillators: one phasor per tone turns for all lanes.
/// <para>
/// Each window's energies then pass the <see cref="ToneGate"/>'s vector form in the same lanes: whether the window holds
/// a carrier and whether it holds one tone alone, the part of the tone detector no decoder state moves.
/// </para>
/// <para>
/// The arithmetic is that of <see cref="ToneCorrelator"/>, which it calls for the oscillators and whose scalar form is
/// the reference: products rounded to single precision as they enter the ring, sums in double precision, so that a
/// setting's energies are bit for bit those its own scalar correlator would give. What the FSK decoder decides from
/// them (tone levels, the soft decision) stays in its <see cref="ToneDetector"/>.
/// </para>
/// </summary>
public sealed class ToneBank
{
    public const int LanesPerQuad = 4;

    private readonly Quad[] _quads;

    public ToneBank(int settings, double markHz, double spaceHz, double baud, double sampleRate)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(settings, 1);
        Settings = settings;
        Window = ToneCorrelator.WindowFor(baud, sampleRate);
        _quads = new Quad[(settings + LanesPerQuad - 1) / LanesPerQuad];
        for (int q = 0; q < _quads.Length; q++)
        {
            _quads[q] = new Quad(Window, markHz, spaceHz, sampleRate, new ToneGate(Window, sampleRate));
        }
    }

    public int Settings { get; }

    /// <summary>The correlator window, in samples: one bit at nominal speed.</summary>
    public int Window { get; }

    /// <summary>
    /// Advances the correlators of settings <paramref name="firstSetting"/> onwards (a multiple of four) over a slice of
    /// the bank's conditioned signal, one vector of eight settings' lanes a sample, writing each setting's energies to
    /// <paramref name="output"/> from <paramref name="outputOffset"/>.
    /// </summary>
    internal void Process(int firstSetting, ReadOnlySpan<Vector256<float>> conditioned, ToneEnergies output, int outputOffset)
    {
        for (int half = 0; half < 2; half++)
        {
            int quad = (firstSetting / LanesPerQuad) + half;
            if (quad < _quads.Length)
            {
                _quads[quad].Process(conditioned, upper: half == 1, output.Quad(quad), output.Gates(quad), outputOffset);
            }
        }
    }

    /// <summary>Rounding makes a turned phasor drift off the unit circle: pulled back at the end of each chunk the bank is given.</summary>
    internal void EndChunk()
    {
        foreach (var quad in _quads)
        {
            quad.EndChunk();
        }
    }

    /// <summary>Four settings' correlators; lane i of every vector is setting 4·q + i.</summary>
    private sealed class Quad(int window, double markHz, double spaceHz, double sampleRate, ToneGate gate)
    {
        private readonly (Vector256<double> Silence, Vector256<double> Gain) _gate = gate.Lanes;
        private Vector256<double> _reference;
        private readonly Vector256<float>[] _markRing = new Vector256<float>[window];
        private readonly Vector256<float>[] _spaceRing = new Vector256<float>[window];
        private ToneCorrelator.Oscillator _oscillator = new(markHz, spaceHz, sampleRate);
        private int _ring;
        private Vector256<double> _sumMarkI, _sumMarkQ, _sumSpaceI, _sumSpaceQ;

        public void Process(ReadOnlySpan<Vector256<float>> conditioned, bool upper, Span<Vector256<double>> output, Span<int> gates, int outputOffset)
        {
            var (silence, gain) = _gate;
            var reference = _reference;
            var oscillator = _oscillator;
            var markRing = _markRing;
            var spaceRing = _spaceRing;
            int ring = _ring;
            var sumMarkI = _sumMarkI;
            var sumMarkQ = _sumMarkQ;
            var sumSpaceI = _sumSpaceI;
            var sumSpaceQ = _sumSpaceQ;

            // Output: two vectors a sample, the four lanes' mark energies, then their space energies.
            var target = output.Slice(2 * outputOffset, 2 * conditioned.Length);

            // And a word a sample of the gate's answers: lane i's carrier in bit i, pure mark in bit 4 + i, pure space
            // in bit 8 + i.
            var gated = gates.Slice(outputOffset, conditioned.Length);

            // Counters here stay below the chunk length: unchecked keeps the loop free of overflow tests.
            unchecked
            {
                for (int n = 0; n < conditioned.Length; n++)
                {
                    // Widening single to double is exact: the same x as the scalar correlator's.
                    var (lower, higher) = Vector256.Widen(conditioned[n]);
                    var x = upper ? higher : lower;

                    // Both tones' correlators: the operator's vector form (ToneCorrelator.Slide), the oscillators shared.
                    var markEnergy = ToneCorrelator.Slide(x, oscillator.MarkCos, oscillator.MarkSin, ref markRing[ring], ref sumMarkI, ref sumMarkQ);
                    var spaceEnergy = ToneCorrelator.Slide(x, oscillator.SpaceCos, oscillator.SpaceSin, ref spaceRing[ring], ref sumSpaceI, ref sumSpaceQ);
                    oscillator.Turn();
                    ring = ring + 1 == markRing.Length ? 0 : ring + 1;
                    target[2 * n] = markEnergy;
                    target[(2 * n) + 1] = spaceEnergy;

                    var carrier = ToneGate.Next(markEnergy, spaceEnergy, ref reference, silence, gain, out var pureMark, out var pureSpace);
                    gated[n] = (int)(carrier.ExtractMostSignificantBits()
                        | (pureMark.ExtractMostSignificantBits() << LanesPerQuad)
                        | (pureSpace.ExtractMostSignificantBits() << (2 * LanesPerQuad)));
                }
            }

            _oscillator = oscillator;
            _ring = ring;
            _sumMarkI = sumMarkI;
            _sumMarkQ = sumMarkQ;
            _sumSpaceI = sumSpaceI;
            _sumSpaceQ = sumSpaceQ;
            _reference = reference;
        }

        public void EndChunk() => _oscillator.Renormalise();
    }
}

/// <summary>
/// The mark and space energies of every setting of a <see cref="ToneBank"/> over one chunk: per group of four settings,
/// two vectors a sample (mark, then space), lane i for setting 4·q + i.
/// </summary>
public sealed class ToneEnergies
{
    private readonly Vector256<double>[][] _quads;
    private readonly int[][] _gates;

    public ToneEnergies(int settings, int samples)
    {
        _quads = new Vector256<double>[(settings + ToneBank.LanesPerQuad - 1) / ToneBank.LanesPerQuad][];
        _gates = new int[_quads.Length][];
        for (int q = 0; q < _quads.Length; q++)
        {
            _quads[q] = new Vector256<double>[2 * samples];
            _gates[q] = new int[samples];
        }

        Capacity = samples;
    }

    public int Capacity { get; }

    internal Span<Vector256<double>> Quad(int quad) => _quads[quad];

    internal Span<int> Gates(int quad) => _gates[quad];

    /// <summary>Setting <paramref name="setting"/>'s view of the chunk.</summary>
    public ToneLane Lane(int setting, int length) =>
        new(_quads[setting / ToneBank.LanesPerQuad], _gates[setting / ToneBank.LanesPerQuad], setting % ToneBank.LanesPerQuad, length);
}

/// <summary>One setting's mark and space energies over a chunk, and its <see cref="ToneGate"/>'s answers, sample by sample.</summary>
public readonly ref struct ToneLane
{
    private readonly ReadOnlySpan<double> _all;
    private readonly ReadOnlySpan<int> _gates;
    private readonly int _lane;

    public ToneLane(Vector256<double>[] quad, int[] gates, int lane, int length)
    {
        _all = MemoryMarshal.Cast<Vector256<double>, double>(quad.AsSpan(0, 2 * length));
        _gates = gates.AsSpan(0, length);
        _lane = lane;
        Length = length;
    }

    public int Length { get; }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double Mark(int n) => _all[unchecked((2 * ToneBank.LanesPerQuad * n) + _lane)];

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double Space(int n) => _all[unchecked((2 * ToneBank.LanesPerQuad * n) + ToneBank.LanesPerQuad + _lane)];

    /// <summary>The gate's answer for the window that ends at sample <paramref name="n"/>: <see cref="ToneGate.Carrier"/>, <see cref="ToneGate.PureMark"/> and <see cref="ToneGate.PureSpace"/> bits.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public int Gate(int n)
    {
        int word = _gates[n] >> _lane;
        return (word & 1) | ((word >> (ToneBank.LanesPerQuad - 1)) & 2) | ((word >> ((2 * ToneBank.LanesPerQuad) - 2)) & 4);
    }
}
