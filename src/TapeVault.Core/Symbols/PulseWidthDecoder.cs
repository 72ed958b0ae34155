using TapeVault.Core.Blocks;
using TapeVault.Core.Bytes;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;

namespace TapeVault.Core.Symbols;

/// <summary>
/// Pulse-width formats: a pulse is a whole cycle between two counted edges (or two half cycles when a setting counts
/// both edges), or, for a format measured in half cycles, the time between two successive edges. A lead-in of one
/// class is found by its regularity, whatever the speed within ±12 %, and calibrates the speed before any pulse is
/// classified. A block then begins where the profile says: at its class sync, at its sync field's bits searched
/// bit by bit (a sync byte may begin with the lead-in's own bits), or at its first byte marker. Each bit is a short
/// sequence of classes; markers before and after each byte and at the end of a block are sequences too. Where the
/// profile has a block gap, a run as short as the gap, followed by the sync, starts a block without a lead-in; and
/// the gap and the sync read whole inside a block's data begin a block there, read alongside the first, which reads on
/// by its own length field: a length misread (or bits lost to a dropout the block was carried over) must not carry a
/// block on over the gaps and syncs of the blocks after it, and a payload may hold the gap's zeros and the sync byte
/// (zero-filled memory does). Each reading's check chooses (<see cref="IBlockSink.BeginInside"/>). Where the sink
/// reads one block at a time, the first block ends where the gap begins.
/// </summary>
public sealed class PulseWidthDecoder : ISymbolDecoder
{
    private const int InvalidPulsesToLoseBlock = 4;

    // How far (a fraction of its nominal) a pulse must read off before the edge it shares with the next one counts as
    // moved. Band-limited playback (a high-pass after a long pulse, for one) moves the crossing between two pulses:
    // one reads short by what the other reads long, and only their sum keeps its length. Our choice, above the
    // jitter of a healthy capture, checked by the recovery benchmark: pulse-width on tuning seeds 9001–9010 read 82
    // then 93 of 171 blocks, held-out seeds 40000–40007 unchanged (docs/performance.md, "A moved edge after a long
    // pulse").
    private const double ShiftedEdgeFraction = 0.1;

    // The bits (and the pulses that made them) kept while a sync field's bits are searched: more than the longest
    // sync field's framed bits (16 bytes of at most 17 bits).
    private const int RingBits = 512;
    private const int RingPulses = 2048;

    private readonly PulseWidthEncoding _encoding;
    private readonly PulseClassifier _classifier;
    private readonly double _sampleRate;
    private readonly bool _pairHalves;
    private readonly bool _inert;

    // An interval between edges (at nominal speed) shorter than this is a glitch carried into the next, longer than
    // that a gap with no edges at all: the shortest accepted pulse, and twice the longest (halved where halves are paired).
    private readonly double _shortestInterval;
    private readonly double _longestInterval;

    // The blocks being read: one, and where gaps and syncs are searched inside a block's data and the sink can read a
    // second block alongside, two. A lane is reading while its sink is in a block.
    private readonly Lane[] _lanes;
    private readonly int _leadInClass;
    private readonly int[] _sync;
    private readonly int[] _zero;
    private readonly int[] _one;
    private readonly int[] _before;
    private readonly int[] _after;
    private readonly int[] _end;
    private readonly int[] _pattern = new int[64];
    private readonly bool _searchesSyncBits;
    private readonly bool _hasSyncField;
    private readonly bool[][] _syncBits;

    // Where blocks follow each other after a short gap: the gap's run of lead-in bits and then each sync's bits, which
    // read whole inside a block's data mark the next block's start (empty where the format has no such gap).
    private readonly bool[][] _gapSyncBits;
    private readonly int _longestSyncBits;
    private readonly int _leadBit;
    private readonly PulseDecision[] _ringPulse = new PulseDecision[RingPulses];
    private readonly bool[] _ringBit = new bool[RingBits];
    private readonly long[] _ringBitFirstPulse = new long[RingBits];
    private readonly double[] _ringBitEnd = new double[RingBits];
    private SpeedTracker _speed = new();
    private Mode _mode = Mode.Hunting;
    private Phase _phase;
    private LeadInFinder _leadIn;
    private int _runCount;
    private int _syncIndex;
    private int _patternLength;
    private long _patternFirstDecision;
    private long _byteFirstDecision;

