using TapeVault.Core.Blocks;
using TapeVault.Core.Bytes;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;

namespace TapeVault.Core.Symbols;

/// <summary>
/// Biphase (Manchester): every cell has a transition in its middle, whose direction is the bit; equal neighbouring
/// bits add one more at the cell boundary. Intervals between transitions are therefore a half or a whole cell.
/// The lead-in of zeros tells which transitions are mid-cell ones (those in the zero direction), and the sync
/// pattern starts a block. Biphase needs every transition, so it reads both edges whatever the setting counts.
/// </summary>
public sealed class BiphaseDecoder : ISymbolDecoder
{
    private const int Half = 0;
    private const int Whole = 1;
    private const int InvalidToLoseBlock = 3;

    private readonly BiphaseEncoding _encoding;
    private readonly PulseClassifier _classifier;
    private readonly double _sampleRate;
    private readonly BlockAssembler _assembler;
    private readonly SyncByteFramer _framer;
    private readonly ulong _syncPattern;
    private readonly ulong _syncMask;
    private SpeedTracker _speed = new();
    private Mode _mode = Mode.Hunting;
    private int _run;
    private double _lastEdge = double.NaN;
    private bool _atBoundary;
    private int _bitFirstDecision = -1;
    private ulong _shift;
    private int _bitsSinceLeadIn;
    private int _recentInvalid;

    public BiphaseDecoder(FormatProfile profile, double sampleRate, BlockAssembler assembler)
    {
        ArgumentNullException.ThrowIfNull(profile);
        _encoding = profile.Biphase ?? throw new ArgumentException("The profile is not a biphase profile.", nameof(profile));
        _classifier = new PulseClassifier([_encoding.CellSeconds / 2, _encoding.CellSeconds], outerRatio: 1.45);
        _sampleRate = sampleRate;
        _assembler = assembler;
        _framer = new SyncByteFramer(profile.Framing, assembler);
        foreach (char c in _encoding.SyncBits)
        {
            _syncPattern = (_syncPattern << 1) | (c == '1' ? 1u : 0u);
        }

        _syncMask = _encoding.SyncBits.Length == 64 ? ulong.MaxValue : (1UL << _encoding.SyncBits.Length) - 1;
    }

    private enum Mode
    {
        Hunting,
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

            double seconds = (edge.Sample - _lastEdge) / _sampleRate;
            _lastEdge = edge.Sample;
            var decision = _classifier.Classify(seconds, _speed.Speed);
            bool bit = edge.Rising != _encoding.OneIsFalling;
            switch (_mode)
            {
                case Mode.Hunting:
                    Hunt(decision, seconds, bit);
                    break;
                case Mode.Sync:
                case Mode.Data:
                    if (_mode == Mode.Data)
                    {
                        _assembler.NoteLevel(edge.Level);
                        _assembler.NoteSpeed(_speed.Speed);
                    }

                    Follow(decision, seconds, bit, edge.Sample);
                    break;
            }
        }
    }

    public void Finish(double endSample) => Lose(endSample);

    private void Lose(double sample)
    {
        if (_mode == Mode.Data)
        {
            _assembler.End(sample);
        }

        _mode = Mode.Hunting;
        _run = 0;
    }

    private void Hunt(PulseDecision decision, double seconds, bool bit)
    {
        if (decision.Class != Half || Math.Abs(decision.Residual) > 0.5 * decision.Scale)
        {
            _run = 0;
            return;
        }

        if (_run == 0)
        {
            _speed.ResetCalibration();
        }

        _run++;
        _speed.Calibrate(seconds, _encoding.CellSeconds / 2, commit: _run >= 2 * _encoding.LeadInMinimumBits);

        // In a run of zeros the transitions alternate: boundary, mid-cell (zero direction), boundary...
        if (_run >= 2 * _encoding.LeadInMinimumBits && !bit)
        {
            _mode = Mode.Sync;
            _atBoundary = false;
            _shift = 0;
            _bitsSinceLeadIn = 0;
            _bitFirstDecision = -1;
        }
    }

    private void Follow(PulseDecision decision, double seconds, bool bit, double sample)
    {
        if (_bitFirstDecision < 0 || !_atBoundary)
        {
            _bitFirstDecision = _assembler.Decisions.Count;
        }

        if (!decision.IsValid || (decision.Class == Whole && _atBoundary))
        {
            // A whole cell after a boundary, or no class at all, breaks the pattern: the cell phase is lost.
            if (_mode == Mode.Sync || ++_recentInvalid >= InvalidToLoseBlock)
            {
                Lose(sample);
                return;
            }

            _assembler.Decisions.Add(0, 1, 1);
            _atBoundary = false;
            EmitBit(bit, sample);
            return;
        }

        if (_mode == Mode.Data)
        {
            _assembler.Decisions.Add(decision.Distance, decision.Residual, decision.Scale);
            _recentInvalid = Math.Max(0, _recentInvalid - 1);
        }

        if (decision.Distance > 0.5 * decision.Scale)
        {
            _speed.Track(seconds, decision.Class == Half ? _encoding.CellSeconds / 2 : _encoding.CellSeconds);
        }

        if (decision.Class == Half && !_atBoundary)
        {
            // Half a cell after a mid-cell transition: this one is at the boundary; the bit comes with the next.
            _atBoundary = true;
            return;
        }

        _atBoundary = false;
        EmitBit(bit, sample);
    }

    private void EmitBit(bool bit, double sample)
    {
        if (_mode == Mode.Sync)
        {
            _shift = (_shift << 1) | (bit ? 1UL : 0UL);

            // Count from the first 1 after the zeros, however long the lead-in runs.
            _bitsSinceLeadIn = (_shift & _syncMask) == 0 ? 0 : _bitsSinceLeadIn + 1;
            if ((_shift & _syncMask) == _syncPattern)
            {
                _mode = Mode.Data;
                _recentInvalid = 0;
                _framer.Reset();
                _assembler.Begin(sample);
            }
            else if (bit && _bitsSinceLeadIn > 4 * _encoding.SyncBits.Length)
            {
                _mode = Mode.Hunting;
                _run = 0;
            }

            return;
        }

        int first = _bitFirstDecision >= 0 ? _bitFirstDecision : _assembler.Decisions.Count;
        _bitFirstDecision = -1;
        if (_framer.AddBit(bit, first, sample))
        {
            _mode = Mode.Hunting;
            _run = 0;
        }
    }
}
