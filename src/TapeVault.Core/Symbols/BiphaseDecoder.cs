using TapeVault.Core.Blocks;
using TapeVault.Core.Bytes;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;

namespace TapeVault.Core.Symbols;

/// <summary>
/// Biphase (Manchester): every cell has a transition in its middle, whose direction is the bit; equal neighbouring
/// bits add one more at the cell boundary. Intervals between transitions are therefore a half or a whole cell.
/// The lead-in tells which transitions are mid-cell ones: in a lead-in of equal bits (zeros or ones) those in that
/// bit's direction, every half cell; in a lead-in of alternating bits every transition, one a whole cell (neighbours
/// always differ, so no transition falls on a cell boundary). Either is found by its regularity, at any speed in range,
/// and the sync pattern that breaks it starts a block. Biphase needs every transition, so it reads both edges whatever the setting counts.
/// <para>
/// A dropout inside a block breaks the pattern. Rather than give the rest of the block up, the decoder bridges it:
/// it keeps the cell clock of the last mid-cell transition read before the break, waits for a run of transitions
/// that all fall on that clock's grid again, and counts the cells in between as erased bits (margin 0). The bits
/// after the dropout then sit where they belong in the block, so another pass, or the checksum, can fill the
/// erasures.
/// </para>
/// </summary>
public sealed class BiphaseDecoder : ISymbolDecoder
{
    private const int Half = 0;
    private const int Whole = 1;

    // A transition counts as on the grid within this fraction of a half cell; the decision boundary between a
    // mid-cell and a boundary transition lies at 0.5, and clock drift over a long dropout eats into the rest.
    private const double GridTolerance = 0.3;

    // How far, in cells, a transition read normally may stray from the cell clock before it counts as noise.
    private const double ClockTolerance = 0.25;

    // Consecutive cells whose mid-cell transitions fall on the grid, in the biphase pattern, before the signal counts
    // as back. A single noise edge lands on the grid often (the window is 60 % of every half cell); a byte's worth of
    // cells in a row, each with its transition, is what a signal does. The count is our choice, checked by the
    // recovery benchmark.
    private const int MidsToResynchronise = 8;

    // Edges off the cell grid a run of the bridge steps over between two of its transitions: one pair of noise
    // crossings (a glitch goes up and comes back down). Our choice, checked by the recovery benchmark: on tuning seed
    // 9003's head-fall reading the wrong bytes of a block went from 15 to 4 (docs/performance.md, "Noise crossings in
    // the quiet middle of a whole biphase cell"); no block of seeds 9001–9010 came out whole that did not before.
    private const int GlitchesToStepOver = 2;

    // Longer than the longest dropout worth bridging; past it the clock has drifted too far to place bits.
    private const double LongestBridgeCells = 120;

    private readonly BiphaseEncoding _encoding;
    private readonly PulseClassifier _classifier;
    private readonly double _sampleRate;
    private readonly IBlockSink _blocks;
    private readonly SyncByteFramer _framer;
    private readonly ulong _syncPattern;
    private readonly ulong _syncMask;
    private readonly string _leadInBits;

    // The sync register's window as the lead-in fills it, in each phase of the lead-in's pattern.
    private readonly ulong[] _leadInWindows;
    private SpeedTracker _speed = new();
    private Mode _mode = Mode.Hunting;
    private LeadInFinder _leadIn;
    private double _lastEdge = double.NaN;
    private bool _atBoundary;
    private int _bitFirstDecision = -1;
    private ulong _shift;
    private int _bitsSinceLeadIn;
    private CellClock _clock;
    private bool _bridging;
    private readonly BridgeEdge[] _bridge = new BridgeEdge[(2 * MidsToResynchronise) + 2];
    private int _bridgeCount;
    private int _bridgeMids;
    private int _bridgeSkipped;