    // Decisions taken while reading blocks: every reading lane holds each, at its index less the lane's base.
    private long _decisions;
    private long _begins;
    private int _recentInvalid;
    private long _pulsesSeen;
    private long _bitsSeen;
    private int _searchBits;

    // Bits of the block being read, in a row, that were read (not guessed) and recorded in the ring.
    private int _readBitsInRow;
    private double _lastEdge = double.NaN;
    private double _glitchCarry;
    private double _pendingHalf = double.NaN;

    // The pulse before this one, as measured and as classified (-1: none worth pairing with).
    private double _previousSeconds;
    private int _previousClass = -1;
    private int _dataPulses;

    public PulseWidthDecoder(FormatProfile profile, bool countsBothEdges, double sampleRate, IBlockSink blocks)
    {
        ArgumentNullException.ThrowIfNull(profile);
        _encoding = profile.PulseWidth ?? throw new ArgumentException("The profile is not a pulse-width profile.", nameof(profile));
        var classes = _encoding.Classes;
        var nominal = new double[classes.Count];
        for (int i = 0; i < nominal.Length; i++)
        {
            nominal[i] = classes[i].Seconds;
        }

        _classifier = new PulseClassifier(nominal);
        _sampleRate = sampleRate;

        // Whole-cycle classes from a setting that counts both edges: pair the halves. Half-cycle classes need both
        // edges; a setting that counts one direction sees only sums of two pulses and reads nothing.
        _pairHalves = countsBothEdges && !_encoding.HalfCycles;
        _inert = _encoding.HalfCycles && !countsBothEdges;
        double unit = _pairHalves ? 0.5 : 1.0;
        _shortestInterval = _classifier.ShortestAcceptedSeconds * unit;
        _longestInterval = _classifier.LongestAcceptedSeconds * unit * 2;
        ArgumentNullException.ThrowIfNull(blocks);
        _leadInClass = IndexOf(_encoding.LeadInClass);
        _leadIn = LeadInFinder.ForClass(_classifier, _leadInClass, _encoding.ShortestRun);
        _sync = Indices(_encoding.Sync);
        _zero = Indices(_encoding.Zero);
        _one = Indices(_encoding.One);
        _before = Indices(_encoding.BeforeByte);
        _after = Indices(_encoding.AfterByte);
        _end = Indices(_encoding.EndOfBlock);

        // With neither a class sync nor a marker before each byte, the sync field's framed bits are searched.
        var codec = BlockLayoutCodec.For(profile.Layout);
        _hasSyncField = codec.SyncField is not null;
        _searchesSyncBits = _sync.Length == 0 && _before.Length == 0 && codec.SyncField is not null;
        _syncBits = [];
        if (_searchesSyncBits)
        {
            var expected = codec.SyncField!.Expected;
            _syncBits = new bool[expected.Count][];
            int frame = profile.Framing.BitsPerByte;
            for (int c = 0; c < expected.Count; c++)
            {
                var bits = new bool[expected[c].Length * frame];
                for (int b = 0; b < expected[c].Length; b++)
                {
                    BitPatterns.Frame(profile.Framing, expected[c][b], bits.AsSpan(b * frame, frame));
                }

                _syncBits[c] = bits;
                _longestSyncBits = Math.Max(_longestSyncBits, bits.Length);
            }
        }

        // The bit a lead-in pulse stands for, where a bit is that one pulse (-1 where it is not a bit).
        _leadBit = _zero is [var z] && z == _leadInClass ? 0 : _one is [var o] && o == _leadInClass ? 1 : -1;

        // A gap of lead-in bits and the sync between blocks, searched inside a block's data too, where every pulse of the
        // data is a bit (no markers around bytes or at the block's end that the search would have to step over).
        _gapSyncBits = [];
        if (_searchesSyncBits && _leadBit >= 0 && _encoding.BlockGap > 0 && _after.Length == 0 && _end.Length == 0)
        {
            _gapSyncBits = new bool[_syncBits.Length][];
            for (int c = 0; c < _syncBits.Length; c++)
            {
                var bits = new bool[_encoding.BlockGap + _syncBits[c].Length];
                bits.AsSpan(0, _encoding.BlockGap).Fill(_leadBit == 1);
                _syncBits[c].CopyTo(bits, _encoding.BlockGap);
                _gapSyncBits[c] = bits;
            }
        }

        var alongside = _gapSyncBits.Length > 0 ? blocks.Alongside : null;
        _lanes = alongside is null
            ? [new Lane(blocks, new SyncByteFramer(profile.Framing, blocks))]
            : [new Lane(blocks, new SyncByteFramer(profile.Framing, blocks)), new Lane(alongside, new SyncByteFramer(profile.Framing, alongside))];
    }

