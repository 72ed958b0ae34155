using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;

namespace TapeVault.Core.Detection;

/// <summary>
/// The scalar form of the tone correlators of <see cref="ToneBank"/>, for one setting: two sliding quadrature
/// correlators one bit long, at the mark and at the space tone (a recursive sliding DFT, O(1) a sample). The arithmetic
/// of one tone's correlator is written once, as an operator with a scalar form (<see cref="Slide(float, double, double, ref float, ref float, ref double, ref double)"/>,
/// used here) and a vector form (four settings in the lanes of a <see cref="Vector256{T}"/>, used by the bank), in
/// the manner of System.Numerics.Tensors' operators; this form is the bank's reference, and a test holds the two bit
/// for bit.
/// </summary>
public struct ToneCorrelator
{
    private readonly float[] _markI, _markQ, _spaceI, _spaceQ;
    private Oscillator _oscillator;
    private int _ring;
    private double _sumMarkI, _sumMarkQ, _sumSpaceI, _sumSpaceQ;

    public ToneCorrelator(double markHz, double spaceHz, double baud, double sampleRate)
    {
        Window = WindowFor(baud, sampleRate);
        _markI = new float[Window];
        _markQ = new float[Window];
        _spaceI = new float[Window];
        _spaceQ = new float[Window];
        _oscillator = new Oscillator(markHz, spaceHz, sampleRate);
    }

    /// <summary>The correlator window, in samples: one bit at nominal speed.</summary>
    public int Window { get; }

    /// <summary>One bit at nominal speed, in whole samples (at least two).</summary>
    public static int WindowFor(double baud, double sampleRate) => Math.Max(2, (int)Math.Round(sampleRate / baud));

    /// <summary>
    /// The fewest windows a decoder reads per bit: a window of more samples than this is read every
    /// <see cref="StrideFor"/> samples rather than every sample. D moves smoothly over a one-bit window (a triangle from
    /// one bit's centre to the next), so at 32 readings a bit its zero crossings, interpolated between readings, and its
    /// value at a bit's centre, read at most a stride late (under 1/32 of a bit, where D has fallen by at most 1/16),
    /// are what the reading of every sample gives, at a fraction of the decoder's work (our estimate, checked by the
    /// trust bench on held-out seeds).
    /// </summary>
    public const int MinimumReadingsPerWindow = 32;

    /// <summary>
    /// The sparsest the decoders may read windows of this length (a decode's sparse tone readings, off by default): every sample up to twice <see cref="MinimumReadingsPerWindow"/> samples (1200 baud at 44.1 kHz),
    /// then every (window over it) samples (300 baud at 44.1 kHz, 147 samples: every fourth).
    /// </summary>
    public static int StrideFor(double baud, double sampleRate) => Math.Max(1, WindowFor(baud, sampleRate) / MinimumReadingsPerWindow);

    /// <summary>Takes one sample; gives the energies at the mark and space tones of the window that ends with it.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public void Next(float x, out double mark, out double space)
    {
        mark = Slide(x, _oscillator.MarkCos, _oscillator.MarkSin, ref _markI[_ring], ref _markQ[_ring], ref _sumMarkI, ref _sumMarkQ);
        space = Slide(x, _oscillator.SpaceCos, _oscillator.SpaceSin, ref _spaceI[_ring], ref _spaceQ[_ring], ref _sumSpaceI, ref _sumSpaceQ);
        _oscillator.Turn();
        _ring = _ring + 1 == Window ? 0 : _ring + 1;
    }

    /// <summary>
    /// One sample <paramref name="x"/> through one tone's sliding correlator, the local oscillator at
    /// (<paramref name="cos"/>, <paramref name="sin"/>): the products with it, rounded to single precision as they are
    /// kept in the ring, go in; the ones a window old (<paramref name="ringI"/>, <paramref name="ringQ"/>, replaced by
    /// the new) go out, the difference taken in single precision and added to the sums in double. Gives the energy
    /// |X|² of the window that ends with <paramref name="x"/>.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static double Slide(float x, double cos, double sin, ref float ringI, ref float ringQ, ref double sumI, ref double sumQ)
    {
        float i = (float)(x * cos);
        float q = (float)(x * sin);
        sumI += i - ringI;
        sumQ += q - ringQ;
        ringI = i;
        ringQ = q;
        return (sumI * sumI) + (sumQ * sumQ);
    }

