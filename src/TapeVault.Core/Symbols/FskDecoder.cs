using System.Runtime.CompilerServices;
using TapeVault.Core.Blocks;
using TapeVault.Core.Bytes;
using TapeVault.Core.Detection;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;

namespace TapeVault.Core.Symbols;

/// <summary>
/// Frequency-shift keying, framed like a serial line: the policy of when blocks begin and end, over the stages that
/// do the work, each in its own folder: the <see cref="ToneDetector"/> (Detection: the soft decision D, positive for
/// mark, from the <see cref="ToneBank"/>'s energies and its <see cref="ToneGate"/>: whether there is a carrier), the
/// <see cref="MarkPeriodSpeedTracker"/> and <see cref="MarkToneRun"/> (Pulses: the playback speed from the mark tone's
/// periods; how long the line has carried mark), and the <see cref="AsyncCharacterFramer"/>,
/// <see cref="CharacterGrid"/>, <see cref="HeldCharacters"/>, <see cref="CharacterLeader"/> and
/// <see cref="FrameAlignment"/> (Bytes: a fall of D through zero after enough mark tone is a start bit, the other bits
/// are read one bit period apart from it; where characters may start; a block's first characters; a leader of
/// characters). Decisions and bytes go to the block stage through <see cref="IBlockSink"/>.
/// <para>
/// The decoder reads the windows the <see cref="ToneBank"/> reads, one every <see cref="ToneBank.Stride"/> samples
/// (<see cref="ToneCorrelator.StrideFor"/>), and counts its time in readings: every length it works with (a bit, a
/// frame, a lead-in, the tone levels' memory) is in readings, as if the capture had been sampled at the sample rate over
/// the stride, and only what it tells the block stage and the speed tracker (which hangs on edges) goes back to samples.
/// </para>
/// <para>
/// A block begins only where the recording says one may: after a lead-in (mostly mark tone for the profile's minimum
/// lead-in, ending in a whole character of unbroken mark, longer than any character holds) or after an idle line (a
/// run of mark tone of <see cref="IdleLineCharacters"/> character times, where a block's characters would follow back
/// to back). A checked layout begins blocks nowhere else: after a loss of signal inside a block, the first start bit
/// is any fall from a data bit 1 to a 0, and a run of zero bytes framed from it makes a header and a check value of
/// zeros that a checksum with no initial value passes.
/// </para>
/// <para>
/// A block ends at its last whole character when the carrier vanishes for half a bit or more (a dropout, a click at
/// the end of the recording, the deck stopping; the character in progress is void), when its layout says it is
/// complete, or when the line goes idle while the block still expects characters (its length field was damaged), so
/// that the next block's lead-in begins the next block instead of being read into this one.
/// </para>
/// <para>
/// A profile whose lead-in is a leader of repeated characters (<see cref="CharacterLeadIn"/>) begins blocks after that
/// leader and nowhere else: a <see cref="LeaderHunt"/> finds its first character wherever characters may start, the
/// characters after it are framed back to back, the time from one leader character to the next gives the playback
/// speed (<see cref="LeadInFinder"/>, the lead-in's regularity rather than a nominal window), and once enough of them
/// have come the first character that is not the leader's, well framed, and the first of a sync the layout expects
/// begins the block. Mark tone, an idle line or well-framed characters begin nothing there.
/// </para>
/// <para>
/// A stream layout (no blocks, no checksum) has more to recover and nothing to fool: a stream that resumes soon after
/// a loss of signal needs no new lead-in, but it makes a new block, so the bytes lost in the gap are never silently
/// closed up inside one block; and a stream with no lead-in at all (a modem's output, a tape cut short) is read from
/// its first two well-framed, confidently decided characters, the frame they set carrying a framing doubt until the
/// characters rule out every other framing (<see cref="FrameAlignment"/>).
/// </para>
/// </summary>
public sealed class FskDecoder : ISymbolDecoder
{
    /// <summary>
    /// Character times of unbroken mark tone that make an idle line: inside a block characters follow back to back, and
    /// the longest run of mark a character holds is one frame less its start bit. Three (common practice for serial
    /// lines, which call a line idle after a few character times of mark) leaves room for a damaged character.
    /// </summary>
    private const double IdleLineCharacters = 3;