    private enum Mode
    {
        Hunting,
        LeadIn,
        Sync,
        SyncSearch,
        Data,
    }

    // Where a block's data stands: at a byte boundary (a marker, the end of the block, or a byte's first bit may
    // come), inside a byte's bits, or at the marker after a byte.
    private enum Phase
    {
        Boundary,
        Bits,
        After,
    }

    public void OnEdges(ReadOnlySpan<Edge> edges)
    {
        if (_inert)
        {
            return;
        }

        foreach (var edge in edges)
        {
            if (double.IsNaN(_lastEdge))
            {
                _lastEdge = edge.Sample;
                continue;
            }

            double seconds = (edge.Sample - _lastEdge) / _sampleRate + _glitchCarry;
            _lastEdge = edge.Sample;
            double scaled = seconds * _speed.Speed;

            // Noise between samples can split a cycle: carry a glitch into the next interval instead of deciding on it.
            if (scaled < _shortestInterval)
            {
                _glitchCarry = seconds;
                continue;
            }

            _glitchCarry = 0;
            if (scaled > _longestInterval)
            {
                // A gap with no edges at all: a dropout or the end of a recording.
                LoseSignal(edge.Sample - seconds * _sampleRate);
                _pendingHalf = double.NaN;
                continue;
            }

            if (_pairHalves)
            {
                if (double.IsNaN(_pendingHalf))
                {
                    _pendingHalf = seconds;
                    continue;
                }

                int first = _classifier.ClassOf(2 * _pendingHalf, _speed.Speed);
                int second = _classifier.ClassOf(2 * seconds, _speed.Speed);
                if (first != second || first < 0)
                {
                    // Out of phase with the cycles (or a glitch): start the pairing again from this half. Inside a
                    // block the half left behind was signal: whatever the next pairs make of the cycles around it, a
                    // bit may have changed there, so the block carries a guess that its margins would not show.
                    if (_mode == Mode.Data)
                    {
                        AddGuessedDecision();
                        _readBitsInRow = 0;
                    }

                    _pendingHalf = seconds;
                    continue;
                }

                seconds += _pendingHalf;
                _pendingHalf = double.NaN;
            }

            OnPulse(seconds, edge.Sample, edge.Level);
        }
    }

    public void Finish(double endSample) => LoseSignal(endSample);

    private void LoseSignal(double sample)
    {
        _previousClass = -1;
        if (_mode == Mode.Data)
        {
            foreach (var lane in _lanes)
            {
                lane.Blocks.End(sample);
            }
        }

        _mode = Mode.Hunting;
        _leadIn.Reset();
    }

    private void OnPulse(double seconds, double endSample, float level)
    {
        switch (_mode)
        {
            case Mode.Hunting:
            case Mode.LeadIn:
                // The lead-in is judged by its regularity alone; its mean gives the speed, and only then are pulses
                // classified, so a tape off speed loses no lead-in pulse to a classification window.
                if (_leadIn.Add(seconds) && _leadIn.Found)
                {
                    _speed.Calibrate(_leadIn.Speed);
                    Remember(seconds, _leadInClass);
                    if (_mode == Mode.Hunting)
                    {
                        _pulsesSeen = 0;
                        _bitsSeen = 0;
                    }

                    _mode = Mode.LeadIn;
                    _runCount = _leadIn.Count;
                    if (_searchesSyncBits && _leadBit >= 0)
                    {
                        // Lead-in pulses are bits too: a sync byte may begin with them.
                        RecordPulse(_classifier.Classify(seconds, _speed.Speed));
                        RecordBit(_leadBit == 1, _pulsesSeen - 1);
                    }
                }
                else if (_mode == Mode.LeadIn)
                {
                    LeaveRun(seconds, endSample, level);
                }

                break;
            case Mode.Sync:
                OnSyncPulse(seconds, endSample);
                break;
            case Mode.SyncSearch:
                OnSearchPulse(seconds, endSample);
                break;
            case Mode.Data:
                DataPulse(seconds, endSample, level);
                break;
        }
    }

