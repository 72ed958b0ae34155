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
/// <para>
/// Em and Es are each divided by that tone's own level, learnt from the windows that hold one tone alone, so that a
/// capture with high-frequency loss (the mark tone weaker than the space tone) still has D cross zero half a window
/// after each change of tone, where the bit timing expects it.
/// </para>
/// <para>
/// The playback speed comes from the mark tone: the time between two detector edges is one mark period at nominal
/// speed. An interval counts only when it lies inside a stretch of mark tone: it and the intervals on either side of
/// it look like mark periods, and the correlators, looking at a window centred on it, see mark tone. The periods next
/// to a change of tone are left out, because the detector's filters shift their zero crossings (the two tones have
/// different phase delays), and at 1200 baud, where a mark bit is only two cycles, they would bias the estimate.
/// </para>
/// <para>
/// A character is read only while there is a carrier: when the tone vanishes for half a bit or more (a dropout, a
/// click at the end of the recording, the deck stopping) the character in progress is void and the block ends at its
/// last whole character, as a stream block ends at the loss of signal. A stream that resumes soon after such a loss
/// needs no new lead-in; it makes a new block, so the bytes lost in the gap are never silently closed up inside one
/// block.
/// </para>
/// <para>
/// The start and stop bits have known values. Their logged decision distance is signed toward that value, so a stop
/// bit read as space is a decision on the wrong side of its boundary (error odds one half), not a confident one: a
/// byte whose frame is broken cannot be reported as near-certain.
/// </para>
/// </summary>
public sealed class FskDecoder : ISymbolDecoder
{
    private const double PhaseLoopGain = 0.5;

    /// <summary>The largest energy ratio between the tones that is rebalanced: 16, i.e. 12 dB.</summary>
    private const double MaximumToneImbalance = 16;

    /// <summary>Gain of the speed estimate per accepted mark period (about a hundred periods of memory).</summary>
    private const double SpeedLoopGain = 0.01;

    /// <summary>
    /// Largest step one interval may pull the speed estimate by before the gain: an interval distorted by a nearby
    /// change of tone that slips past <see cref="PureMark"/> moves the estimate no more than a good one (a Huber-type
    /// robust update).
    /// </summary>
    private const double SpeedStepLimit = 0.02;

    /// <summary>D above this: the correlator window holds (almost) only mark tone.</summary>
    private const float PureMark = 0.9f;

    /// <summary>|raw D| above this: the correlator window holds (almost) only one tone, whose level it then shows.</summary>
    private const double PureTone = 0.9;

    /// <summary>
    /// Tone amplitude (full scale 1) below which a window holds no carrier, whatever the recent level: 1e-4, about
    /// −80 dBFS, the same as the detector bank's hysteresis floor against digital silence. A converter's dither or idle noise (±1 LSB of
    /// 16 bits is 3e-5) would otherwise become carrier once the running level has fallen to it, and ten minutes of an
    /// idle input were read as one long block of noise.
    /// </summary>
    private const double SilenceAmplitude = 1e-4;

    /// <summary>How far, in bits, a start bit after a loss of signal may lie off the character grid from before it.</summary>
    private const double GridToleranceBits = 0.3;

    /// <summary>How much the grid's uncertainty grows per bit of gap: a speed error of 0.15 % (wow the tracking missed).</summary>
    private const double GridDriftPerBit = 0.0015;

    /// <summary>Past this uncertainty a whole bit's slip can no longer be told from drift and the grid is not used.</summary>
    private const double MaximumGridToleranceBits = 0.45;

    /// <summary>
    /// The chance that a character framed from a start bit nothing confirmed (taken after a loss of signal with no
    /// grid to hold it, or on a grid that itself began so) sits whole bits off: lower-case text framed a few bits
    /// early reads cleanly, so its decisions cannot show it. Our estimate, checked by the recovery benchmark: large
    /// enough that two captures misframing a stretch alike do not outvote one that kept a confirmed grid, small
    /// enough that a lone such reading is still kept.
    /// </summary>
    private const float UnconfirmedFramingDoubt = 0.05f;

