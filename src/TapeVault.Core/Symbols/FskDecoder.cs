using TapeVault.Core.Blocks;
using TapeVault.Core.Bytes;
using TapeVault.Core.Detection;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;

namespace TapeVault.Core.Symbols;

/// <summary>
/// Frequency-shift keying, framed like a serial line: the policy of when blocks begin and end. The stages under it
/// are the <see cref="ToneDetector"/> (the soft decision D, positive for mark, and whether there is a carrier), the
/// <see cref="MarkPeriodSpeedTracker"/> (the playback speed from the mark tone's periods) and the
/// <see cref="AsyncCharacterFramer"/> (a fall of D through zero after enough mark tone is a start bit; the other bits
/// are read one bit period apart from it).
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

    /// <summary>Characters that must follow one another back to back before a block begins with them.</summary>
    private const int HeldCharacters = 2;

    /// <summary>
    /// The least decision distance (D signed toward the start and stop bits' values, |D| for the others) of a character
    /// held before a block with no lead-in: noise alone gives D uniform on ±1 in a one-bit window, so each of a
    /// character's ten or more decisions clears half way in one case of two, and two such characters in a row come
    /// by chance about once in ten million tries.
    /// </summary>
    private const float HeldCharacterDistance = 0.5f;

    /// <summary>Characters in a row, neither the leader's nor a sync's first, after which a leader counts as lost.</summary>
    private const int LeaderMisses = 2;

    /// <summary>How far, in bits, one leader character's start may lie from where the run of them so far puts it.</summary>
    private const double LeaderJitterBits = 0.4;

    private readonly FskEncoding _fsk;
    private readonly ByteFraming _framing;
    private readonly bool _isStream;
    private readonly IBlockSink _blocks;
    private readonly double _sampleRate;
    private readonly CharacterLeadIn? _leader;
    private readonly byte[] _syncFirstBytes = [];
    private LeaderHunt _hunt;
    private LeadInFinder _leaderRun;
    private bool _inLeader;
    private double _leaderLastStart;
    private int _leaderMisses;
    private readonly double _evidenceGain;
    private ToneDetector _tones;
    private MarkPeriodSpeedTracker _speed;
    private AsyncCharacterFramer _framer;
    private FrameAlignment _alignment;
    private float _previousD;
    private float _level;
    private double _noCarrierRun;
    private bool _resuming;
    private double _markRun;
    private double _markRunBeforeStart;
    private int _negativeRun;
    private double _markEvidence;
    private bool _inBlock;
    private double _lastCharEnd;
    private double _gridStart = double.NaN;

    // What would begin a block with the character being read, and whether its start bit is confirmed.
    private BlockStart _charEvidence;
    private bool _charConfirmed = true;

    // Whether the character grid goes back to a confirmed start bit (after a lead-in or an idle line, or ruled the
    // only framing by the characters themselves), and whether the block in progress is still finding that out.
    private bool _gridConfirmed = true;
    private bool _checkingAlignment;

    // A block's first characters, held until enough of them have followed one another (see Hold).
    private readonly float[] _heldLevels;
    private readonly int[] _heldValue = new int[HeldCharacters];
    private readonly double[] _heldStart = new double[HeldCharacters];
    private readonly bool[] _heldConfirmed = new bool[HeldCharacters];
    private readonly bool[] _heldFramingOk = new bool[HeldCharacters];
    private int _heldCount;
    private BlockStart _heldEvidence;

    public FskDecoder(FormatProfile profile, bool countsBothEdges, double sampleRate, IBlockSink blocks)
    {
        ArgumentNullException.ThrowIfNull(profile);
        _fsk = profile.Fsk ?? throw new ArgumentException("The profile is not an FSK profile.", nameof(profile));
        _framing = profile.Framing;
        _isStream = profile.Layout.IsStream;
        _blocks = blocks;
        _sampleRate = sampleRate;
        _tones = new ToneDetector(_fsk.Baud, sampleRate);
        _speed = new MarkPeriodSpeedTracker(sampleRate / _fsk.MarkHz * (countsBothEdges ? 0.5 : 1), _tones.Window);
        _framer = new AsyncCharacterFramer(_framing);
        _alignment = new FrameAlignment(_framing);
        _heldLevels = new float[HeldCharacters * _framer.FrameBits];
        double leadInSamples = Math.Max(_fsk.LeadInMinimumSeconds * sampleRate, 2.0 * _tones.Window);
        _evidenceGain = 2.0 / leadInSamples;
        if (_fsk.LeadInCharacters is { } leader)
        {
            _leader = leader;
            _hunt = new LeaderHunt(_framing, leader);

            // The leader's characters follow one another a frame apart: a run of near-equal intervals, whose mean is
            // the frame as the tape plays, within the speeds any lead-in may be found at.
            double frame = _framing.BitsPerByte / _fsk.Baud;
            _leaderRun = new LeadInFinder(
                frame,
                Math.Max(2, leader.MinimumCount - 1),
                frame / (1 + LeadInFinder.MaximumSpeedError),
                frame / (1 - LeadInFinder.MaximumSpeedError),
                LeaderJitterBits / _framing.BitsPerByte);
            if (BlockLayoutCodec.For(profile.Layout).SyncField is { } sync)
            {
                _syncFirstBytes = [.. sync.Expected.Select(e => e[0])];
            }
        }
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

    /// <summary>
    /// Mostly clear mark tone (D above 0.5) over about the lead-in's length: a running mean of ±1, with a time
    /// constant of half the minimum lead-in, above 0.4 (seven windows in ten clearly mark; white noise alone gives
    /// one in four, since D is then uniform on ±1). A fraction rather than an unbroken run, so that the noise of a
    /// poor capture, which breaks any run of mark now and then, does not hide a lead-in.
    /// </summary>
    private bool HeardLeadIn => _markEvidence > 0.4;

    private double BitSamples => _sampleRate / (_fsk.Baud * _speed.Speed);

    /// <summary>One character frame (start, data, parity and all stop bits) in samples at the measured speed.</summary>
    private double FrameSamples => _framing.BitsPerByte * BitSamples;

    private double IdleLineSamples => IdleLineCharacters * FrameSamples;

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
        for (int i = 0; i < tones.Length; i++)
        {
            bool inChar = _framer.InCharacter;
            float d = _tones.Next(tones.Mark(i), tones.Space(i), learnMark: inChar || _inBlock || _inLeader || HeardLeadIn, learnSpace: inChar);
            double n = chunkStart + i;
            _speed.Check(d, n);
            if (_leader is not null && !_inBlock && !_inLeader && _hunt.Step(d, _previousD, n, BitSamples))
            {
                FoundLeader(n);
            }

            // Half a bit without carrier is a loss of signal; a shorter fade (deep noise can null a one-bit window for
            // a moment) is not.
            _noCarrierRun = _tones.Carrier ? 0 : _noCarrierRun + 1;
            if (_noCarrierRun >= 0.5 * BitSamples && (inChar || _inBlock || _heldCount > 0 || _inLeader))
            {
                LoseSignal();
            }
            else if (inChar)
            {
                switch (_framer.Step(d, _previousD, n, BitSamples))
                {
                    case CharacterStep.FalseStart:
                        // Not a start bit after all: a glitch in the mark tone. Noise dips like this are common in a
                        // noisy lead-in, so the run of mark seen before it stands, as if the dip had not happened.
                        _markRun = _markRunBeforeStart + (n - _framer.Start);
                        break;
                    case CharacterStep.Complete:
                        CompleteCharacter(n);
                        break;
                }
            }
            else
            {
                if (d < 0 && _previousD >= 0 && _markRun >= 0.25 * BitSamples)
                {
                    // A fall through zero: D crosses zero half a window after a mark-to-space boundary.
                    TryStartCharacter(n - 1 + _previousD / (_previousD - d));
                }

                // The run survives the slope down to zero, so it is still whole when the crossing comes, and it survives
                // dips below zero shorter than a quarter bit: noise makes those in any lead-in heard at low SNR, and a
                // real space lasts a whole bit.
                _negativeRun = d < 0 ? _negativeRun + 1 : 0;
                _markEvidence += ((d > 0.5f ? 1 : -1) - _markEvidence) * _evidenceGain;
                _markRun = d > 0.3f ? _markRun + 1 : _negativeRun > 0.25 * BitSamples ? 0 : _markRun;
                if (_inBlock && n - _lastCharEnd >= IdleLineSamples)
                {
                    // The line is idle while the block still expects characters: the block ends here, and the mark
                    // tone that follows may be the next block's lead-in.
                    _blocks.End(_lastCharEnd);
                    _inBlock = false;
                }

                if (_heldCount > 0 && n - _lastCharEnd >= FrameSamples)
                {
                    // Characters held before a block must follow one another back to back.
                    _heldCount = 0;
                }

                if (_inLeader && n - _lastCharEnd >= FrameSamples)
                {
                    // So must a leader's: a frame without a character ends it.
                    _inLeader = false;
                }
            }

            _previousD = d;
        }

        _speed.EndChunk();
    }

    public void Finish(double endSample)
    {
        if (_inBlock)
        {
            _blocks.End(_lastCharEnd);
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
        if (_leader is not null && !_inBlock)
        {
            if (!_inLeader)
            {
                // Where characters start is not known yet: every fall may be a leader character's start bit.
                _hunt.Fall(crossing, BitSamples);
                return;
            }

            evidence = BlockStart.Leader;
        }
        else if (_inBlock || _heldCount > 0)
        {
            evidence = BlockStart.InBlock;
        }
        else if (_markRun >= IdleLineSamples)
        {
            evidence = BlockStart.IdleLine;
        }
        else if (HeardLeadIn && _markRun >= FrameSamples)
        {
            evidence = BlockStart.LeadIn;
        }
        else if (_resuming)
        {
            if (!MayResumeAt(crossing))
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

        if (evidence is BlockStart.LeadIn or BlockStart.IdleLine or BlockStart.WithoutLeadIn && _heldCount == 0)
        {
            // A new recording learns its own tone balance, from this start bit on.
            _tones.ForgetSpaceLevel();
        }

        _charEvidence = evidence;
        _charConfirmed = StartIsConfirmed(crossing, evidence);
        _markRunBeforeStart = _markRun;
        _framer.Begin(crossing, BitSamples);
    }

    /// <summary>
    /// Whether a fall to space after a loss of signal may be taken for a start bit. The stream resumes with no lead-in,
    /// so any fall from a data bit 1 to a 0 looks like one; and some falls frame as well as the true ones (in lower-case
    /// text, bits 5 and 6 are mark and bit 7 space, so a frame three bits early has its stop bits on mark too, and
    /// stays there). Characters follow back to back, so while the character grid from before the loss is still sure
    /// (the speed known to a fraction of a per cent over the gap), only a fall on that grid is a start bit. A fall
    /// after a whole character of mark (the line idle) starts a character wherever it lies, and once the grid has
    /// drifted past knowing, any fall does.
    /// </summary>
    private bool MayResumeAt(double crossing)
    {
        if (double.IsNaN(_gridStart) || _markRun >= FrameSamples)
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
    /// Whether a start bit at <paramref name="crossing"/> is confirmed: the first after a lead-in, an idle line or a
    /// whole character of mark is; inside a block, or resumed on the grid kept over a loss of signal, it is as sure as
    /// that grid; resumed with no grid to hold it, or taken with no lead-in, it is not.
    /// </summary>
    private bool StartIsConfirmed(double crossing, BlockStart evidence)
    {
        if (evidence is BlockStart.LeadIn or BlockStart.IdleLine or BlockStart.Leader || _markRun >= FrameSamples)
        {
            return true;
        }

        return evidence switch
        {
            BlockStart.InBlock => _heldCount > 0 ? _heldConfirmed[_heldCount - 1] : _gridConfirmed,
            BlockStart.Resumed => !double.IsNaN(_gridStart) && GridToleranceAt(crossing) <= MaximumGridToleranceBits && _gridConfirmed,
            _ => false,
        };
    }

    /// <summary>How far, in bits, a start bit at <paramref name="crossing"/> may lie off the grid kept since the last good character.</summary>
    private double GridToleranceAt(double crossing) => GridToleranceBits + (GridDriftPerBit * (crossing - _gridStart) / BitSamples);

    /// <summary>
    /// No carrier: the character in progress is void, and a block in progress ends at its last whole character. A
    /// stream may be taken up again after it; a checked layout waits for the next lead-in or idle line.
    /// </summary>
    private void LoseSignal()
    {
        _framer.Abandon();
        _markRun = 0;
        _heldCount = 0;
        _inLeader = false;
        if (_leader is not null)
        {
            _hunt.Stop();
        }

        if (_inBlock)
        {
            _blocks.End(_lastCharEnd);
            _inBlock = false;
            _resuming = _isStream;
        }
    }

    /// <summary>The character's last bit was decided at sample <paramref name="n"/>.</summary>
    private void CompleteCharacter(double n)
    {
        _markRun = 0.5 * BitSamples;
        _lastCharEnd = n;
        if (_inBlock)
        {
            AddCharacter(_framer.Value, _framer.Levels, _framer.FramingOk, _framer.Start, _charConfirmed);
        }
        else if (_leader is not null)
        {
            LeaderCharacter();
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
        _inLeader = true;
        _leaderLastStart = _hunt.FoundStart;
        _leaderMisses = 0;
        _leaderRun.Reset();
        _lastCharEnd = n;
        _markRun = 0.5 * BitSamples;

        // A new recording learns its own tone balance, from this leader on.
        _tones.ForgetSpaceLevel();
    }

    /// <summary>
    /// A character read on a leader's grid: another leader character (the run and the speed it gives grow), the first
    /// character of a sync after a long enough leader (the block begins with it), or neither (a damaged character;
    /// more than <see cref="LeaderMisses"/> in a row and the leader is lost).
    /// </summary>
    private void LeaderCharacter()
    {
        int value = _framer.Value;
        bool framingOk = _framer.FramingOk;
        double start = _framer.Start;
        if (framingOk && value == _leader!.Character)
        {
            _leaderRun.Add((start - _leaderLastStart) / _sampleRate);
            if (_leaderRun.Found)
            {
                _speed.Calibrate(_leaderRun.Speed);
            }

            _leaderLastStart = start;
            _leaderMisses = 0;
            return;
        }

        if (framingOk && _leaderRun.Found && Array.IndexOf(_syncFirstBytes, (byte)value) >= 0)
        {
            _inLeader = false;
            BeginBlock(start, BlockStart.Leader, confirmed: true);
            AddCharacter(value, _framer.Levels, framingOk, start, confirmed: true);
            return;
        }

        // A damaged character keeps the grid (the next start bit still follows its stop bits), but not for long.
        _leaderLastStart = start;
        if (++_leaderMisses >= LeaderMisses)
        {
            _inLeader = false;
        }
    }

    /// <summary>
    /// A block's first characters wait until <see cref="HeldCharacters"/> have followed one another back to back; then
    /// the block begins with the first of them. A lone character between a lead-in and more mark tone is what a dip
    /// in the tone makes (its data bits all read mark), not the start of a block. A stream with no lead-in asks more:
    /// each held character must frame well with confident decisions, and one that does not voids those before it.
    /// </summary>
    private void Hold()
    {
        var levels = _framer.Levels;
        if (_heldCount == 0)
        {
            _heldEvidence = _charEvidence;
        }

        if (_heldEvidence == BlockStart.WithoutLeadIn
            && (!_framer.FramingOk || AsyncCharacterFramer.LeastDistance(levels) < HeldCharacterDistance))
        {
            _heldCount = 0;
            return;
        }

        int frameBits = _framer.FrameBits;
        levels.CopyTo(_heldLevels.AsSpan(_heldCount * frameBits, frameBits));
        _heldValue[_heldCount] = _framer.Value;
        _heldStart[_heldCount] = _framer.Start;
        _heldConfirmed[_heldCount] = _charConfirmed;
        _heldFramingOk[_heldCount] = _framer.FramingOk;
        _heldCount++;
        if (_heldCount < HeldCharacters)
        {
            return;
        }

        BeginBlock(_heldStart[0], _heldEvidence, _heldConfirmed[0]);
        for (int c = 0; c < _heldCount && _inBlock; c++)
        {
            AddCharacter(_heldValue[c], _heldLevels.AsSpan(c * frameBits, frameBits), _heldFramingOk[c], _heldStart[c], _heldConfirmed[c] || (c > 0 && _gridConfirmed));
        }

        _heldCount = 0;
    }

    /// <summary>
    /// A block begins with the character whose start bit crossed zero at <paramref name="start"/>, on
    /// <paramref name="evidence"/> (see <see cref="BlockStart"/>; never <see cref="BlockStart.InBlock"/>).
    /// </summary>
    private void BeginBlock(double start, BlockStart evidence, bool confirmed)
    {
        _blocks.Begin(start - 0.5 * _tones.Window, EvidenceOf(evidence, confirmed));
        _inBlock = true;
        _resuming = false;
        if (evidence == BlockStart.Leader)
        {
            // The leader fixed where characters start: the block's grid is confirmed from its first character.
            _gridConfirmed = true;
            _leaderRun.Reset();
        }

        // A block with no lead-in whose first start bit nothing confirmed finds out from its own characters whether
        // they can be framed anywhere else.
        _checkingAlignment = evidence == BlockStart.WithoutLeadIn && !confirmed;
        if (_checkingAlignment)
        {
            _gridConfirmed = false;
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

    private void AddCharacter(int value, ReadOnlySpan<float> levels, bool framingOk, double start, bool confirmed)
    {
        if (framingOk)
        {
            _gridStart = start;
        }

        // The next character starts where this one ended: it is no surer than this one, whose framing failed or not.
        _gridConfirmed = framingOk ? confirmed : _gridConfirmed && confirmed;
        if (_checkingAlignment)
        {
            _alignment.Add(levels, start, BitSamples);
            if (_alignment.Unambiguous)
            {
                // Every other framing is ruled out: the characters from here on stand on a confirmed grid.
                _gridConfirmed = true;
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
        if (_blocks.AddByte((byte)value, first, framingOk, start, confirmed ? 0 : UnconfirmedFramingDoubt))
        {
            _inBlock = false;
        }
    }
}