    // The evidence of a block start found after the run that just ended: a lead-in, or a run only as long as a gap.
    private BlockStartEvidence RunEvidence(bool synced) =>
        _runCount >= _encoding.LeadInMinimum
            ? (synced ? BlockStartEvidence.LeadInAndSync : BlockStartEvidence.LeadIn)
            : BlockStartEvidence.Sync;

    private void LeaveRun(double seconds, double endSample, float level)
    {
        if (_sync.Length > 0)
        {
            _syncIndex = 0;
            _mode = Mode.Sync;
            OnSyncPulse(seconds, endSample);
        }
        else if (_searchesSyncBits)
        {
            _mode = Mode.SyncSearch;
            _searchBits = 0;
            _patternLength = 0;
            OnSearchPulse(seconds, endSample);
        }
        else if (_runCount >= _encoding.LeadInMinimum)
        {
            // The first byte's marker follows the lead-in; a sync field after it is checked when the block is whole.
            StartData(endSample, BlockLeadInEvidence());
            DataPulse(seconds, endSample, level);
        }
        else
        {
            _mode = Mode.Hunting;
            _leadIn.Reset();
        }
    }

    private BlockStartEvidence BlockLeadInEvidence() => _hasSyncField ? BlockStartEvidence.LeadInAndSync : BlockStartEvidence.LeadIn;

    private void OnSyncPulse(double seconds, double endSample)
    {
        int pulseClass = _classifier.ClassOf(seconds, _speed.Speed);
        Remember(seconds, pulseClass);
        if (pulseClass != _sync[_syncIndex])
        {
            // Not the sync: a lead-in must be found again, as long as the format demands, before the next sync.
            _mode = Mode.Hunting;
            _leadIn.Reset();
            return;
        }

        _syncIndex++;
        if (_syncIndex == _sync.Length)
        {
            StartData(endSample, RunEvidence(synced: true));
        }
    }

    private void StartData(double endSample, BlockStartEvidence evidence)
    {
        _mode = Mode.Data;
        _phase = Phase.Boundary;
        _patternLength = 0;
        _recentInvalid = 0;
        _leadIn.Reset();
        _dataPulses = 0;
        _readBitsInRow = 0;
        var lane = _lanes[0];
        lane.Framer.Reset();
        lane.Blocks.Begin(endSample, evidence);
        Started(lane);
    }

    // A lane's block has begun (and taken any decisions handed to it alone): the decisions taken from now on are its too.
    private void Started(Lane lane)
    {
        lane.Base = _decisions - lane.Blocks.DecisionCount;
        lane.Begun = ++_begins;
    }

    private void AddGuessedDecision()
    {
        _decisions++;
        foreach (var lane in _lanes)
        {
            if (lane.Blocks.InBlock)
            {
                lane.Blocks.AddGuessedDecision();
            }
        }
    }

    private void NoteFramingError()
    {
        foreach (var lane in _lanes)
        {
            if (lane.Blocks.InBlock)
            {
                lane.Framer.NoteFramingError();
            }
        }
    }

    private void EndAtMarker(double endSample, bool asWritten = true)
    {
        foreach (var lane in _lanes)
        {
            lane.Blocks.EndAtMarker(endSample, asWritten);
        }
    }

    // The framer of the block begun first among those being read: the one whose bytes the markers around bytes frame
    // (where a second block is read alongside, the format has no such markers and every pulse is a bit).
    private SyncByteFramer Framer
    {
        get
        {
            Lane? first = null;
            foreach (var lane in _lanes)
            {
                if (lane.Blocks.InBlock && (first is null || lane.Begun < first.Begun))
                {
                    first = lane;
                }
            }

            return (first ?? _lanes[0]).Framer;
        }
    }

    private void RecordPulse(PulseDecision decision)
    {
        _ringPulse[_pulsesSeen % RingPulses] = decision;
        _pulsesSeen++;
    }

    private void RecordBit(bool bit, long firstPulse, double endSample = double.NaN)
    {
        _ringBit[_bitsSeen % RingBits] = bit;
        _ringBitFirstPulse[_bitsSeen % RingBits] = firstPulse;
        _ringBitEnd[_bitsSeen % RingBits] = endSample;
        _bitsSeen++;
    }

