using TapeVault.Core.Blocks;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Symbols;

/// <summary>
/// Frequency-shift keying, framed like a serial line. Two sliding quadrature correlators, one bit long, measure the
/// energy at the mark and space tones; their normalised difference D = (Em − Es)/(Em + Es) is the soft decision
/// (the non-coherent binary FSK detector of the textbooks, e.g. Proakis, Digital Communications). A fall of D through
/// zero after enough mark tone is a start bit; the other bits are read one bit period apart from it, where each
/// correlator window covers exactly one bit.
/// </summary>
public sealed class FskDecoder : ISymbolDecoder
{
    private const double PhaseLoopGain = 0.5;

    private readonly FskEncoding _fsk;
    private readonly ByteFraming _framing;
    private readonly BlockAssembler _assembler;
    private readonly double _sampleRate;
    private readonly bool _countsHalfCycles;
    private readonly int _window;
    private readonly float[] _markI, _markQ, _spaceI, _spaceQ;
    private readonly double _markStepCos, _markStepSin, _spaceStepCos, _spaceStepSin;
    private readonly double _leadInSamples;
    private readonly double _blockEndIdleSamples;
    private readonly int _frameBits;
    private readonly float[] _charDistance = new float[16];
    private readonly bool[] _charBits = new bool[16];
    private int _ring;
    private double _markCos = 1, _markSin, _spaceCos = 1, _spaceSin;
    private double _sumMarkI, _sumMarkQ, _sumSpaceI, _sumSpaceQ;
    private double _carrierReference;
    private float _previousD;
    private double _markRun;
    private bool _inChar;
    private bool _inBlock;
    private double _charStart;
    private int _bitIndex;
    private double _nextBitTime;
    private double _lastCharEnd;
    private double _speed = 1;
    private double _lastEdge = double.NaN;
    private float _level;

    public FskDecoder(FormatProfile profile, bool countsBothEdges, double sampleRate, BlockAssembler assembler)
    {
        ArgumentNullException.ThrowIfNull(profile);
        _fsk = profile.Fsk ?? throw new ArgumentException("The profile is not an FSK profile.", nameof(profile));
        _framing = profile.Framing;
        _assembler = assembler;
        _sampleRate = sampleRate;
        _countsHalfCycles = countsBothEdges;
        _window = Math.Max(2, (int)Math.Round(sampleRate / _fsk.Baud));
        _markI = new float[_window];
        _markQ = new float[_window];
        _spaceI = new float[_window];
        _spaceQ = new float[_window];
        (_markStepSin, _markStepCos) = Math.SinCos(2 * Math.PI * _fsk.MarkHz / sampleRate);
        (_spaceStepSin, _spaceStepCos) = Math.SinCos(2 * Math.PI * _fsk.SpaceHz / sampleRate);
        _leadInSamples = Math.Max(_fsk.LeadInMinimumSeconds * sampleRate, 2.0 * _window);

        // Half a second with no start bit ends a stream block (common practice for serial tape streams).
        _blockEndIdleSamples = Math.Max(0.5 * sampleRate, 30.0 * _window);
        _frameBits = 1 + _framing.DataBits + (_framing.Parity == Parity.None ? 0 : 1) + 1;
    }

    public bool NeedsConditionedSignal => true;

    private double BitSamples => _sampleRate / (_fsk.Baud * _speed);

    /// <summary>Edges only calibrate the speed, from the mark tone between characters.</summary>
    public void OnEdges(ReadOnlySpan<Edge> edges)
    {
        double expected = _sampleRate / _fsk.MarkHz * (_countsHalfCycles ? 0.5 : 1);
        foreach (var edge in edges)
        {
            _level = edge.Level;
            if (!double.IsNaN(_lastEdge) && !_inChar)
            {
                double ratio = expected / (edge.Sample - _lastEdge);
                if (ratio is > 0.85 and < 1.15)
                {
                    _speed += 0.01 * (ratio - _speed);
                }
            }

            _lastEdge = edge.Sample;
        }
    }

    public void OnConditioned(ReadOnlySpan<float> signal, long chunkStart)
    {
        for (int i = 0; i < signal.Length; i++)
        {
            float d = Correlate(signal[i]);
            double n = chunkStart + i;
            if (_inChar)
            {
                TrackPhase(d, n);
                if (n >= _nextBitTime)
                {
                    DecideBit(d, n);
                }
            }
            else
            {
                if (d < 0 && _previousD >= 0 && _markRun >= (_inBlock ? 0.25 * BitSamples : _leadInSamples))
                {
                    // Start bit: D crosses zero half a window after the mark-to-space boundary.
                    double crossing = n - 1 + _previousD / (_previousD - d);
                    _inChar = true;
                    _bitIndex = 0;
                    _charStart = crossing;
                    _nextBitTime = crossing + 0.5 * BitSamples;
                }

                // The run survives the slope down to zero, so it is still whole when the crossing comes.
                _markRun = d > 0.3f ? _markRun + 1 : d < 0 ? 0 : _markRun;
                if (_inBlock && n - _lastCharEnd > _blockEndIdleSamples)
                {
                    _assembler.End(_lastCharEnd);
                    _inBlock = false;
                }
            }

            _previousD = d;
        }

        // Rounding makes a rotated phasor drift off the unit circle: pull it back once a chunk.
        double markNorm = 1 / Math.Sqrt(_markCos * _markCos + _markSin * _markSin);
        double spaceNorm = 1 / Math.Sqrt(_spaceCos * _spaceCos + _spaceSin * _spaceSin);
        _markCos *= markNorm;
        _markSin *= markNorm;
        _spaceCos *= spaceNorm;
        _spaceSin *= spaceNorm;
    }

