using System.Runtime.CompilerServices;

namespace TapeVault.Core.Detection;

/// <summary>
/// The scalar form of the tone correlators of <see cref="ToneBank"/>, for one setting: two sliding quadrature
/// correlators one bit long, at the mark and at the space tone (a recursive sliding DFT, O(1) a sample). The bank runs
/// the same arithmetic four settings to a vector; this form is its reference, and a test holds the two bit for bit.
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

    /// <summary>Takes one sample; gives the energies at the mark and space tones of the window that ends with it.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public void Next(float x, out double mark, out double space)
    {
        // Products rounded to single precision, as they are kept in the ring.
        float mi = (float)(x * _oscillator.MarkCos);
        float mq = (float)(x * _oscillator.MarkSin);
        float si = (float)(x * _oscillator.SpaceCos);
        float sq = (float)(x * _oscillator.SpaceSin);
        _oscillator.Turn();
        _sumMarkI += mi - _markI[_ring];
        _sumMarkQ += mq - _markQ[_ring];
        _sumSpaceI += si - _spaceI[_ring];
        _sumSpaceQ += sq - _spaceQ[_ring];
        _markI[_ring] = mi;
        _markQ[_ring] = mq;
        _spaceI[_ring] = si;
        _spaceQ[_ring] = sq;
        _ring = _ring + 1 == Window ? 0 : _ring + 1;
        mark = (_sumMarkI * _sumMarkI) + (_sumMarkQ * _sumMarkQ);
        space = (_sumSpaceI * _sumSpaceI) + (_sumSpaceQ * _sumSpaceQ);
    }

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