    // A sync field's bits are searched one bit at a time after the run: they may begin with the run's own bits, so
    // the decoder cannot wait for the first pulse of another class.
    private void OnSearchPulse(double seconds, double endSample)
    {
        var decision = _classifier.Classify(seconds, _speed.Speed);
        Remember(seconds, decision.Class);
        if (!decision.IsValid)
        {
            _mode = Mode.Hunting;
            _leadIn.Reset();
            return;
        }

        RecordPulse(decision);
        _pattern[_patternLength++] = decision.Class;
        bool bit;
        if (Matches(_zero))
        {
            bit = false;
        }
        else if (Matches(_one))
        {
            bit = true;
        }
        else if (IsPrefixOf(_zero) || IsPrefixOf(_one))
        {
            return;
        }
        else
        {
            _mode = Mode.Hunting;
            _leadIn.Reset();
            return;
        }

        RecordBit(bit, _pulsesSeen - _patternLength);
        _patternLength = 0;
        for (int c = 0; c < _syncBits.Length; c++)
        {
            if (EndsWith(_syncBits[c]))
            {
                BeginAtSyncBits(_syncBits[c], endSample);
                return;
            }
        }

        if (++_searchBits > _longestSyncBits + 8)
        {
            _mode = Mode.Hunting;
            _leadIn.Reset();
        }
    }

    private bool EndsWith(bool[] bits)
    {
        if (_bitsSeen < bits.Length || bits.Length > RingBits)
        {
            return false;
        }

        long first = _bitsSeen - bits.Length;
        if (_pulsesSeen - _ringBitFirstPulse[first % RingBits] > RingPulses)
        {
            return false;
        }

        for (int i = 0; i < bits.Length; i++)
        {
            if (_ringBit[(first + i) % RingBits] != bits[i])
            {
                return false;
            }
        }

        return true;
    }

    // The sync field's bits were found: the block begins with them, each bit with the decisions of its own pulses.
    private void BeginAtSyncBits(bool[] bits, double endSample)
    {
        StartData(endSample, RunEvidence(synced: true));
        HandSyncBits(_lanes[0], bits, endSample);
        _phase = _lanes[0].Framer.AtByteStart ? Phase.Boundary : Phase.Bits;
        _patternLength = 0;
    }

    // The sync's bits, the last read, to the lane whose block begins with them, each bit with its own pulses' decisions
    // (a block read alongside took them already as its data's).
    private void HandSyncBits(Lane lane, bool[] bits, double endSample)
    {
        long first = _bitsSeen - bits.Length;
        for (int i = 0; i < bits.Length; i++)
        {
            long bit = first + i;
            long pulseStart = _ringBitFirstPulse[bit % RingBits];
            long pulseEnd = bit + 1 < _bitsSeen ? _ringBitFirstPulse[(bit + 1) % RingBits] : _pulsesSeen;
            int decisionIndex = lane.Blocks.DecisionCount;
            for (long p = pulseStart; p < pulseEnd; p++)
            {
                var d = _ringPulse[p % RingPulses];
                lane.Blocks.AddDecision(d.Distance, d.Residual, d.Scale);
            }

            lane.Framer.AddBit(bits[i], decisionIndex, endSample);
        }

        Started(lane);
    }

    private void Remember(double seconds, int pulseClass)
    {
        _previousSeconds = seconds;
        _previousClass = pulseClass;
    }

    /// <summary>A pulse of a block's data: classified (data pulses alone need the distances, a logarithm each), its shared edge checked, decided.</summary>
    private void DataPulse(double seconds, double endSample, float level)
    {
        var decision = _classifier.Classify(seconds, _speed.Speed);

        // Only the block's first pulse, after the sync's (or the lead-in's) last: that edge follows the longest or the
        // most regular stretch, which a band-limited chain moves most; inside the data the pulses keep to their classes.
        bool shifted = _dataPulses++ == 0 && ShiftedEdge(ref decision, seconds);

        // A pulse whose first edge moved is remembered as it would have read without the move, so that the edge it
        // shares with the next pulse is judged on its own.
        if (shifted)
        {
            double moved = _previousClass >= 0 ? (_previousSeconds * _speed.Speed) - _classifier.NominalSeconds(_previousClass) : 0;
            Remember(seconds + (moved / _speed.Speed), decision.Class);
        }
        else
        {
            Remember(seconds, decision.Class);
        }

        OnDataPulse(decision, seconds, endSample, level, trackSpeed: !shifted);
    }