    private readonly FskEncoding _fsk;
    private readonly ByteFraming _framing;
    private readonly BlockAssembler _assembler;
    private readonly double _sampleRate;
    private readonly bool _countsHalfCycles;
    private readonly int _window;
    private readonly float[] _markI, _markQ, _spaceI, _spaceQ;
    private readonly double _markStepCos, _markStepSin, _spaceStepCos, _spaceStepSin;
    private readonly double _leadInSamples;
    private readonly double _silenceEnergy;
    private readonly double _evidenceGain;
    private readonly double _blockEndIdleSamples;
    private readonly int _frameBits;
    private readonly float[] _charD = new float[16];
    private readonly bool[] _charBits = new bool[16];
    private int _ring;
    private double _markCos = 1, _markSin, _spaceCos = 1, _spaceSin;
    private double _sumMarkI, _sumMarkQ, _sumSpaceI, _sumSpaceQ;
    private double _carrierReference;
    private double _markLevel;
    private double _spaceLevel;
    private double _markLevelSamples;
    private double _spaceLevelSamples;
    private readonly double _levelGain;
    private float _previousD;
    private bool _carrier;
    private double _noCarrierRun;
    private bool _resuming;
    private double _lossSample;
    private double _markRun;
    private double _markRunBeforeStart;
    private int _negativeRun;
    private double _markEvidence;
    private bool _inChar;
    private bool _inBlock;
    private double _charStart;
    private int _bitIndex;
    private double _nextBitTime;
    private double _lastCharEnd;
    private double _gridStart = double.NaN;

    // Whether the character grid goes back to a confirmed start bit (after a lead-in or an idle line), and the same
    // for the character being read.
    private bool _gridConfirmed = true;
    private bool _charConfirmed = true;
    private double _speed = 1;
    private double _lastEdge = double.NaN;
    private float _level;
    private readonly double _markPeriodSamples;
    private double _lastLength;
    private bool _lastLooksLikeMark;
    private bool _beforeLastLooksLikeMark;
    private MarkInterval[] _pending = new MarkInterval[64];
    private int _pendingHead;
    private int _pendingCount;

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

        // A tone of amplitude A gives a correlator sum of about A·W/2 over a window of W samples.
        _silenceEnergy = Math.Pow(0.5 * SilenceAmplitude * _window, 2);
        (_markStepSin, _markStepCos) = Math.SinCos(2 * Math.PI * _fsk.MarkHz / sampleRate);
        (_spaceStepSin, _spaceStepCos) = Math.SinCos(2 * Math.PI * _fsk.SpaceHz / sampleRate);
        _leadInSamples = Math.Max(_fsk.LeadInMinimumSeconds * sampleRate, 2.0 * _window);
        _evidenceGain = 2.0 / _leadInSamples;

        // Half a second with no start bit ends a stream block (common practice for serial tape streams).
        _blockEndIdleSamples = Math.Max(0.5 * sampleRate, 30.0 * _window);
        _frameBits = 1 + _framing.DataBits + (_framing.Parity == Parity.None ? 0 : 1) + 1;
        _markPeriodSamples = sampleRate / _fsk.MarkHz * (_countsHalfCycles ? 0.5 : 1);