    public BiphaseDecoder(FormatProfile profile, double sampleRate, IBlockSink blocks)
    {
        ArgumentNullException.ThrowIfNull(profile);
        _encoding = profile.Biphase ?? throw new ArgumentException("The profile is not a biphase profile.", nameof(profile));
        _classifier = new PulseClassifier([_encoding.CellSeconds / 2, _encoding.CellSeconds], outerRatio: 1.45);
        _sampleRate = sampleRate;
        _blocks = blocks;
        _framer = new SyncByteFramer(profile.Framing, blocks);

        // A lead-in of equal bits has a transition every half cell, one of alternating bits every whole cell: either
        // way a run of near-equal intervals, found at any speed in range. A dropout in it breaks the run; what is heard
        // on both sides of a break shorter than the minimum lead-in is one lead-in (a block of its own in the break
        // would need that much lead-in before it), so the run is taken up again after such a break, its count whole.
        _leadInBits = _encoding.LeadInBits;
        double leadInBreak = _encoding.LeadInMinimumBits * _encoding.CellSeconds;
        _leadIn = BitPatterns.IsWholeCellRun(_leadInBits)
            ? LeadInFinder.ForClass(_classifier, Whole, _encoding.LeadInMinimumBits, leadInBreak)
            : LeadInFinder.ForClass(_classifier, Half, 2 * _encoding.LeadInMinimumBits, leadInBreak);
        foreach (char c in _encoding.SyncBits)
        {
            _syncPattern = (_syncPattern << 1) | (c == '1' ? 1u : 0u);
        }

        _syncMask = _encoding.SyncBits.Length == 64 ? ulong.MaxValue : (1UL << _encoding.SyncBits.Length) - 1;
        _leadInWindows = new ulong[_leadInBits.Length];
        for (int phase = 0; phase < _leadInWindows.Length; phase++)
        {
            _leadInWindows[phase] = BitPatterns.Window(_leadInBits, phase, _encoding.SyncBits.Length);
        }
    }

    private enum Mode
    {
        Hunting,
        Sync,
        Data,
    }

    /// <summary>
    /// The cell clock of a block: where the last mid-cell transition fell and how long a cell lasts, smoothed over the
    /// transitions that kept time (a first-order loop on phase and a slower one on period), so that one late edge at
    /// the start of a dropout moves neither much.
    /// </summary>
    private struct CellClock
    {
        private const double PhaseGain = 0.25;
        private const double PeriodGain = 0.02;

        public double LastMid { get; private set; }

        public double Cell { get; private set; }

        public bool Running { get; private set; }

        public void Start(double mid, double cell)
        {
            LastMid = mid;
            Cell = cell;
            Running = true;
        }

        public void Stop() => Running = false;

        public readonly double CellsSince(double sample) => (sample - LastMid) / Cell;

        /// <summary>A mid-cell transition that kept time, a whole number of cells after the last.</summary>
        public void Keep(double mid)
        {
            double cells = Math.Max(1, Math.Round(CellsSince(mid)));
            double error = mid - (LastMid + (cells * Cell));
            LastMid += (cells * Cell) + (PhaseGain * error);
            Cell += PeriodGain * error / cells;
        }
    }

    /// <summary>A transition seen while bridging: its place on the old clock's grid in half cells (even: mid-cell).</summary>
    private readonly record struct BridgeEdge(long HalfCell, double Sample, bool Bit);

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
            bool bit = edge.Rising != _encoding.OneIsFalling;
            if (_bridging)
            {
                Bridge(edge.Sample, bit);
                continue;
            }

            var decision = _classifier.Classify(seconds, _speed.Speed);
            switch (_mode)
            {
                case Mode.Hunting:
                    Hunt(seconds, bit);
                    break;
                case Mode.Sync:
                case Mode.Data:
                    if (_mode == Mode.Data)
                    {
                        _blocks.NoteLevel(edge.Level);
                        _blocks.NoteSpeed(_speed.Speed);
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
            _blocks.End(sample);
        }

        // Lost while waiting for the sync, the lead-in may go on after the break; lost in a block, it is over.
        if (_mode == Mode.Sync)
        {
            _leadIn.Interrupt();
        }
        else
        {
            _leadIn.Reset();
        }

        _mode = Mode.Hunting;
        _bridging = false;
        _clock.Stop();
    }