    /// <summary>
    /// The chance that a character framed from a start bit nothing confirmed (taken after a loss of signal with no
    /// grid to hold it, or on a grid that itself began so) sits whole bits off: lower-case text framed a few bits
    /// early reads cleanly, so its decisions cannot show it. Our estimate, checked by the recovery benchmark: large
    /// enough that two captures misframing a stretch alike do not outvote one that kept a confirmed grid, small
    /// enough that a lone such reading is still kept.
    /// </summary>
    private const float UnconfirmedFramingDoubt = 0.05f;

    /// <summary>Characters that must follow one another back to back before a block begins with them.</summary>
    private const int HeldCharacterCount = 2;

    /// <summary>
    /// The least decision distance (D signed toward the start and stop bits' values, |D| for the others) of a character
    /// held before a block with no lead-in: noise alone gives D uniform on ±1 in a one-bit window, so each of a
    /// character's ten or more decisions clears half way in one case of two, and two such characters in a row come
    /// by chance about once in ten million tries.
    /// </summary>
    private const float HeldCharacterDistance = 0.5f;

    private readonly FskEncoding _fsk;
    private readonly ByteFraming _framing;
    private readonly bool _isStream;
    private readonly IBlockSink _blocks;
    /// <summary>Readings a second: the sample rate over the tone bank's stride.</summary>
    private readonly double _readingRate;
    private readonly int _stride;
    private readonly int _correlatorWindow;
    private readonly bool _hasLeader;
    private CharacterLeader _leader;
    private ToneDetector _tones;
    private MarkPeriodSpeedTracker _speed;
    private MarkToneRun _mark;
    private AsyncCharacterFramer _framer;
    private CharacterGrid _grid;
    private FrameAlignment _alignment;
    private readonly HeldCharacters _held;
    private BlockStart _heldEvidence;
    private float _previousD;
    private float _level;
    private double _noCarrierRun;
    private bool _resuming;
    private bool _inBlock;
    private double _lastCharEnd;
    private double _timingSpeed = double.NaN;

    // What would begin a block with the character being read, and whether its start bit is confirmed.
    private BlockStart _charEvidence;
    private bool _charConfirmed = true;

    // Whether the block in progress is still finding out from its own characters where they may be framed.
    private bool _checkingAlignment;

    // The last reading at which the run of mark before a start bit broke: no carrier, or a start bit that read mark at
    // its centre (see StartIsConfirmed).
    private double _markBrokenAt = double.NegativeInfinity;

    /// <param name="readingStride">Every how many samples the tone bank reads a window (<see cref="ToneBank.Stride"/>); 1 by default.</param>
    public FskDecoder(FormatProfile profile, bool countsBothEdges, double sampleRate, IBlockSink blocks, int readingStride = 1)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(readingStride, 1);
        ArgumentNullException.ThrowIfNull(profile);
        _fsk = profile.Fsk ?? throw new ArgumentException("The profile is not an FSK profile.", nameof(profile));
        _framing = profile.Framing;
        _isStream = profile.Layout.IsStream;
        _blocks = blocks;

        // Lengths in readings: the rate at which the tone bank reads windows.
        _stride = readingStride;
        _correlatorWindow = ToneCorrelator.WindowFor(_fsk.Baud, sampleRate);
        _readingRate = sampleRate / _stride;
        _tones = new ToneDetector(_fsk.Baud, _readingRate);

        // The speed tracker times edges, in samples.
        _speed = new MarkPeriodSpeedTracker(sampleRate / _fsk.MarkHz * (countsBothEdges ? 0.5 : 1), _correlatorWindow);
        // Bits decided at the reading nearest their centre but for half a sample (see AsyncCharacterFramer).
        _framer = new AsyncCharacterFramer(_framing, decisionLead: 0.5 - (0.5 / _stride));
        _grid = new CharacterGrid(_framing);
        _alignment = new FrameAlignment(_framing);
        _held = new HeldCharacters(HeldCharacterCount, _framer.FrameBits);
        _mark = new MarkToneRun(Math.Max(_fsk.LeadInMinimumSeconds * _readingRate, 2.0 * _tones.Window));
        if (_fsk.LeadInCharacters is { } leader)
        {
            _hasLeader = true;
            byte[] syncFirstBytes = BlockLayoutCodec.For(profile.Layout).SyncField is { } sync ? [.. sync.Expected.Select(e => e[0])] : [];
            _leader = new CharacterLeader(_framing, leader, _fsk.Baud, _readingRate, syncFirstBytes);
        }