    /// <summary>
    /// Where the pulse before this one read well off its class (by <see cref="ShiftedEdgeFraction"/> or more) and this
    /// one reads off the other way by about as much, the edge between them moved, and the sum of the two is the
    /// measurement left: when the sum is nearer the previous class plus another class than plus the one this pulse
    /// classified as, this pulse is that other class, decided on the sum (its margin is the sum's distance from the
    /// boundary between the two pairs' sums). Returns whether it changed the decision.
    /// </summary>
    private bool ShiftedEdge(ref PulseDecision decision, double seconds)
    {
        if (!decision.IsValid || _previousClass < 0)
        {
            return false;
        }

        double speed = _speed.Speed;
        double previousNominal = _classifier.NominalSeconds(_previousClass);
        double previousError = (_previousSeconds * speed) - previousNominal;
        if (Math.Abs(previousError) < ShiftedEdgeFraction * previousNominal)
        {
            return false;
        }

        double sum = (_previousSeconds + seconds) * speed;
        double asRead = previousNominal + _classifier.NominalSeconds(decision.Class);
        int best = -1;
        double bestSum = 0;
        for (int c = 0; c < _encoding.Classes.Count; c++)
        {
            double pair = previousNominal + _classifier.NominalSeconds(c);
            double error = (seconds * speed) - _classifier.NominalSeconds(c);

            // The other way by about as much: the same edge moved, by between half and twice the previous pulse's error.
            bool mirrors = Math.Sign(error) == -Math.Sign(previousError) && Math.Abs(error) >= 0.5 * Math.Abs(previousError) && Math.Abs(error) <= 2 * Math.Abs(previousError);
            if (c != decision.Class && mirrors && Math.Abs(Math.Log(sum / pair)) < Math.Abs(Math.Log(sum / asRead)) &&
                (best < 0 || Math.Abs(Math.Log(sum / pair)) < Math.Abs(Math.Log(sum / bestSum))))
            {
                best = c;
                bestSum = pair;
            }
        }

        if (best < 0)
        {
            return false;
        }

        // Decided on the sum, in the classifier's units: the boundary between the two pairs' sums lies at their geometric mean.
        double boundary = 0.5 * (Math.Log(bestSum) + Math.Log(asRead));
        double distance = Math.Abs(Math.Log(sum) - boundary);
        double scale = Math.Abs(Math.Log(bestSum) - boundary);
        decision = new PulseDecision(best, (float)distance, (float)(Math.Log(sum) - Math.Log(bestSum)), (float)scale);
        return true;
    }

    /// <summary>
    /// A data pulse decided: each lane reading a block is handed the pulse in one visit (its level, then its decision,
    /// read or guessed, then the speed it was read at), the order in which every sink sees a pulse.
    /// </summary>
    private void OnDataPulse(PulseDecision decision, double seconds, double endSample, float level, bool trackSpeed)
    {
        if (_patternLength == 0)
        {
            _patternFirstDecision = _decisions;
        }

        _decisions++;
        var lanes = _lanes;
        if (!decision.IsValid)
        {
            for (int i = 0; i < lanes.Length; i++)
            {
                var sink = lanes[i].Blocks;
                if (sink.InBlock)
                {
                    sink.NoteLevel(level);
                    sink.AddGuessedDecision();
                }
            }

            if (++_recentInvalid >= InvalidPulsesToLoseBlock)
            {
                LoseSignal(endSample);
                return;
            }

            OnGuess(decision, endSample);
            return;
        }

        _recentInvalid = Math.Max(0, _recentInvalid - 1);
        if (_gapSyncBits.Length > 0)
        {
            RecordPulse(decision);
        }

        if (trackSpeed && decision.Distance > 0.5 * decision.Scale)
        {
            _speed.Track(seconds, _classifier.NominalSeconds(decision.Class));
        }

        double speed = _speed.Speed;
        for (int i = 0; i < lanes.Length; i++)
        {
            var sink = lanes[i].Blocks;
            if (sink.InBlock)
            {
                sink.NoteLevel(level);
                sink.AddDecision(decision.Distance, decision.Residual, decision.Scale);
                sink.NoteSpeed(speed);
            }
        }

        _pattern[_patternLength++] = decision.Class;
        switch (_phase)
        {
            case Phase.Boundary:
                OnBoundaryPattern(decision, seconds, endSample);
                break;
            case Phase.After:
                if (Matches(_after))
                {
                    _patternLength = 0;
                    _phase = Phase.Boundary;
                }
                else if (!IsPrefixOf(_after))
                {
                    // Not the marker the format writes after a byte: a framing error on the next byte, read on.
                    NoteFramingError();
                    _patternLength = 0;
                    _phase = Phase.Boundary;
                }

                break;
            default:
                OnBitPattern(decision, endSample);
                break;
        }
    }