    private void Hunt(double seconds, bool bit)
    {
        // Found by regularity, not by classification: the speed is not known until the lead-in has been found.
        if (!_leadIn.Add(seconds) || !_leadIn.Found)
        {
            return;
        }

        _speed.Calibrate(_leadIn.Speed);

        // In a run of equal bits the transitions alternate: boundary, mid-cell (in that bit's direction), boundary...;
        // in a run of alternating bits every transition is mid-cell, and its direction is the bit.
        bool alternating = BitPatterns.IsWholeCellRun(_leadInBits);
        if (alternating || bit == (_leadInBits[0] == '1'))
        {
            _mode = Mode.Sync;
            _atBoundary = false;
            _shift = BitPatterns.Window(_leadInBits, alternating && bit ? 1 : 0, 64);
            _bitsSinceLeadIn = 0;
            _bitFirstDecision = -1;
        }
    }

    private void Follow(PulseDecision decision, double seconds, bool bit, double sample)
    {
        if (_bitFirstDecision < 0 || !_atBoundary)
        {
            _bitFirstDecision = _blocks.DecisionCount;
        }

        if (!decision.IsValid || (decision.Class == Whole && _atBoundary))
        {
            // A whole cell after a boundary, or no class at all, breaks the pattern: the cell phase is lost. Before
            // a block there is nothing to keep; inside one, bridge from the last mid-cell transition.
            if (_mode == Mode.Sync || !_clock.Running)
            {
                Lose(sample);
                return;
            }

            StartBridge();
            Bridge(sample, bit);
            return;
        }

        if (_mode == Mode.Data)
        {
            // Pulses that classify may still be noise at the edge of a dropout; counted against the cell clock of the
            // last mid-cell transition they do not fit, and bridging from that transition keeps the bit count.
            double cells = _clock.CellsSince(sample);
            double expected = decision.Class == Half && !_atBoundary ? 0.5 : 1;
            if (Math.Abs(cells - expected) > ClockTolerance)
            {
                StartBridge();
                Bridge(sample, bit);
                return;
            }

            _blocks.AddDecision(decision.Distance, decision.Residual, decision.Scale);
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
        if (_mode == Mode.Data)
        {
            _clock.Keep(sample);
        }

        EmitBit(bit, sample);
    }

    private void EmitBit(bool bit, double sample)
    {
        if (_mode == Mode.Sync)
        {
            _shift = (_shift << 1) | (bit ? 1UL : 0UL);

            // Count from the first bit that breaks the lead-in's pattern, however long the lead-in runs.
            _bitsSinceLeadIn = InLeadIn(_shift & _syncMask) ? 0 : _bitsSinceLeadIn + 1;
            if ((_shift & _syncMask) == _syncPattern)
            {
                _mode = Mode.Data;
                _leadIn.Reset();
                _clock.Start(sample, _encoding.CellSeconds * _sampleRate / _speed.Speed);
                _framer.Reset();
                _blocks.Begin(sample, BlockStartEvidence.LeadInAndSync);
            }
            else if (bit && _bitsSinceLeadIn > 4 * _encoding.SyncBits.Length)
            {
                _mode = Mode.Hunting;
                _leadIn.Reset();
            }

            return;
        }

        int first = _bitFirstDecision >= 0 ? _bitFirstDecision : _blocks.DecisionCount;
        _bitFirstDecision = -1;
        if (_framer.AddBit(bit, first, sample))
        {
            _mode = Mode.Hunting;
            _clock.Stop();
        }
    }

    /// <summary>Whether the sync register still holds nothing but the lead-in's pattern (in some phase).</summary>
    private bool InLeadIn(ulong window)
    {
        foreach (ulong leadIn in _leadInWindows)
        {
            if (window == leadIn)
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>Bridging counts from the clock as it stood at the break: nothing moves it until the signal is back.</summary>

    private void StartBridge()
    {
        _bridging = true;
        _bridgeCount = 0;
        _bridgeMids = 0;
        _bridgeSkipped = 0;
    }

    /// <summary>
    /// One transition while bridging. It joins the run being built when it lies on the grid and keeps the biphase
    /// pattern (a mid-cell transition in every cell, a boundary one only right after a mid-cell one); otherwise the
    /// run starts again. A long enough run ends the bridge.
    /// </summary>
    private void Bridge(double sample, bool bit)
    {
        double halfCells = 2 * _clock.CellsSince(sample);
        if (halfCells > 2 * LongestBridgeCells)
        {
            Lose(_clock.LastMid);
            return;
        }

        long k = (long)Math.Round(halfCells);
        bool onGrid = k > 0 && Math.Abs(halfCells - k) <= GridTolerance;
        bool mid = (k & 1) == 0;
        if (_bridgeCount > 0)
        {
            var previousEdge = _bridge[_bridgeCount - 1];
            long previous = previousEdge.HalfCell;
            bool previousMid = (previous & 1) == 0;

            // After a mid-cell transition comes the next cell's (two halves on) or a boundary (one half on); after a
            // boundary, the mid-cell transition of the same cell; and transitions alternate in direction.
            bool follows = previousMid ? k == previous + 2 || k == previous + 1 : mid && k == previous + 1;
            if (!onGrid || !follows || previousEdge.Bit == bit)
            {
                // Not the run's next transition: noise, such as a pair of crossings in the quiet middle of a whole
                // cell, which the run steps over. More than that between two of its transitions, and it starts again.
                if (++_bridgeSkipped <= GlitchesToStepOver)
                {
                    return;
                }

                _bridgeCount = 0;
                _bridgeMids = 0;
            }
        }

        if (!onGrid)
        {
            return;
        }

        _bridgeSkipped = 0;
        if (_bridgeCount == 0 && !mid)
        {
            // A run starts on a mid-cell transition, so that its first bit has a transition of its own.
            return;
        }

        _bridge[_bridgeCount++] = new BridgeEdge(k, sample, bit);
        if (mid && ++_bridgeMids >= MidsToResynchronise)
        {
            Resynchronise();
        }
        else if (_bridgeCount == _bridge.Length)
        {
            // Cannot happen with the pattern rules (at most two transitions a cell), but never overrun.
            _bridgeCount = 0;
            _bridgeMids = 0;
        }
    }

    /// <summary>Writes the bridged cells as erasures, then the run's bits, and follows the signal normally again.</summary>
    private void Resynchronise()
    {
        _bridging = false;
        long firstCell = _bridge[0].HalfCell / 2;

        for (long cell = 1; cell < firstCell; cell++)
        {
            _bitFirstDecision = _blocks.DecisionCount;
            _blocks.AddGuessedDecision();
            EmitBit(false, _clock.LastMid + (cell * _clock.Cell));
            if (_mode != Mode.Data)
            {
                return;
            }
        }

        // The first transition's interval reaches back into the dropout, so its bit is taken but not trusted.
        int boundaryDecision = -1;
        for (int i = 0; i < _bridgeCount; i++)
        {
            var edge = _bridge[i];
            int decisionIndex = _blocks.DecisionCount;
            if (i == 0)
            {
                _blocks.AddGuessedDecision();
            }
            else
            {
                var decision = _classifier.Classify((edge.Sample - _bridge[i - 1].Sample) / _sampleRate, _speed.Speed);
                if (decision.IsValid)
                {
                    _blocks.AddDecision(decision.Distance, decision.Residual, decision.Scale);
                }
                else
                {
                    _blocks.AddGuessedDecision();
                }
            }

            if ((edge.HalfCell & 1) == 1)
            {
                boundaryDecision = decisionIndex;
                continue;
            }

            _bitFirstDecision = boundaryDecision >= 0 ? boundaryDecision : decisionIndex;
            boundaryDecision = -1;
            _clock.Keep(edge.Sample);
            EmitBit(edge.Bit, edge.Sample);
            if (_mode != Mode.Data)
            {
                return;
            }
        }

        // The run ends on a mid-cell transition: the next transition is a boundary or the next cell's.
        _atBoundary = false;
        _bitFirstDecision = -1;
    }
}