        KeepTiming();
    }

    /// <summary>What a block began after: the evidence the format's own signal gives that a block starts there.</summary>
    private enum BlockStart
    {
        /// <summary>Not a block's first character: one inside a block, on from the one before.</summary>
        InBlock,

        /// <summary>Mostly mark tone for the profile's minimum lead-in, ending in a character time of unbroken mark.</summary>
        LeadIn,

        /// <summary>A run of unbroken mark tone of <see cref="IdleLineCharacters"/> character times.</summary>
        IdleLine,

        /// <summary>A stream taken up again after a loss of signal, on the character grid from before it where that still holds.</summary>
        Resumed,

        /// <summary>A stream with no lead-in: its first well-framed characters.</summary>
        WithoutLeadIn,

        /// <summary>After a leader of repeated characters: the character grid the leader set.</summary>
        Leader,
    }

    public bool ReadsTones => true;

    private bool InLeader => _hasLeader && _leader.InLeader;

    /// <summary>One bit in samples at the measured speed (worked out again only when the speed changes: see <see cref="KeepTiming"/>).</summary>
    private double BitSamples { get; set; }

    /// <summary>One character frame (start, data, parity and all stop bits) in samples at the measured speed.</summary>
    private double FrameSamples { get; set; }

    private double IdleLineSamples { get; set; }

    /// <summary>The bit, frame and idle-line lengths follow the speed; they are worked out once for each speed, not once a sample.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private void KeepTiming()
    {
        if (_speed.Speed != _timingSpeed)
        {
            _timingSpeed = _speed.Speed;
            BitSamples = _readingRate / (_fsk.Baud * _speed.Speed);
            FrameSamples = _framing.BitsPerByte * BitSamples;
            IdleLineSamples = IdleLineCharacters * FrameSamples;
        }
    }

    /// <summary>The sample at which the window of reading <paramref name="reading"/> (or a time between readings) ends.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private double ToSample(double reading) => (reading * _stride) + (_stride - 1);

    /// <summary>The reading (a fraction between two) whose window ends at sample <paramref name="sample"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private double ToReading(double sample) => (sample - (_stride - 1)) / _stride;

    /// <summary>Edges only calibrate the speed, from the mark tone (and give the level the block notes).</summary>
    public void OnEdges(ReadOnlySpan<Edge> edges)
    {
        if (!edges.IsEmpty)
        {
            _level = edges[^1].Level;
        }

        _speed.OnEdges(edges);
    }

    public void OnTones(ToneLane tones, long chunkStart)
    {
        int i = 0;
        while (i < tones.Length)
        {
            // Where no leader is being hunted (the hunt looks at every sample), the stretches between events run on
            // their own loops; each leaves the sample that needs more to Step.
            if (!_hasLeader || _inBlock || _leader.InLeader)
            {
                i = _framer.InCharacter ? WithinCharacter(tones, i, chunkStart) : BetweenCharacters(tones, i, chunkStart);
                if (i == tones.Length)
                {
                    break;
                }
            }

            Step(tones.Mark(i), tones.Space(i), tones.Gate(i), chunkStart + i);
            i++;
        }

        _speed.EndChunk();
    }

    /// <summary>
    /// The samples of a character between its events, from <paramref name="i"/>: most of a character's samples only
    /// move the tone levels and D, and <see cref="Step"/> would find nothing else to do for them (a carrier, no change
    /// of tone, no bit due, no mark period due for the speed, no leader being hunted). They run in the tone detector's
    /// own loop (<see cref="ToneDetector.UntilToneChanges"/>), up to the first sample at which a bit or a mark period
    /// falls due; the first sample that is not such goes to <see cref="AfterTones"/> once its D is known (a change of
    /// tone), or is left whole to <see cref="Step"/> (a bit or a mark period due, no carrier). Returns the next sample
    /// to step.
    /// </summary>
    [MethodImpl(MethodImplOptions.NoInlining)]
    private int WithinCharacter(ToneLane tones, int i, long chunkStart)
    {
        // Inside a character both tones may teach their levels (see Step).
        int end = Math.Min(FirstAtOrAfter(_framer.NextBitTime, chunkStart, i, tones.Length), FirstAtOrAfter(ToReading(_speed.NextCheck), chunkStart, i, tones.Length));
        int start = i;
        float previousD = _previousD;
        bool changed = _tones.UntilToneChanges(tones, ref i, end, ref previousD, out float d);
        _previousD = previousD;
        if (i > start)
        {
            // Each of these samples had a carrier.
            _noCarrierRun = 0;
        }

        if (changed)
        {
            AfterTones(d, chunkStart + i, inChar: true, inLeader: InLeader);
            i++;
        }

        return i;
    }

    /// <summary>
    /// The first of the chunk's readings from <paramref name="i"/> (up to <paramref name="length"/>, where none is)
    /// whose index n = <paramref name="chunkStart"/> + i is at or after <paramref name="time"/>: n ≥ time, as a
    /// reading's loop would test it (n is a whole number, exact as a double).
    /// </summary>
    private static int FirstAtOrAfter(double time, long chunkStart, int i, int length)
    {
        if (double.IsNaN(time) || time > chunkStart + (length - 1.0))
        {
            return length;
        }

        return time <= chunkStart + i ? i : (int)(Math.Ceiling(time) - chunkStart);
    }

    /// <summary>
    /// The samples between characters from <paramref name="i"/>, like <see cref="WithinCharacter"/>: most of them only
    /// move the tone levels, D and the run of mark tone, and <see cref="Step"/> would find nothing else to do for them
    /// (a carrier, no fall of D through zero, no mark period due, no idle-line or frame test near). Returns the next
    /// sample to step.
    /// </summary>
    [MethodImpl(MethodImplOptions.NoInlining)]
    private int BetweenCharacters(ToneLane tones, int i, long chunkStart)
    {
        var detector = _tones;
        var mark = _mark;
        float previousD = _previousD;
        double nextCheck = ToReading(_speed.NextCheck);
        double bitSamples = BitSamples;
        bool learnMark = _inBlock || InLeader;

        // Step's tests of the time since the last character (n − last ≥ length) act from about last + length on; this
        // loop stops a sample before that, so that Step makes each of those tests itself, with its own rounding.
        double deadline = double.PositiveInfinity;
        if (_inBlock)
        {
            deadline = _lastCharEnd + IdleLineSamples - 1;
        }

        if (_held.Count > 0 || InLeader)
        {
            deadline = Math.Min(deadline, _lastCharEnd + FrameSamples - 1);
        }

        int start = i;
        bool fell = false;
        float d = 0;
        for (; i < tones.Length; i++)
        {
            double n = chunkStart + i;
            int gate = tones.Gate(i);
            if ((gate & ToneGate.Carrier) == 0 || n >= nextCheck || n >= deadline)
            {
                break;
            }

            // Outside a character only the mark level may learn (see Step).
            d = detector.Next(tones.Mark(i), tones.Space(i), gate, learnMark: learnMark || mark.HeardLeadIn, learnSpace: false);
            if (d < 0 && previousD >= 0)
            {
                fell = true;
                break;
            }

            mark.Step(d, bitSamples);
            previousD = d;
        }

        _tones = detector;
        _mark = mark;
        _previousD = previousD;
        if (i > start)
        {
            // Each of these samples had a carrier.
            _noCarrierRun = 0;
        }

        if (fell)
        {
            AfterTones(d, chunkStart + i, inChar: false, inLeader: InLeader);
            i++;
        }

        return i;
    }

    /// <summary>One sample: the mark and space energies of the window that ends at <paramref name="sample"/>, and the gate's answer for it.</summary>
    private void Step(double mark, double space, int gate, long sample)
    {
        bool inChar = _framer.InCharacter;
        bool inLeader = InLeader;
        float d = _tones.Next(mark, space, gate, learnMark: inChar || _inBlock || inLeader || _mark.HeardLeadIn, learnSpace: inChar);
        AfterTones(d, sample, inChar, inLeader);
    }

    /// <summary>The rest of a sample's <see cref="Step"/> once its D is known; <paramref name="inChar"/> and <paramref name="inLeader"/> as they were before it.</summary>
    private void AfterTones(float d, long sample, bool inChar, bool inLeader)
    {
        double n = sample;
        _speed.Check(d, ToSample(n));
        KeepTiming();
        if (_hasLeader && !_inBlock && !inLeader && _leader.Hunt(d, _previousD, n, BitSamples))
        {
            FoundLeader(n);
        }

        // Half a bit without carrier is a loss of signal; a shorter fade (deep noise can null a one-bit window for
        // a moment) is not.
        _noCarrierRun = _tones.Carrier ? 0 : _noCarrierRun + 1;
        if (_noCarrierRun > 0 && !inChar)
        {
            _markBrokenAt = n;
        }

        if (_noCarrierRun >= 0.5 * BitSamples && (inChar || _inBlock || _held.Count > 0 || InLeader))
        {
            LoseSignal();
        }
        else if (inChar)
        {
            switch (_framer.Step(d, _previousD, n, BitSamples))
            {
                case CharacterStep.FalseStart:
                    _mark.FalseStart(n - _framer.Start);
                    _markBrokenAt = _framer.Start;
                    break;
                case CharacterStep.Complete:
                    CompleteCharacter(n);
                    break;
            }
        }
        else
        {
            if (d < 0 && _previousD >= 0 && _mark.Samples >= 0.25 * BitSamples)
            {
                // A fall through zero: D crosses zero half a window after a mark-to-space boundary.
                TryStartCharacter(n - 1 + _previousD / (_previousD - d));
            }

            _mark.Step(d, BitSamples);
            if (_inBlock && n - _lastCharEnd >= IdleLineSamples)
            {
                // The line is idle while the block still expects characters: the block ends here, and the mark
                // tone that follows may be the next block's lead-in.
                _blocks.End(ToSample(_lastCharEnd));
                _inBlock = false;
            }

            if (_held.Count > 0 && n - _lastCharEnd >= FrameSamples)
            {
                // Characters held before a block must follow one another back to back.
                _held.Clear();
            }

            if (InLeader && n - _lastCharEnd >= FrameSamples)
            {
                // So must a leader's: a frame without a character ends it.
                _leader.Break();
            }
        }

        _previousD = d;
    }

    public void Finish(double endSample)
    {
        if (_inBlock)
        {
            _blocks.End(ToSample(_lastCharEnd));
            _inBlock = false;
        }
    }

    /// <summary>
    /// A fall to space at <paramref name="crossing"/> begins a character if the line may carry one there: inside a
    /// block always; outside, only with the evidence that begins a block (<see cref="BlockStart"/>).
    /// </summary>
    private void TryStartCharacter(double crossing)
    {
        BlockStart evidence;
        if (_hasLeader && !_inBlock)
        {
            if (!_leader.InLeader)
            {
                // Where characters start is not known yet: every fall may be a leader character's start bit.
                _leader.Fall(crossing, BitSamples);
                return;
            }

            evidence = BlockStart.Leader;
        }
        else if (_inBlock || _held.Count > 0)
        {
            evidence = BlockStart.InBlock;
        }
        else if (_mark.Samples >= IdleLineSamples)
        {
            evidence = BlockStart.IdleLine;
        }
        else if (_mark.HeardLeadIn && _mark.Samples >= FrameSamples)
        {
            evidence = BlockStart.LeadIn;
        }
        else if (_resuming)
        {
            // Characters follow back to back, so while the grid from before the loss of signal is still sure, only a
            // fall on it is a start bit; a fall after a whole character of mark (the line idle) starts a character
            // wherever it lies.
            if (_mark.Samples < FrameSamples && !_grid.MayResumeAt(crossing, BitSamples))
            {
                return;
            }

            evidence = BlockStart.Resumed;
        }
        else if (_isStream)
        {
            evidence = BlockStart.WithoutLeadIn;
        }
        else
        {
            // A checked layout: blocks begin after a lead-in or an idle line and nowhere else.
            return;
        }

        if (evidence is BlockStart.LeadIn or BlockStart.IdleLine or BlockStart.WithoutLeadIn && _held.Count == 0)
        {
            // A new recording learns its own tone balance, from this start bit on.
            _tones.ForgetSpaceLevel();
        }

        _charEvidence = evidence;
        _charConfirmed = StartIsConfirmed(crossing, evidence);
        _mark.StartBit();
        _framer.Begin(crossing, BitSamples);
    }

    /// <summary>
    /// Whether a start bit at <paramref name="crossing"/> is confirmed: the first after a lead-in, an idle line or a
    /// whole character of mark is; inside a block, or resumed on the grid kept over a loss of signal, it is as sure as
    /// that grid; resumed with no grid to hold it, or taken with no lead-in, it is not.
    /// <para>
    /// In a stream, neither is a fall less than a character after the mark tone before it broke: a loss of carrier
    /// (outside a block it does not end a lead-in, so that a short dropout in the lead-in does not lose the block) or a
    /// start bit that read mark at its centre (a dip in the lead-in is no character). Either may as well have hidden
    /// the start bit of the first character, and the fall then is a data bit of that character. In text that is a
    /// misframed character or two before a framing error sets it right; in a run of one byte repeated nothing ever does
    /// (0x9B sent over and over with two stop bits, framed from its third bit, reads 0x73 with every decision clean). A
    /// checked layout's checksum judges such a frame; a stream has only its own characters (<see
    /// cref="FrameAlignment"/>).
    /// </para>
    /// </summary>
    private bool StartIsConfirmed(double crossing, BlockStart evidence)
    {
        bool markWhole = !_isStream || evidence == BlockStart.Leader || crossing - _markBrokenAt >= FrameSamples;
        if ((evidence is BlockStart.LeadIn or BlockStart.IdleLine or BlockStart.Leader || _mark.Samples >= FrameSamples) && markWhole)
        {
            return true;
        }

        return evidence switch
        {
            BlockStart.InBlock => _held.Count > 0 ? _held.Confirmed(_held.Count - 1) : _grid.Confirmed,
            BlockStart.Resumed => _grid.HoldsAt(crossing, BitSamples) && _grid.Confirmed,
            _ => false,
        };
    }

    /// <summary>
    /// No carrier: the character in progress is void, and a block in progress ends at its last whole character. A
    /// stream may be taken up again after it; a checked layout waits for the next lead-in or idle line.
    /// </summary>
    private void LoseSignal()
    {
        _framer.Abandon();
        _mark.Restart(0);
        _held.Clear();
        if (_hasLeader)
        {
            _leader.Lose();
        }

        if (_inBlock)
        {
            _blocks.End(ToSample(_lastCharEnd), signalLost: true);
            _inBlock = false;
            _resuming = _isStream;
        }
    }

    /// <summary>The character's last bit was decided at sample <paramref name="n"/>.</summary>
    private void CompleteCharacter(double n)
    {
        _mark.Restart(0.5 * BitSamples);
        _lastCharEnd = n;
        if (_inBlock)
        {
            AddCharacter(_framer.Value, _framer.Levels, _framer.FramingOk, _framer.Start, _charConfirmed);
        }
        else if (_hasLeader)
        {
            LeaderCharacterRead();
        }
        else
        {
            Hold();
        }
    }

    /// <summary>
    /// The hunt read a leader character, well framed, that ended at sample <paramref name="n"/>: the characters after it
    /// are framed back to back from here.
    /// </summary>
    private void FoundLeader(double n)
    {
        _lastCharEnd = n;
        _mark.Restart(0.5 * BitSamples);

        // A new recording learns its own tone balance, from this leader on.
        _tones.ForgetSpaceLevel();
    }

    /// <summary>
    /// A character read on a leader's grid: another leader character (once the run is long enough, it gives the
    /// speed), the first character of a sync after a long enough leader (the block begins with it), or neither.
    /// </summary>
    private void LeaderCharacterRead()
    {
        int value = _framer.Value;
        bool framingOk = _framer.FramingOk;
        double start = _framer.Start;
        switch (_leader.Character(value, framingOk, start))
        {
            case LeaderCharacter.Leader when _leader.RunFound:
                _speed.Calibrate(_leader.Speed);
                KeepTiming();
                break;
            case LeaderCharacter.SyncStart:
                BeginBlock(start, BlockStart.Leader, confirmed: true);
                AddCharacter(value, _framer.Levels, framingOk, start, confirmed: true);
                break;
        }
    }

    /// <summary>
    /// A block's first characters wait until <see cref="HeldCharacterCount"/> have followed one another back to back;
    /// then the block begins with the first of them. A lone character between a lead-in and more mark tone is what a
    /// dip in the tone makes (its data bits all read mark), not the start of a block. A stream with no lead-in asks
    /// more: each held character must frame well with confident decisions, and one that does not voids those before it.
    /// </summary>
    private void Hold()
    {
        var levels = _framer.Levels;
        if (_held.Count == 0)
        {
            _heldEvidence = _charEvidence;
        }

        if (_heldEvidence == BlockStart.WithoutLeadIn
            && (!_framer.FramingOk || AsyncCharacterFramer.LeastDistance(levels) < HeldCharacterDistance))
        {
            _held.Clear();
            return;
        }

        _held.Add(_framer.Value, levels, _framer.Start, _charConfirmed, _framer.FramingOk);
        if (!_held.Full)
        {
            return;
        }

        BeginBlock(_held.Start(0), _heldEvidence, _held.Confirmed(0));
        for (int c = 0; c < _held.Count && _inBlock; c++)
        {
            AddCharacter(_held.Value(c), _held.Levels(c), _held.FramingOk(c), _held.Start(c), _held.Confirmed(c) || (c > 0 && _grid.Confirmed));
        }

        _held.Clear();
    }

    /// <summary>
    /// A block begins with the character whose start bit crossed zero at <paramref name="start"/>, on
    /// <paramref name="evidence"/> (see <see cref="BlockStart"/>; never <see cref="BlockStart.InBlock"/>).
    /// </summary>
    private void BeginBlock(double start, BlockStart evidence, bool confirmed)
    {
        _blocks.Begin(ToSample(start) - 0.5 * _correlatorWindow, EvidenceOf(evidence, confirmed));
        _inBlock = true;
        _resuming = false;
        if (evidence == BlockStart.Leader)
        {
            // The leader fixed where characters start: the block's grid is confirmed from its first character.
            _grid.Confirmed = true;
            _leader.BlockBegan();
        }

        // A block with no lead-in whose first start bit nothing confirmed finds out from its own characters whether
        // they can be framed anywhere else; so does a stream whose lead-in broke less than a character before it.
        _checkingAlignment = !confirmed && (evidence == BlockStart.WithoutLeadIn || (_isStream && evidence is BlockStart.LeadIn or BlockStart.IdleLine));
        if (_checkingAlignment)
        {
            _grid.Confirmed = false;
            _alignment.Reset();
        }
    }

    /// <summary>
    /// What the block stage is told of a block's start: a lead-in or an idle line is the format's own mark of one; a
    /// stream resumed on the character grid kept over a loss of signal is held by that grid as by a sync; a stream
    /// begun without a lead-in is aligned on its own characters (<see cref="FrameAlignment"/>), which price their own
    /// doubt; a stream resumed off the grid has no evidence, and the block stage doubts its first characters.
    /// </summary>
    private static BlockStartEvidence EvidenceOf(BlockStart evidence, bool confirmed) => evidence switch
    {
        BlockStart.LeadIn or BlockStart.IdleLine or BlockStart.Leader => BlockStartEvidence.LeadIn,
        BlockStart.Resumed when confirmed => BlockStartEvidence.Sync,
        BlockStart.WithoutLeadIn when confirmed => BlockStartEvidence.LeadIn,
        BlockStart.WithoutLeadIn => BlockStartEvidence.SelfAligned,
        _ => BlockStartEvidence.None,
    };

    /// <summary>A character of the block: its bits go to the block stage as decisions, then its byte.</summary>
    private void AddCharacter(int value, ReadOnlySpan<float> levels, bool framingOk, double start, bool confirmed)
    {
        _grid.Add(framingOk, start, confirmed);
        if (_checkingAlignment)
        {
            _alignment.Add(levels, start, BitSamples);
            if (_alignment.Unambiguous)
            {
                // Every other framing is ruled out: the characters from here on stand on a confirmed grid.
                _grid.Confirmed = true;
                _checkingAlignment = false;
            }
        }

        int first = _blocks.DecisionCount;
        for (int b = 0; b < levels.Length; b++)
        {
            float distance = AsyncCharacterFramer.Distance(b, levels.Length, levels[b]);
            _blocks.AddDecision(distance, 1 - distance, 1);
        }

        _blocks.NoteLevel(_level);
        _blocks.NoteSpeed(_speed.Speed);
        if (_blocks.AddByte((byte)value, first, framingOk, ToSample(start), confirmed ? 0 : UnconfirmedFramingDoubt))
        {
            _inBlock = false;
        }
    }
}