    private void OnBoundaryPattern(PulseDecision decision, double seconds, double endSample)
    {
        if (_end.Length > 0 && Matches(_end))
        {
            // The block's end, as the format marks it.
            EndAtMarker(endSample);
            _mode = Mode.Hunting;
            _leadIn.Reset();
            return;
        }

        if (_before.Length > 0)
        {
            if (_patternLength == 1 && decision.Class == _leadInClass && _before[0] != _leadInClass && (_end.Length == 0 || _end[0] != _leadInClass))
            {
                // A lead-in pulse where a marker should be: the block ended without its end marker (or was cut), and
                // the next lead-in begins here. Where the format writes an end marker, its absence is a framing error.
                EndAtMarker(endSample, asWritten: _end.Length == 0);
                _mode = Mode.Hunting;
                _leadIn.Reset();
                _leadIn.Add(seconds);
                return;
            }

            if (Matches(_before))
            {
                _byteFirstDecision = _patternFirstDecision;
                _patternLength = 0;
                _phase = Phase.Bits;
            }
            else if (!IsPrefixOf(_before) && !(_end.Length > 0 && IsPrefixOf(_end)))
            {
                // No marker begins like this: take it for the marker, a guess with no margin and a framing error.
                AddGuessedDecision();
                NoteFramingError();
                _byteFirstDecision = _patternFirstDecision;
                _patternLength = 0;
                _phase = Phase.Bits;
            }

            return;
        }

        // No marker before bytes: the byte's first bit begins here, unless the pulses are the end's.
        if (_end.Length > 0 && IsPrefixOf(_end) && !IsPrefixOf(_zero) && !IsPrefixOf(_one))
        {
            return;
        }

        _byteFirstDecision = _patternFirstDecision;
        _phase = Phase.Bits;
        OnBitPattern(decision, endSample);
    }

    private void OnBitPattern(PulseDecision decision, double endSample)
    {
        if (Matches(_zero))
        {
            CompleteBit(false, endSample, read: true);
        }
        else if (Matches(_one))
        {
            CompleteBit(true, endSample, read: true);
        }
        else if (!IsPrefixOf(_zero) && !IsPrefixOf(_one))
        {
            // No bit begins like this: the decision nearest a bit is a guess with no margin.
            AddGuessedDecision();
            CompleteBit(GuessBit(decision), endSample, read: false);
        }
    }

    // An invalid pulse stands for whatever the current symbol needs: a bit is guessed, a marker taken as read.
    private void OnGuess(PulseDecision decision, double endSample)
    {
        switch (_phase)
        {
            case Phase.Boundary when _before.Length > 0:
                NoteFramingError();
                _byteFirstDecision = _patternFirstDecision;
                _patternLength = 0;
                _phase = Phase.Bits;
                break;
            case Phase.After:
                NoteFramingError();
                _patternLength = 0;
                _phase = Phase.Boundary;
                break;
            default:
                if (_phase == Phase.Boundary)
                {
                    _byteFirstDecision = _patternFirstDecision;
                    _phase = Phase.Bits;
                }

                CompleteBit(GuessBit(decision), endSample, read: false);
                break;
        }
    }

    private bool GuessBit(PulseDecision decision)
    {
        if (!decision.IsValid)
        {
            return false;
        }

        // The pulse resembles whichever bit's first class is nearer in duration.
        return Math.Abs(decision.Class - _one[0]) < Math.Abs(decision.Class - _zero[0]);
    }

