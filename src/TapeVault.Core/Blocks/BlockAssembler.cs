using System.Collections.Immutable;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Blocks;

/// <summary>
/// Turns the bytes of one detector setting into block candidates, following the profile's layout: header, payload
/// (fixed length or from a length field), checksum. A stream layout makes one unchecked block from a lead-in to the
/// next loss of signal. The symbol decoders reach it only through <see cref="IBlockSink"/>: they say where a block
/// begins and on what evidence, hand over each decision (read or guessed) and byte, and say when the signal is lost;
/// what is missing after a loss of signal is the next block's doubt (it begins on no evidence). <see cref="BlockScorer"/>
/// judges each finished block. Where a block begins inside the data of another (<see cref="BeginInside"/>), a second
/// assembler of the same setting (<see cref="Alongside"/>) reads it while the first reads on, and the first's check
/// says which of the two is handed on.
/// </summary>
public sealed partial class BlockAssembler : IBlockSink
{
    private BlockLayout _layout;
    private BlockScorer _scorer;
    private BlockLayoutCodec _codec;
    private readonly int _settingIndex;
    private readonly string _settingName;
    private readonly double _sampleRate;
    private readonly Action<BlockCandidate> _finished;
    private readonly List<byte> _bytes = new(512);
    private readonly List<int> _byteFirstDecision = new(512);
    private readonly List<double> _byteSample = new(512);
    private readonly List<float> _byteFramingDoubt = new(512);
    private int _framingErrors;
    private int _guessedDecisions;
    private int _expectedTotal;
    private double _startSample;
    private BlockStartEvidence _evidence;

    /// <summary>The block being ended ends because the signal was lost (<see cref="End"/>), not at an idle line.</summary>
    private bool _signalLost;
    private double _levelSum;
    private int _levelCount;
    private double _speedSum;
    private int _speedCount;

    // The order of the blocks read, shared with the assembler alongside.
    private readonly StrongBox<int> _ordinal;
    private readonly FormatProfile _profile;
    private BlockAssembler? _alongside;

    // Where a block was begun inside this one's data (the first such): what this block held there, so that it ends
    // there if its check does not hold.
    private Cut? _cut;

    // This block began inside the data of the block alongside, whose check has yet to say whether this one is a block.
    private bool _awaitsOuter;

    // The block alongside held its check over this one: this one is its data, and is not handed on.
    private bool _isData;

    // Blocks read inside the block alongside and finished before it: handed on, or dropped, once its check says.
    private readonly List<BlockCandidate> _held = [];

    public BlockAssembler(FormatProfile profile, int settingIndex, string settingName, double sampleRate, List<BlockCandidate> output)
        : this(profile, settingIndex, settingName, sampleRate, (output ?? throw new ArgumentNullException(nameof(output))).Add)
    {
    }

    /// <param name="finished">Takes each block the moment it is finished (from the thread that decodes this setting).</param>
    public BlockAssembler(FormatProfile profile, int settingIndex, string settingName, double sampleRate, Action<BlockCandidate> finished)
    {
        ArgumentNullException.ThrowIfNull(profile);
        ArgumentNullException.ThrowIfNull(finished);
        _profile = profile;
        _ordinal = new StrongBox<int>();
        _layout = profile.Layout;
        _scorer = new BlockScorer(_layout, profile.Family, profileId: profile.Id, characterBaud: profile.Fsk?.Baud, characterBits: profile.Framing.BitsPerByte, characterFraming: profile.Framing);
        _codec = BlockLayoutCodec.For(_layout);
        _kinds = new KindSequence(profile);
        _settingIndex = settingIndex;
        _settingName = settingName;
        _sampleRate = sampleRate;
        _finished = finished;

        // A format that marks each block's end on tape: a block is complete at its end marker, not at its layout's length.
        _endMarked = profile.PulseWidth is { EndOfBlock.Count: > 0 };
    }

    // The assembler alongside another: the same setting and output, the same order of blocks.
    private BlockAssembler(BlockAssembler other)
        : this(other._profile, other._settingIndex, other._settingName, other._sampleRate, other._finished)
    {
        _ordinal = other._ordinal;
        _alongside = other;
    }

    /// <summary>The assembler that reads a block begun inside this one's block while this one reads on (made when first asked for).</summary>
    public IBlockSink Alongside => _alongside ??= new BlockAssembler(this);