    public void Finish(double endSample)
    {
        if (_inBlock)
        {
            _assembler.End(_lastCharEnd);
            _inBlock = false;
        }
    }

    private float Correlate(float x)
    {
        float mi = (float)(x * _markCos);
        float mq = (float)(x * _markSin);
        float si = (float)(x * _spaceCos);
        float sq = (float)(x * _spaceSin);

        // Rotate the two local oscillators by one sample (a complex multiply, no trigonometry per sample).
        (_markCos, _markSin) = (_markCos * _markStepCos - _markSin * _markStepSin, _markSin * _markStepCos + _markCos * _markStepSin);
        (_spaceCos, _spaceSin) = (_spaceCos * _spaceStepCos - _spaceSin * _spaceStepSin, _spaceSin * _spaceStepCos + _spaceCos * _spaceStepSin);
        _sumMarkI += mi - _markI[_ring];
        _sumMarkQ += mq - _markQ[_ring];
        _sumSpaceI += si - _spaceI[_ring];
        _sumSpaceQ += sq - _spaceQ[_ring];
        _markI[_ring] = mi;
        _markQ[_ring] = mq;
        _spaceI[_ring] = si;
        _spaceQ[_ring] = sq;
        _ring = _ring + 1 == _window ? 0 : _ring + 1;

        double mark = _sumMarkI * _sumMarkI + _sumMarkQ * _sumMarkQ;
        double space = _sumSpaceI * _sumSpaceI + _sumSpaceQ * _sumSpaceQ;
        double total = mark + space;

        // Below 2 % of the usual carrier energy there is no signal to decide on: a dropout, or silence.
        if (total <= 0.02 * _carrierReference || total <= 1e-12)
        {
            return 0;
        }

        _carrierReference += (total - _carrierReference) * (1.0 / (0.25 * _sampleRate));
        if (_carrierReference < total * 0.05)
        {
            _carrierReference = total * 0.05;
        }

        return (float)((mark - space) / total);
    }

    private void TrackPhase(float d, double n)
    {
        if ((d < 0) == (_previousD < 0) || _bitIndex == 0)
        {
            return;
        }

        // A change of tone inside the character marks a bit boundary: its D crossing should fall a whole number of bits after the start's.
        double crossing = n - 1 + _previousD / (_previousD - d);
        double bits = (crossing - _charStart) / BitSamples;
        double error = (bits - Math.Round(bits)) * BitSamples;
        if (Math.Abs(error) < 0.3 * BitSamples)
        {
            _charStart += PhaseLoopGain * error;
            _nextBitTime += PhaseLoopGain * error;
        }
    }

    private void DecideBit(float d, double n)
    {
        bool bit = d >= 0;
        _charBits[_bitIndex] = bit;
        _charDistance[_bitIndex] = Math.Abs(d);
        if (_bitIndex == 0 && bit)
        {
            // Not a start bit after all: a glitch in the mark tone.
            _inChar = false;
            _markRun = 0;
            return;
        }

        _bitIndex++;
        _nextBitTime = _charStart + (_bitIndex + 0.5) * BitSamples;
        if (_bitIndex < _frameBits)
        {
            return;
        }

        _inChar = false;
        _markRun = 0.5 * BitSamples;
        _lastCharEnd = n;
        if (!_inBlock)
        {
            _assembler.Begin(_charStart - 0.5 * _window);
            _inBlock = true;
        }

        int first = _assembler.Decisions.Count;
        int value = 0;
        int ones = 0;
        for (int b = 0; b < _frameBits; b++)
        {
            _assembler.Decisions.Add(_charDistance[b], 1 - _charDistance[b], 1);
        }

        for (int b = 0; b < _framing.DataBits; b++)
        {
            if (_charBits[1 + b])
            {
                ones++;
                int shift = _framing.BitOrder == BitOrder.LsbFirst ? b : _framing.DataBits - 1 - b;
                value |= 1 << shift;
            }
        }

        bool framingOk = _charBits[_frameBits - 1];
        if (_framing.Parity != Parity.None)
        {
            bool even = ((ones + (_charBits[1 + _framing.DataBits] ? 1 : 0)) & 1) == 0;
            framingOk &= _framing.Parity == Parity.Even ? even : !even;
        }

        _assembler.NoteLevel(_level);
        _assembler.NoteSpeed(_speed);
        if (_assembler.AddByte((byte)value, first, framingOk, _charStart))
        {
            _inBlock = false;
        }
    }
}
