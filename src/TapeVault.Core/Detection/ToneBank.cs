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
/// Every <see cref="Stride"/>-th window (the windows that end at samples s with s + 1 a multiple of the stride; every
/// window unless a sparser reading is asked for, at most every fourth at 300 baud: <see cref="ToneCorrelator.StrideFor"/>) is read: its energies pass the
/// <see cref="ToneGate"/>'s vector form in the same lanes (whether the window holds a carrier and whether it holds one
/// tone alone, the part of the tone detector no decoder state moves) and go to the decoders. The correlators themselves
/// take every sample.
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

    /// <param name="stride">Every how many samples a window is read: 1 (every sample), or at most <see cref="ToneCorrelator.StrideFor"/>.</param>
    public ToneBank(int settings, double markHz, double spaceHz, double baud, double sampleRate, int stride = 1)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(settings, 1);
        ArgumentOutOfRangeException.ThrowIfLessThan(stride, 1);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(stride, ToneCorrelator.StrideFor(baud, sampleRate));
        Settings = settings;
        Window = ToneCorrelator.WindowFor(baud, sampleRate);
        Stride = stride;
        _quads = new Quad[(settings + LanesPerQuad - 1) / LanesPerQuad];
        for (int q = 0; q < _quads.Length; q++)
        {
            // The gate's carrier reference moves once a window read, so it follows the same time at the rate they are read.
            _quads[q] = new Quad(Window, Stride, markHz, spaceHz, sampleRate, new ToneGate(Window, sampleRate / Stride));
        }
    }

    /// <summary>
    /// Every how many samples a window is read (<see cref="ToneCorrelator.StrideFor"/>): reading r is of the window
    /// that ends at sample r·stride + stride − 1.
    /// </summary>
    public int Stride { get; }

    /// <summary>The readings of the samples [<paramref name="start"/>, <paramref name="start"/> + <paramref name="length"/>): the first one's index and how many.</summary>
    public (long First, int Count) Readings(long start, int length) => (start / Stride, (int)(((start + length) / Stride) - (start / Stride)));

    public int Settings { get; }

    /// <summary>The correlator window, in samples: one bit at nominal speed.</summary>
    public int Window { get; }

    /// <summary>
    /// Advances the correlators of settings <paramref name="firstSetting"/> onwards (a multiple of four) over a slice of
    /// the bank's conditioned signal whose first sample is <paramref name="sliceStart"/>, one vector of eight settings'
    /// lanes a sample, writing each setting's readings to <paramref name="output"/> from reading
    /// <paramref name="outputOffset"/> of the chunk.
    /// </summary>
    internal void Process(int firstSetting, ReadOnlySpan<Vector256<float>> conditioned, long sliceStart, ToneEnergies output, int outputOffset)
    {
        // The slice's first sample whose window is read: the first s with s + 1 a multiple of the stride.
        int first = (int)((Stride - 1) - (sliceStart % Stride));
        for (int half = 0; half < 2; half++)
        {
            int quad = (firstSetting / LanesPerQuad) + half;
            if (quad < _quads.Length)
            {
                _quads[quad].Process(conditioned, upper: half == 1, first, output.Quad(quad), output.Gates(quad), outputOffset);
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
    private sealed class Quad(int window, int stride, double markHz, double spaceHz, double sampleRate, ToneGate gate)
    {
        private readonly (Vector256<double> Silence, Vector256<double> Gain) _gate = gate.Lanes;
        private Vector256<double> _reference;
        private readonly Vector256<float>[] _markRing = new Vector256<float>[window];
        private readonly Vector256<float>[] _spaceRing = new Vector256<float>[window];
        private ToneCorrelator.Oscillator _oscillator = new(markHz, spaceHz, sampleRate);
        private int _ring;
        private Vector256<double> _sumMarkI, _sumMarkQ, _sumSpaceI, _sumSpaceQ;

        public void Process(ReadOnlySpan<Vector256<float>> conditioned, bool upper, int firstRead, Span<Vector256<double>> output, Span<int> gates, int outputOffset)
        {
            // The half is chosen once a slice: each form of the loop widens only its own four lanes.
            if (upper)
            {
                Process<UpperHalf>(conditioned, firstRead, output, gates, outputOffset);
            }
            else
            {
                Process<LowerHalf>(conditioned, firstRead, output, gates, outputOffset);
            }
        }

        private void Process<THalf>(ReadOnlySpan<Vector256<float>> conditioned, int firstRead, Span<Vector256<double>> output, Span<int> gates, int outputOffset)
            where THalf : struct, IHalf
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

            // Output: two vectors a reading, the four lanes' mark energies, then their space energies.
            int readings = firstRead < conditioned.Length ? ((conditioned.Length - 1 - firstRead) / stride) + 1 : 0;
            var target = output.Slice(2 * outputOffset, 2 * readings);

            // And a word a reading of the gate's answers: lane i's carrier in bit i, pure mark in bit 4 + i, pure space
            // in bit 8 + i.
            var gated = gates.Slice(outputOffset, readings);
            int read = 0;
            int nextRead = firstRead;

            // Counters here stay below the chunk length: unchecked keeps the loop free of overflow tests.
            unchecked
            {
                for (int n = 0; n < conditioned.Length; n++)
                {
                    // Widening single to double is exact: the same x as the scalar correlator's.
                    var x = THalf.Widen(conditioned[n]);

                    // Both tones' correlators: the operator's vector form (ToneCorrelator.Slide, in its two halves), the
                    // oscillators shared.
                    ToneCorrelator.Accumulate(x, oscillator.MarkCos, oscillator.MarkSin, ref markRing[ring], ref sumMarkI, ref sumMarkQ);
                    ToneCorrelator.Accumulate(x, oscillator.SpaceCos, oscillator.SpaceSin, ref spaceRing[ring], ref sumSpaceI, ref sumSpaceQ);
                    oscillator.Turn();
                    ring = ring + 1 == markRing.Length ? 0 : ring + 1;
                    if (n != nextRead)
                    {
                        continue;
                    }

                    nextRead += stride;
                    var markEnergy = ToneCorrelator.Energy(sumMarkI, sumMarkQ);
                    var spaceEnergy = ToneCorrelator.Energy(sumSpaceI, sumSpaceQ);
                    target[2 * read] = markEnergy;
                    target[(2 * read) + 1] = spaceEnergy;

                    var carrier = ToneGate.Next(markEnergy, spaceEnergy, ref reference, silence, gain, out var pureMark, out var pureSpace);
                    gated[read] = (int)(carrier.ExtractMostSignificantBits()
                        | (pureMark.ExtractMostSignificantBits() << LanesPerQuad)
                        | (pureSpace.ExtractMostSignificantBits() << (2 * LanesPerQuad)));
                    read++;
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

    /// <summary>Which four of the bank's eight lanes a <see cref="Quad"/> takes: a type, so that each form of its loop is compiled on its own.</summary>
    private interface IHalf
    {
        static abstract Vector256<double> Widen(Vector256<float> lanes);
    }

    /// <summary>Lanes 0–3 of a lane group.</summary>
    private readonly struct LowerHalf : IHalf
    {
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static Vector256<double> Widen(Vector256<float> lanes) => Vector256.WidenLower(lanes);
    }

    /// <summary>Lanes 4–7 of a lane group.</summary>
    private readonly struct UpperHalf : IHalf
    {
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static Vector256<double> Widen(Vector256<float> lanes) => Vector256.WidenUpper(lanes);
    }
}

/// <summary>
/// The mark and space energies of every setting of a <see cref="ToneBank"/> over one chunk: per group of four settings,
/// two vectors a reading (mark, then space), lane i for setting 4·q + i; the chunk's readings are
/// <see cref="FirstReading"/> onwards, <see cref="Readings"/> of them.
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

    /// <summary>The index of the chunk's first reading (see <see cref="ToneBank.Stride"/>).</summary>
    public long FirstReading { get; internal set; }

    /// <summary>How many windows of the chunk were read.</summary>
    public int Readings { get; internal set; }

    internal Span<Vector256<double>> Quad(int quad) => _quads[quad];

    internal Span<int> Gates(int quad) => _gates[quad];

    /// <summary>Setting <paramref name="setting"/>'s view of the chunk's readings.</summary>
    public ToneLane Lane(int setting) => Lane(setting, Readings);

    /// <summary>Setting <paramref name="setting"/>'s view of the chunk's first <paramref name="length"/> readings.</summary>
    public ToneLane Lane(int setting, int length) =>
        new(_quads[setting / ToneBank.LanesPerQuad], _gates[setting / ToneBank.LanesPerQuad], setting % ToneBank.LanesPerQuad, length);
}

/// <summary>One setting's mark and space energies over a chunk, and its <see cref="ToneGate"/>'s answers, reading by reading.</summary>
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
    public double Mark(int n) => _all[MarkAt(n, _lane)];

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public double Space(int n) => _all[SpaceAt(n, _lane)];

    /// <summary>The gate's answer for reading <paramref name="n"/> of the chunk: <see cref="ToneGate.Carrier"/>, <see cref="ToneGate.PureMark"/> and <see cref="ToneGate.PureSpace"/> bits.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public int Gate(int n)
    {
        int word = _gates[n];
        return ((word & CarrierBit) != 0 ? ToneGate.Carrier : 0)
            | ((word & PureMarkBit) != 0 ? ToneGate.PureMark : 0)
            | ((word & PureSpaceBit) != 0 ? ToneGate.PureSpace : 0);
    }

    /// <summary>
    /// The readings' gate words as the bank wrote them, every lane's answers in one word a reading (see
    /// <see cref="CarrierBit"/>, <see cref="PureMarkBit"/>, <see cref="PureSpaceBit"/>): a loop over many readings tests
    /// this lane's bits in them directly rather than through <see cref="Gate"/>.
    /// </summary>
    internal ReadOnlySpan<int> GateWords => _gates;

    /// <summary>Every lane's energies, reading by reading: this lane's at <see cref="MarkAt"/> and <see cref="SpaceAt"/>.</summary>
    internal ReadOnlySpan<double> Energies => _all;

    /// <summary>This lane's carrier bit in a gate word (lane i's carrier is bit i).</summary>
    internal int CarrierBit => 1 << _lane;

    /// <summary>This lane's pure-mark bit in a gate word (bit 4 + i).</summary>
    internal int PureMarkBit => 1 << (ToneBank.LanesPerQuad + _lane);

    /// <summary>This lane's pure-space bit in a gate word (bit 8 + i).</summary>
    internal int PureSpaceBit => 1 << ((2 * ToneBank.LanesPerQuad) + _lane);

    /// <summary>This lane's index among the four of its group.</summary>
    internal int LaneIndex => _lane;

    /// <summary>Where lane <paramref name="lane"/>'s mark energy of reading <paramref name="n"/> is in <see cref="Energies"/>: two vectors a reading, mark then space.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static int MarkAt(int n, int lane) => unchecked((2 * ToneBank.LanesPerQuad * n) + lane);

    /// <summary>Where lane <paramref name="lane"/>'s space energy of reading <paramref name="n"/> is in <see cref="Energies"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static int SpaceAt(int n, int lane) => unchecked(MarkAt(n, lane) + ToneBank.LanesPerQuad);
}