    /// <summary>
    /// A block begins at <paramref name="sample"/> inside the data of the block that <see cref="Alongside"/> reads, and
    /// both read on by their own lengths. Where that block's check holds, this one is its data and is not handed on;
    /// where it does not, that block ends at <paramref name="cutSample"/>, holding what it held when this one began.
    /// </summary>
    public void BeginInside(double sample, BlockStartEvidence evidence, double cutSample)
    {
        var outer = _alongside ?? throw new InvalidOperationException("No block is read alongside this assembler's.");
        if (!outer.InBlock || InBlock)
        {
            throw new InvalidOperationException("A block begins inside another only while that one is read and this assembler is free.");
        }

        outer._cut ??= outer.CutHere(cutSample);
        Begin(sample, evidence);
        _awaitsOuter = true;
    }

    private Cut CutHere(double sample) =>
        new(_bytes.Count, Decisions.Count, _framingErrors, _guessedDecisions, _levelSum, _levelCount, _speedSum, _speedCount, sample);

    /// <summary>The decisions of the block being read; decoders hand them over through <see cref="AddDecision"/> and <see cref="AddGuessedDecision"/> only.</summary>
    private DecisionLog Decisions { get; } = new();

    /// <summary>How many decisions the block being read holds so far: the index the next decision will have.</summary>
    public int DecisionCount => Decisions.Count;

    public bool InBlock { get; private set; }

    /// <summary>
    /// A block begins at <paramref name="sample"/>, on the strength of <paramref name="evidence"/>. A block begun on no
    /// evidence is never clean, whatever its check says: it may be noise or the middle of another block.
    /// </summary>
    public void Begin(double sample, BlockStartEvidence evidence)
    {
        InBlock = true;
        _cut = null;
        _awaitsOuter = false;
        _isData = false;
        _startSample = sample;
        _evidence = evidence;
        _bytes.Clear();
        _byteFirstDecision.Clear();
        _byteSample.Clear();
        _byteFramingDoubt.Clear();
        Decisions.Clear();
        _framingErrors = 0;
        _guessedDecisions = 0;
        _levelSum = 0;
        _levelCount = 0;
        _speedSum = 0;
        _speedCount = 0;
        if (_kinds.Many)
        {
            (_layout, _scorer, _codec) = _kinds.Begin();
        }

        _expectedTotal = _layout.IsStream ? int.MaxValue : _layout.HeaderBytes + (_layout.PayloadBytes ?? 0) + _scorer.ChecksumBytes;
        if (_kinds.Many && _layout.LengthRule is not null)
        {
            // An earlier block gave the length; without it, the block runs to its end marker.
            _expectedTotal = _kinds.PayloadFromRule() is { } fromRule
                ? _layout.HeaderBytes + (int)Math.Min(fromRule, _layout.MaximumPayloadBytes) + _scorer.ChecksumBytes
                : int.MaxValue;
        }
    }

    public void NoteLevel(float envelope)
    {
        _levelSum += envelope;
        _levelCount++;
    }

    /// <summary>
    /// One decision (pulse class, bit, tone) of the block: its distance to the decision boundary, its residual from
    /// the nominal value, and the distance from nominal to the boundary, all in one unit.
    /// </summary>
    public void AddDecision(float distance, float residual, float scale) => Decisions.Add(distance, residual, scale);

    /// <summary>
    /// A decision that was guessed, not read (an erased bit, a marker or stop bit the signal did not show): margin 0,
    /// counted as a guess. A checksum that holds over guesses vouches for them only as far as its false-match odds
    /// reach: n guesses are 2^n tries.
    /// </summary>
    public void AddGuessedDecision()
    {
        Decisions.Add(0, 1, 1);
        _guessedDecisions++;
    }

    public void NoteSpeed(double speed)
    {
        _speedSum += speed;
        _speedCount++;
    }

    /// <summary>
    /// Adds one byte whose decisions start at <paramref name="firstDecision"/> in <see cref="Decisions"/>. True when the
    /// block is complete. <paramref name="framingDoubt"/> is the chance, beyond its decisions, that the byte was framed
    /// in the wrong place (an asynchronous character whose start bit nothing confirmed).
    /// </summary>
    public bool AddByte(byte value, int firstDecision, bool framingOk, double sample, float framingDoubt = 0)
    {
        if (!InBlock)
        {
            return false;
        }

        _bytes.Add(value);
        _byteFirstDecision.Add(firstDecision);
        _byteSample.Add(sample);
        _byteFramingDoubt.Add(Math.Clamp(framingDoubt, 0f, 0.99f));
        if (!framingOk)
        {
            _framingErrors++;
        }

        if (!_layout.IsStream && _bytes.Count == _layout.HeaderBytes && _layout.FieldWithRole(FieldRole.PayloadLength) is { } lengthField)
        {
            long length = _codec.ReadField(CollectionsMarshal.AsSpan(_bytes), lengthField);

            // A length beyond the layout's limit means a damaged header: read up to the limit and let the checksum fail.
            int payload = (int)Math.Min(length, _layout.MaximumPayloadBytes);
            _expectedTotal = _layout.HeaderBytes + payload + _scorer.ChecksumBytes;
        }

        if (_endMarked ? _bytes.Count >= _kinds.LongestBlock : _bytes.Count >= _expectedTotal)
        {
            Emit(sample, truncated: false);
            return true;
        }

        return false;
    }