        // The tone levels follow about two bits' worth of windows that hold one tone alone.
        _levelGain = 1.0 / (2.0 * _window);
    }

    public bool NeedsConditionedSignal => true;

    /// <summary>
    /// Mostly clear mark tone (D above 0.5) over about the lead-in's length: a running mean of ±1, with a time
    /// constant of half the minimum lead-in, above 0.4 (seven windows in ten clearly mark; white noise alone gives
    /// one in four, since D is then uniform on ±1). A fraction rather than an unbroken run, so that the noise of a
    /// poor capture, which breaks any run of mark now and then, does not hide a lead-in.
    /// </summary>
    private bool HeardLeadIn => _markEvidence > 0.4;

    private double BitSamples => _sampleRate / (_fsk.Baud * _speed);

    /// <summary>
    /// Edges only calibrate the speed, from the mark tone. An interval whose neighbours both look like mark periods
    /// too waits until the correlator window is centred on it (see <see cref="CheckMarkIntervals"/>), because only
    /// then can the tone detector vouch for it.
    /// </summary>
    public void OnEdges(ReadOnlySpan<Edge> edges)
    {
        foreach (var edge in edges)
        {
            _level = edge.Level;
            if (!double.IsNaN(_lastEdge))
            {
                double length = edge.Sample - _lastEdge;
                bool looksLikeMark = _markPeriodSamples / length is > 0.85 and < 1.15;
                if (looksLikeMark && _lastLooksLikeMark && _beforeLastLooksLikeMark)
                {
                    if (_pendingCount == _pending.Length)
                    {
                        Array.Resize(ref _pending, _pending.Length * 2);
                    }

                    // The middle interval ends at the previous edge. The causal window [n − W, n] is centred on it
                    // when n = end + (W − length) / 2.
                    _pending[_pendingCount++] = new MarkInterval(_markPeriodSamples / _lastLength, _lastEdge + 0.5 * (_window - _lastLength));
                }

                _beforeLastLooksLikeMark = _lastLooksLikeMark;
                _lastLooksLikeMark = looksLikeMark;
                _lastLength = length;
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
            CheckMarkIntervals(d, n);

            // Half a bit without carrier is a loss of signal; a shorter fade (deep noise can null a one-bit window for
            // a moment) is not.
            _noCarrierRun = _carrier ? 0 : _noCarrierRun + 1;
            if (_noCarrierRun >= 0.5 * BitSamples && (_inChar || _inBlock))
            {
                LoseSignal(n);
            }
            else if (_inChar)
            {
                TrackPhase(d, n);
                if (n >= _nextBitTime)
                {
                    DecideBit(d, n);
                }
            }
            else
            {
                double crossing = d < 0 && _previousD >= 0 ? n - 1 + _previousD / (_previousD - d) : 0;
                if (d < 0 && _previousD >= 0 && _markRun >= 0.25 * BitSamples && (_inBlock || _resuming || HeardLeadIn)
                    && (_inBlock || !_resuming || MayResumeAt(crossing)))
                {
                    // Start bit: D crosses zero half a window after the mark-to-space boundary.
                    if (!_inBlock && !_resuming)
                    {
                        // A new block after a lead-in learns its own tone balance, from this start bit on.
                        _spaceLevel = 0;
                        _spaceLevelSamples = 0;
                    }

                    _inChar = true;
                    _bitIndex = 0;
                    _charConfirmed = StartIsConfirmed(crossing);
                    _markRunBeforeStart = _markRun;
                    _charStart = crossing;
                    _nextBitTime = crossing + 0.5 * BitSamples;
                }

                // The run survives the slope down to zero, so it is still whole when the crossing comes, and it survives
                // dips below zero shorter than a quarter bit: noise makes those in any lead-in heard at low SNR, and a
                // real space lasts a whole bit.
                _negativeRun = d < 0 ? _negativeRun + 1 : 0;
                _markEvidence += ((d > 0.5f ? 1 : -1) - _markEvidence) * _evidenceGain;
                _markRun = d > 0.3f ? _markRun + 1 : _negativeRun > 0.25 * BitSamples ? 0 : _markRun;
                if (_inBlock && n - _lastCharEnd > _blockEndIdleSamples)
                {
                    _assembler.End(_lastCharEnd);
                    _inBlock = false;
                }

                if (_resuming && n - _lossSample > _blockEndIdleSamples)
                {
                    _resuming = false;
                }
            }

            _previousD = d;
        }

        // Intervals still waiting for their window move to the front for the next chunk.
        if (_pendingHead > 0)
        {
            Array.Copy(_pending, _pendingHead, _pending, 0, _pendingCount - _pendingHead);
            _pendingCount -= _pendingHead;
            _pendingHead = 0;
        }

        // Rounding makes a rotated phasor drift off the unit circle: pull it back once a chunk.
        double markNorm = 1 / Math.Sqrt(_markCos * _markCos + _markSin * _markSin);
        double spaceNorm = 1 / Math.Sqrt(_spaceCos * _spaceCos + _spaceSin * _spaceSin);
        _markCos *= markNorm;
        _markSin *= markNorm;
        _spaceCos *= spaceNorm;
        _spaceSin *= spaceNorm;
    }

    /// <summary>
    /// Whether a fall to space after a loss of signal may be taken for a start bit. The stream resumes with no lead-in,
    /// so any fall from a data bit 1 to a 0 looks like one; and some falls frame as well as the true ones (in lower-case
    /// text, bits 5 and 6 are mark and bit 7 space, so a frame three bits early has its stop bits on mark too, and
    /// stays there). Characters follow back to back, so while the character grid from before the loss is still sure
    /// (the speed known to a fraction of a per cent over the gap), only a fall on that grid is a start bit. A fall
    /// after a whole character of mark (the line idle) starts a character wherever it lies, and once the grid has
    /// drifted past knowing, any fall does, as after a lead-in.
    /// </summary>
    private bool MayResumeAt(double crossing)
    {
        if (double.IsNaN(_gridStart) || _markRun >= _framing.BitsPerByte * BitSamples)
        {
            return true;
        }

        double elapsedBits = (crossing - _gridStart) / BitSamples;
        double tolerance = GridToleranceAt(crossing);
        if (tolerance > MaximumGridToleranceBits)
        {
            return true;
        }

        double characters = elapsedBits / _framing.BitsPerByte;
        double offBits = Math.Abs(characters - Math.Round(characters)) * _framing.BitsPerByte;
        return offBits <= tolerance;
    }

    /// <summary>
    /// Whether a start bit at <paramref name="crossing"/> is confirmed: the first after a lead-in or after an idle line
    /// is; inside a block, or resumed on the grid kept over a loss of signal, it is as sure as that grid; resumed with
    /// no grid to hold it, it is not.
    /// </summary>
    private bool StartIsConfirmed(double crossing)
    {
        if ((!_inBlock && !_resuming) || _markRun >= _framing.BitsPerByte * BitSamples)
        {
            return true;
        }

        if (_inBlock)
        {
            return _gridConfirmed;
        }

        bool gridHeld = !double.IsNaN(_gridStart) && GridToleranceAt(crossing) <= MaximumGridToleranceBits;
        return gridHeld && _gridConfirmed;
    }

    /// <summary>How far, in bits, a start bit at <paramref name="crossing"/> may lie off the grid kept since the last good character.</summary>
    private double GridToleranceAt(double crossing) => GridToleranceBits + (GridDriftPerBit * (crossing - _gridStart) / BitSamples);

    /// <summary>No carrier: the character in progress is void, and a block in progress ends at its last whole character.</summary>
    private void LoseSignal(double n)
    {
        _inChar = false;
        _markRun = 0;
        if (_inBlock)
        {
            _assembler.End(_lastCharEnd);
            _inBlock = false;
            _resuming = true;
            _lossSample = n;
        }
    }

    public void Finish(double endSample)
    {
        if (_inBlock)
        {
            _assembler.End(_lastCharEnd);
            _inBlock = false;
        }
    }

    /// <summary>Feeds the speed estimate with the edge intervals whose centred window the correlators call pure mark.</summary>
    private void CheckMarkIntervals(float d, double n)
    {
        while (_pendingHead < _pendingCount && _pending[_pendingHead].CheckAt <= n)
        {
            if (d > PureMark)
            {
                _speed += SpeedLoopGain * Math.Clamp(_pending[_pendingHead].Ratio - _speed, -SpeedStepLimit, SpeedStepLimit);
            }

            _pendingHead++;
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
        _carrier = total > 0.02 * _carrierReference && total > _silenceEnergy;
        if (!_carrier)
        {
            return 0;
        }

        _carrierReference += (total - _carrierReference) * (1.0 / (0.25 * _sampleRate));
        if (_carrierReference < total * 0.05)
        {
            _carrierReference = total * 0.05;
        }

        // Each tone is measured against its own level, learnt where the window holds that tone alone (there the
        // raw D is near ±1, whatever the balance). High-frequency loss (azimuth, worn heads, a deck's low-pass)
        // makes the mark tone weaker than the space tone; unweighted, D would then cross zero early at every fall to
        // space and late at every rise to mark, and the bit timing, which hangs on those crossings, would slip.
        // Only windows of the recording teach a level: mark from a lead-in or inside a block, space from the bits of
        // a character being read (noise before a lead-in can look like either tone). A level starts as the plain
        // mean of what has been seen (the first windows that pass the test are the least pure ones, at the edge of
        // a lone bit) and becomes a running average once it has enough behind it.
        double raw = (mark - space) / total;
        if (raw > PureTone && (_inChar || _inBlock || HeardLeadIn))
        {
            _markLevelSamples++;
            _markLevel += (mark - _markLevel) * Math.Max(_levelGain, 1.0 / _markLevelSamples);
        }
        else if (raw < -PureTone && _inChar)
        {
            _spaceLevelSamples++;
            _spaceLevel += (space - _spaceLevel) * Math.Max(_levelGain, 1.0 / _spaceLevelSamples);
        }

        if (_markLevel <= 0 || _spaceLevel <= 0)
        {
            // Until both tones have been heard alone, assume they are balanced.
            return (float)raw;
        }

        // Rebalancing is bounded: past 12 dB between the tones (more than any deck's high-frequency loss, common
        // practice) the weaker tone is mostly gone, and lifting it further would lift noise into confident decisions.
        double balance = Math.Clamp(_markLevel / _spaceLevel, 1.0 / MaximumToneImbalance, MaximumToneImbalance);
        double m = mark / balance;
        double s = space;
        return (float)((m - s) / (m + s));
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
        _charD[_bitIndex] = d;
        if (_bitIndex == 0 && bit)
        {
            // Not a start bit after all: a glitch in the mark tone. Noise dips like this are common in a noisy lead-in,
            // so the run of mark seen before it stands, as if the dip had not happened.
            _inChar = false;
            _markRun = _markRunBeforeStart + (n - _charStart);
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
            // Data and parity bits may be either value: the distance is |D|. The start bit must be space and the
            // stop bit mark: the distance is signed toward that value and a wrong one lands on 0 (odds one half).
            float distance = b == 0 ? -_charD[b] : b == _frameBits - 1 ? _charD[b] : Math.Abs(_charD[b]);
            _assembler.Decisions.Add(distance, 1 - distance, 1);
        }

        for (int b = 0; b < _framing.DataBits; b++)
        {
            if (_charBits[1 + b])
            {
                ones++;
                value |= 1 << _framing.DataBitShift(b);
            }
        }

        // A stop bit needs mark tone: D = 0 (no carrier at all) is not a mark.
        bool framingOk = _charD[_frameBits - 1] > 0;
        if (_framing.Parity != Parity.None)
        {
            framingOk &= _framing.ParityHolds(ones + (_charBits[1 + _framing.DataBits] ? 1 : 0));
        }

        if (framingOk)
        {
            _gridStart = _charStart;
        }

        // The next character starts where this one ended: it is no surer than this one, whose framing failed or not.
        _gridConfirmed = framingOk ? _charConfirmed : _gridConfirmed && _charConfirmed;

        _assembler.NoteLevel(_level);
        _assembler.NoteSpeed(_speed);
        if (_assembler.AddByte((byte)value, first, framingOk, _charStart, _charConfirmed ? 0 : UnconfirmedFramingDoubt))
        {
            _inBlock = false;
        }
    }

    /// <summary>An edge interval that looked like a mark period: its speed ratio, and when its window is centred on it.</summary>
    private readonly record struct MarkInterval(double Ratio, double CheckAt);
}