    private void CompleteBit(bool bit, double endSample, bool read)
    {
        // A byte's decisions begin with the marker before it; without such markers, with its first bit.
        long byteFirst = _byteFirstDecision;
        long patternFirst = _patternFirstDecision;
        int gapSync = _gapSyncBits.Length > 0 ? GapSyncEndingHere(bit, endSample, read) : -1;
        _patternLength = 0;
        double gapStart = 0;
        if (gapSync >= 0)
        {
            // Where no lane is free, the block begun last (inside the other's data, or the only one) ends where the
            // gap's first bit ended: its data cannot run on over the next block's gap.
            gapStart = _ringBitEnd[(_bitsSeen - _gapSyncBits[gapSync].Length) % RingBits];
            if (FreeLane() is null)
            {
                NewestLane().Blocks.End(gapStart);
            }
        }

        bool reading = false;
        foreach (var lane in _lanes)
        {
            if (lane.Blocks.InBlock)
            {
                long first = _before.Length > 0 && lane.Framer.AtByteStart ? byteFirst : patternFirst;
                bool complete = lane.Framer.AddBit(bit, (int)(first - lane.Base), endSample);
                reading |= !complete && lane.Blocks.InBlock;
            }
        }

        if (gapSync >= 0)
        {
            // The gap is the run before the sync: as long as the format's gap, which says what evidence it is.
            _runCount = _encoding.BlockGap;
            if (reading)
            {
                // A block read on by its length holds these bits as data: the next is read alongside it from the sync.
                var lane = FreeLane()!;
                lane.Framer.Reset();
                lane.Blocks.BeginInside(endSample, RunEvidence(synced: true), gapStart);
                HandSyncBits(lane, _syncBits[gapSync], endSample);
                _readBitsInRow = 0;
            }
            else
            {
                BeginAtSyncBits(_syncBits[gapSync], endSample);
            }

            return;
        }

        if (!reading)
        {
            _mode = Mode.Hunting;
            _leadIn.Reset();
            return;
        }

        if (Framer.AtByteStart)
        {
            _phase = _after.Length > 0 ? Phase.After : Phase.Boundary;
        }
    }

    private Lane? FreeLane() => Array.Find(_lanes, l => !l.Blocks.InBlock);

    private Lane NewestLane()
    {
        Lane? newest = null;
        foreach (var lane in _lanes)
        {
            if (lane.Blocks.InBlock && (newest is null || lane.Begun > newest.Begun))
            {
                newest = lane;
            }
        }

        return newest ?? _lanes[0];
    }

    /// <summary>
    /// Records a bit of a block's data; where it completes the gap and a sync read whole (every bit of them read, none
    /// guessed), returns which sync (else -1).
    /// </summary>
    private int GapSyncEndingHere(bool bit, double endSample, bool read)
    {
        if (!read)
        {
            _readBitsInRow = 0;
            return -1;
        }

        RecordBit(bit, _pulsesSeen - _patternLength, endSample);
        _readBitsInRow++;
        for (int c = 0; c < _gapSyncBits.Length; c++)
        {
            if (_readBitsInRow >= _gapSyncBits[c].Length && EndsWith(_gapSyncBits[c]))
            {
                return c;
            }
        }

        return -1;
    }

    private bool Matches(int[] sequence) => sequence.Length > 0 && _patternLength == sequence.Length && IsPrefixOf(sequence);

    private bool IsPrefixOf(int[] sequence)
    {
        if (_patternLength > sequence.Length)
        {
            return false;
        }

        for (int i = 0; i < _patternLength; i++)
        {
            if (_pattern[i] != sequence[i])
            {
                return false;
            }
        }

        return true;
    }

    private int IndexOf(string className)
    {
        for (int i = 0; i < _encoding.Classes.Count; i++)
        {
            if (_encoding.Classes[i].Name == className)
            {
                return i;
            }
        }

        throw new ArgumentException($"Unknown pulse class '{className}'.", nameof(className));
    }

    private int[] Indices(IReadOnlyList<string> names)
    {
        var result = new int[names.Count];
        for (int i = 0; i < result.Length; i++)
        {
            result[i] = IndexOf(names[i]);
        }

        return result;
    }

    /// <summary>One block being read: where its bytes go, its framer, and how its decisions' indices stand to all taken.</summary>
    private sealed class Lane(IBlockSink blocks, SyncByteFramer framer)
    {
        public IBlockSink Blocks { get; } = blocks;

        public SyncByteFramer Framer { get; } = framer;

        /// <summary>The count of all decisions taken when this lane's block began: its index of a decision is the overall index less this.</summary>
        public long Base { get; set; }

        /// <summary>When the block began, in order among all begun (larger is later).</summary>
        public long Begun { get; set; }
    }
}