    /// <summary>The block ends where its bytes stopped: a stream block ends here; a fixed block ends short and fails.</summary>
    public void End(double sample, bool signalLost = false)
    {
        if (!InBlock)
        {
            return;
        }

        if (_bytes.Count == 0)
        {
            InBlock = false;
            return;
        }

        _signalLost = signalLost;
        Emit(sample, truncated: !_layout.IsStream);
        _signalLost = false;
    }

    /// <param name="atMarker">The block ended at the end marker its format writes.</param>
    private void Emit(double endSample, bool truncated, bool atMarker = false)
    {
        InBlock = false;
        var reading = Build(endSample, truncated, atMarker);
        if (_cut is { } cut)
        {
            // A block began inside this one. Read by its length, this one holds its check (and is no block's data
            // itself): what began inside is its data. Else this one ends where the block inside began.
            _cut = null;
            bool holds = reading.Status == BlockStatus.Clean && !_isData;
            if (!holds)
            {
                cut.Restore(this);
                reading = Build(cut.Sample, truncated: !_layout.IsStream, atMarker: false);
            }

            _alongside!.OuterChecked(holds);
        }

        if (_isData)
        {
            return;
        }

        if (_awaitsOuter)
        {
            _held.Add(reading);
            return;
        }

        _finished(reading);
    }

    // The block alongside, that this one's began inside, is finished: its check held over this one (which is then its
    // data), or it did not (and this one is a block).
    private void OuterChecked(bool holds)
    {
        if (!holds)
        {
            foreach (var held in _held)
            {
                _finished(held);
            }
        }

        _held.Clear();
        if (InBlock && _awaitsOuter)
        {
            _isData = holds;
        }

        _awaitsOuter = false;
    }

    private BlockCandidate Build(double endSample, bool truncated, bool atMarker)
    {
        var all = _bytes.ToArray();
        var evidence = _evidence;
        int framingErrors = _framingErrors;
        var end = _signalLost && _layout.IsStream ? BlockEndEvidence.SignalLost : BlockEndEvidence.OwnBytes;
        if (_kinds.Many && !truncated && _layout.LengthRule is not null)
        {
            long? given = _kinds.PayloadFromRule();
            end = given is null ? BlockEndEvidence.MarkerOnly : BlockEndEvidence.OwnBytes;
            if (given is { } length && length != all.Length - _layout.HeaderBytes - _scorer.ChecksumBytes)
            {
                // A kind whose length an earlier block gives, ended at a marker at another length: a marker was lost or
                // gained on the way, a framing error.
                framingErrors++;
            }
            else if (given is not null && atMarker)
            {
                // Ended at its marker, where the earlier block said it would.
                end = BlockEndEvidence.MarkerAtGivenLength;
            }
        }

        if (_kinds.Many)
        {
            // Before the sync is made the first copy's: the copy read is what says which block comes next.
            _kinds.Read(all, truncated);
        }

        // The copy read, before the sync is made the first copy's.
        int? syncCopy = _codec.SyncCopyRead(all);
        if (_codec.SyncField is not null && !_codec.NormalizeSync(all, truncated ? -1 : all.Length - _codec.HeaderBytes - _codec.CheckBytes))
        {
            // The sync bytes are the format's mark of a block start: read wrong, they mark nothing.
            evidence = BlockStartEvidence.None;
        }

        var score = _scorer.Score(all, CollectionsMarshal.AsSpan(_byteFirstDecision), CollectionsMarshal.AsSpan(_byteFramingDoubt), Decisions, framingErrors, _guessedDecisions, evidence, truncated, end, CollectionsMarshal.AsSpan(_byteSample));
        if (_kinds.Many)
        {
            _kinds.Judged(score.Status == BlockStatus.Clean);
        }

        int headerBytes = score.HeaderBytes;
        int payloadEnd = score.PayloadEnd;
        var header = all.AsSpan(0, headerBytes);
        var payload = all.AsSpan(headerBytes, payloadEnd - headerBytes);
        var payloadSeconds = new double[payloadEnd - headerBytes];
        for (int b = headerBytes; b < payloadEnd; b++)
        {
            payloadSeconds[b - headerBytes] = _byteSample[b] / _sampleRate;
        }

        double level = _levelCount > 0 ? _levelSum / _levelCount : 0;
        int ordinal = _ordinal.Value++;
        return new BlockCandidate
        {
            SettingIndex = _settingIndex,
            SettingName = _settingName,
            Identity = _kinds.Many ? _kinds.Identity(header, ordinal) : ReadIdentity(_layout, header, ordinal),
            Header = [.. header],
            Payload = [.. payload],
            StoredChecksum = score.StoredChecksum,
            Status = score.Status,
            Doubts = score.Doubts,
            Confidence = score.Confidence,
            ModelConfidence = score.ModelConfidence,
            ByteMargins = score.PayloadMargins,
            ByteErrorOdds = score.PayloadErrorOdds,
            HeaderErrorOdds = score.HeaderErrorOdds,
            ChecksumErrorOdds = score.ChecksumErrorOdds,
            ByteSeconds = ImmutableArray.Create(payloadSeconds),
            Decisions = Decisions.Count,
            AmbiguousDecisions = score.AmbiguousDecisions,
            MinimumMargin = score.MinimumMargin,
            MeanMargin = score.MeanMargin,
            FramingErrors = framingErrors,
            LevelDbfs = level > 0 ? 20 * Math.Log10(level) : -120,
            SnrDb = score.SnrDb,
            Speed = _speedCount > 0 ? _speedSum / _speedCount : 1,
            StartSeconds = _startSample / _sampleRate,
            EndSeconds = endSample / _sampleRate,
            Truncated = truncated,
            SyncCopy = syncCopy,
        };
    }