    /// <summary>
    /// The vector form of <see cref="Slide(float, double, double, ref float, ref float, ref double, ref double)"/>:
    /// four settings' samples (widened to double, which is exact), one oscillator for all; the ring keeps the four
    /// lanes' I products in its lower half and their Q products in its upper half.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static Vector256<double> Slide(Vector256<double> x, double cos, double sin, ref Vector256<float> ring, ref Vector256<double> sumI, ref Vector256<double> sumQ)
    {
        Accumulate(x, cos, sin, ref ring, ref sumI, ref sumQ);
        return Energy(sumI, sumQ);
    }

    /// <summary>
    /// The first half of the vector form of <see cref="Slide(Vector256{double}, double, double, ref Vector256{float}, ref Vector256{double}, ref Vector256{double})"/>:
    /// the sample's products in, the ones a window old out; for a sample whose window no one reads (the bank reads every
    /// <see cref="ToneBank.Stride"/>-th), this is all there is to do.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static void Accumulate(Vector256<double> x, double cos, double sin, ref Vector256<float> ring, ref Vector256<double> sumI, ref Vector256<double> sumQ)
    {
        var products = Vector256.Narrow(x * Vector256.Create(cos), x * Vector256.Create(sin));
        var (inI, inQ) = Vector256.Widen(products - ring);
        ring = products;
        sumI += inI;
        sumQ += inQ;
    }

    /// <summary>The second half: the energy |X|² of the window the sums hold.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static Vector256<double> Energy(Vector256<double> sumI, Vector256<double> sumQ) => (sumI * sumI) + (sumQ * sumQ);

    /// <summary>Pulls the oscillators back onto the unit circle (once a chunk is enough).</summary>
    public void Renormalise() => _oscillator.Renormalise();

    /// <summary>
    /// The two local oscillators, as phasors turned by one sample's angle each sample (a complex multiply, no
    /// trigonometry per sample). Every setting of a profile shares them.
    /// </summary>
    internal struct Oscillator
    {
        private readonly double _markStepCos, _markStepSin, _spaceStepCos, _spaceStepSin;

        public Oscillator(double markHz, double spaceHz, double sampleRate)
        {
            MarkCos = 1;
            SpaceCos = 1;
            (_markStepSin, _markStepCos) = Math.SinCos(2 * Math.PI * markHz / sampleRate);
            (_spaceStepSin, _spaceStepCos) = Math.SinCos(2 * Math.PI * spaceHz / sampleRate);
        }

        public double MarkCos { get; private set; }

        public double MarkSin { get; private set; }

        public double SpaceCos { get; private set; }

        public double SpaceSin { get; private set; }

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public void Turn()
        {
            (MarkCos, MarkSin) = ((MarkCos * _markStepCos) - (MarkSin * _markStepSin), (MarkSin * _markStepCos) + (MarkCos * _markStepSin));
            (SpaceCos, SpaceSin) = ((SpaceCos * _spaceStepCos) - (SpaceSin * _spaceStepSin), (SpaceSin * _spaceStepCos) + (SpaceCos * _spaceStepSin));
        }

        public void Renormalise()
        {
            double markNorm = 1 / Math.Sqrt((MarkCos * MarkCos) + (MarkSin * MarkSin));
            double spaceNorm = 1 / Math.Sqrt((SpaceCos * SpaceCos) + (SpaceSin * SpaceSin));
            MarkCos *= markNorm;
            MarkSin *= markNorm;
            SpaceCos *= spaceNorm;
            SpaceSin *= spaceNorm;
        }
    }
}
