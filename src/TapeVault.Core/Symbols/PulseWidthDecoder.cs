using TapeVault.Core.Blocks;
using TapeVault.Core.Bytes;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;

namespace TapeVault.Core.Symbols;

/// <summary>
/// Pulse-width formats: a pulse is a whole cycle between two counted edges (or two half cycles when a setting counts
/// both edges). A lead-in of one class is found by its regularity, whatever the speed within ±12 %, and calibrates the
/// speed before any pulse is classified; the sync sequence starts a block, and each bit is a short sequence of classes.
/// </summary>
public sealed class PulseWidthDecoder : ISymbolDecoder
{
    private const int InvalidPulsesToLoseBlock = 4;

    private readonly PulseWidthEncoding _encoding;
    private readonly PulseClassifier _classifier;
    private readonly double _sampleRate;
    private readonly bool _halfCycles;
    private readonly BlockAssembler _assembler;
    private readonly SyncByteFramer _framer;
    private readonly int _leadInClass;
    private readonly int[] _sync;
    private readonly int[] _zero;
    private readonly int[] _one;
    private readonly int[] _pattern = new int[64];
    private SpeedTracker _speed = new();
    private Mode _mode = Mode.Hunting;
    private LeadInFinder _leadIn;
    private int _syncIndex;
    private int _patternLength;
    private int _patternFirstDecision;
    private int _recentInvalid;
    private double _lastEdge = double.NaN;
    private double _glitchCarry;
    private double _pendingHalf = double.NaN;

    public PulseWidthDecoder(FormatProfile profile, bool countsBothEdges, double sampleRate, BlockAssembler assembler)
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
        _halfCycles = countsBothEdges;
        _assembler = assembler;
        _framer = new SyncByteFramer(profile.Framing, assembler);
        _leadInClass = IndexOf(_encoding.LeadInClass);
        _leadIn = LeadInFinder.ForClass(_classifier, _leadInClass, _encoding.LeadInMinimum);
        _sync = Indices(_encoding.Sync);
        _zero = Indices(_encoding.Zero);
        _one = Indices(_encoding.One);
    }

    private enum Mode
    {
        Hunting,
        LeadIn,
        Sync,
        Data,
    }

    public void OnEdges(ReadOnlySpan<Edge> edges)
    {
        foreach (var edge in edges)
        {
            if (double.IsNaN(_lastEdge))
            {
                _lastEdge = edge.Sample;
                continue;
            }

            double seconds = (edge.Sample - _lastEdge) / _sampleRate + _glitchCarry;
            _lastEdge = edge.Sample;
            double unit = _halfCycles ? 0.5 : 1.0;

            // Noise between samples can split a cycle: carry a glitch into the next interval instead of deciding on it.
            if (seconds * _speed.Speed < _classifier.ShortestAcceptedSeconds * unit)
            {
                _glitchCarry = seconds;
                continue;
            }

            _glitchCarry = 0;
            if (seconds * _speed.Speed > _classifier.LongestAcceptedSeconds * unit * 2)
            {
                // A gap with no edges at all: a dropout or the end of a recording.
                LoseSignal(edge.Sample - seconds * _sampleRate);
                _pendingHalf = double.NaN;
                continue;
            }

            if (_halfCycles)
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
                    // Out of phase with the cycles (or a glitch): start the pairing again from this half.
                    _pendingHalf = seconds;
                    continue;
                }

                seconds += _pendingHalf;
                _pendingHalf = double.NaN;
            }

            OnCycle(seconds, edge.Sample, edge.Level);
        }
    }

    public void Finish(double endSample) => LoseSignal(endSample);

    private void LoseSignal(double sample)
    {
        if (_mode == Mode.Data)
        {
            _assembler.End(sample);
        }

        _mode = Mode.Hunting;
        _leadIn.Reset();
    }

    private void OnCycle(double seconds, double endSample, float level)
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
                    _mode = Mode.LeadIn;
                }
                else if (_mode == Mode.LeadIn)
                {
                    _syncIndex = 0;
                    _mode = Mode.Sync;
                    OnSyncPulse(_classifier.ClassOf(seconds, _speed.Speed), endSample);
                }

                break;
            case Mode.Sync:
                OnSyncPulse(_classifier.ClassOf(seconds, _speed.Speed), endSample);
                break;
            case Mode.Data:
                // Data pulses alone need the distances (a logarithm each).
                _assembler.NoteLevel(level);
                OnDataPulse(_classifier.Classify(seconds, _speed.Speed), seconds, endSample);
                break;
        }
    }

    private void OnSyncPulse(int pulseClass, double endSample)
    {
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
            _mode = Mode.Data;
            _patternLength = 0;
            _recentInvalid = 0;
            _framer.Reset();
            _leadIn.Reset();
            _assembler.Begin(endSample, BlockStartEvidence.LeadInAndSync);
        }
    }

    private void OnDataPulse(PulseDecision decision, double seconds, double endSample)
    {
        if (_patternLength == 0)
        {
            _patternFirstDecision = _assembler.DecisionCount;
        }

        if (!decision.IsValid)
        {
            _assembler.AddGuessedDecision();
            if (++_recentInvalid >= InvalidPulsesToLoseBlock)
            {
                LoseSignal(endSample);
                return;
            }

            CompleteBit(GuessBit(decision), endSample);
            return;
        }

        _recentInvalid = Math.Max(0, _recentInvalid - 1);
        _assembler.AddDecision(decision.Distance, decision.Residual, decision.Scale);
        if (decision.Distance > 0.5 * decision.Scale)
        {
            _speed.Track(seconds, _classifier.NominalSeconds(decision.Class));
        }

        _assembler.NoteSpeed(_speed.Speed);
        _pattern[_patternLength++] = decision.Class;
        if (Matches(_zero))
        {
            CompleteBit(false, endSample);
        }
        else if (Matches(_one))
        {
            CompleteBit(true, endSample);
        }
        else if (!IsPrefixOf(_zero) && !IsPrefixOf(_one))
        {
            // No bit begins like this: the decision nearest a bit is a guess with no margin.
            _assembler.AddGuessedDecision();
            CompleteBit(GuessBit(decision), endSample);
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

    private void CompleteBit(bool bit, double endSample)
    {
        _patternLength = 0;
        if (_framer.AddBit(bit, _patternFirstDecision, endSample))
        {
            _mode = Mode.Hunting;
        }
    }

    private bool Matches(int[] sequence) => _patternLength == sequence.Length && IsPrefixOf(sequence);

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
}