    /// <summary>What a block held where another began inside it, and where that was.</summary>
    private readonly record struct Cut(int Bytes, int Decisions, int FramingErrors, int Guessed, double LevelSum, int LevelCount, double SpeedSum, int SpeedCount, double Sample)
    {
        /// <summary>Puts <paramref name="assembler"/>'s block back as it stood here.</summary>
        public void Restore(BlockAssembler assembler)
        {
            int extra = assembler._bytes.Count - Bytes;
            assembler._bytes.RemoveRange(Bytes, extra);
            assembler._byteFirstDecision.RemoveRange(Bytes, extra);
            assembler._byteSample.RemoveRange(Bytes, extra);
            assembler._byteFramingDoubt.RemoveRange(Bytes, extra);
            assembler.Decisions.Truncate(Decisions);
            assembler._framingErrors = FramingErrors;
            assembler._guessedDecisions = Guessed;
            assembler._levelSum = LevelSum;
            assembler._levelCount = LevelCount;
            assembler._speedSum = SpeedSum;
            assembler._speedCount = SpeedCount;
        }
    }

    /// <summary>The identity the header's fields give, as far as <paramref name="header"/> holds them whole.</summary>
    public static BlockIdentity ReadIdentity(BlockLayout layout, ReadOnlySpan<byte> header, int ordinal)
    {
        ArgumentNullException.ThrowIfNull(layout);
        string? fileName = null;
        long? fileId = null;
        long? blockNumber = null;
        int offset = 0;
        foreach (var field in layout.Header)
        {
            if (offset + field.Bytes > header.Length)
            {
                break;
            }

            var bytes = header.Slice(offset, field.Bytes);
            switch (field.Role)
            {
                case FieldRole.FileName:
                    fileName = DecodeName(bytes);
                    break;
                case FieldRole.FileId:
                    fileId = (long)BlockLayoutCodec.ReadUnsigned(bytes, field.BigEndian);
                    break;
                case FieldRole.BlockNumber:
                    blockNumber = (long)BlockLayoutCodec.ReadUnsigned(bytes, field.BigEndian);
                    break;
            }

            offset += field.Bytes;
        }

        return new BlockIdentity(fileName, fileId, blockNumber, ordinal);
    }

    /// <summary>A file name as printable ASCII with trailing spaces and zeros removed; other bytes become '?'.</summary>
    public static string DecodeName(ReadOnlySpan<byte> bytes)
    {
        Span<char> chars = stackalloc char[bytes.Length];
        int length = 0;
        for (int i = 0; i < bytes.Length; i++)
        {
            byte b = bytes[i];
            chars[i] = b is >= 0x20 and < 0x7F ? (char)b : b == 0 ? ' ' : '?';
            if (chars[i] != ' ')
            {
                length = i + 1;
            }
        }

        return new string(chars[..length]);
    }
}
