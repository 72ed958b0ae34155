using System.Collections.Immutable;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Blocks;

/// <summary>
/// Turns the bytes of one detector setting into block candidates, following the profile's layout: header, payload
/// (fixed length or from a length field), checksum. A stream layout makes one unchecked block from a lead-in to the
/// next loss of signal. The symbol decoders say where a block begins and when the signal is lost.
/// </summary>
public sealed class BlockAssembler
{
    // Beyond these odds of a false match among guessed bits, a holding checksum proves nothing.
    private const double MostGuessedMatchOdds = 0.01;

    private readonly BlockLayout _layout;
    private readonly IBlockChecksum? _checksum;
    private readonly int _settingIndex;
    private readonly string _settingName;
    private readonly double _sampleRate;
    private readonly List<BlockCandidate> _output;
    private readonly List<byte> _bytes = new(512);
    private readonly List<int> _byteFirstDecision = new(512);
    private readonly List<double> _byteSample = new(512);
    private readonly List<float> _byteFramingDoubt = new(512);
    private int _framingErrors;
    private int _erasedBits;
    private int _expectedTotal;
    private double _startSample;
    private double _levelSum;
    private int _levelCount;
    private double _speedSum;
    private int _speedCount;
    private int _ordinal;

    public BlockAssembler(FormatProfile profile, int settingIndex, string settingName, double sampleRate, List<BlockCandidate> output)
    {
        ArgumentNullException.ThrowIfNull(profile);
        _layout = profile.Layout;
        _checksum = _layout.Checksum is { } spec ? ChecksumCatalog.Get(spec.Algorithm) : null;
        _settingIndex = settingIndex;
        _settingName = settingName;
        _sampleRate = sampleRate;
        _output = output;
    }

    public DecisionLog Decisions { get; } = new();

    public bool InBlock { get; private set; }

    public void Begin(double sample)
    {
        InBlock = true;
        _startSample = sample;
        _bytes.Clear();
        _byteFirstDecision.Clear();
        _byteSample.Clear();
        _byteFramingDoubt.Clear();
        Decisions.Clear();
        _framingErrors = 0;
        _erasedBits = 0;
        _levelSum = 0;
        _levelCount = 0;
        _speedSum = 0;
        _speedCount = 0;
        _expectedTotal = _layout.IsStream ? int.MaxValue : _layout.HeaderBytes + (_layout.PayloadBytes ?? 0) + ChecksumBytes;
    }

    private int ChecksumBytes => _checksum?.Width ?? 0;

    public void NoteLevel(float envelope)
    {
        _levelSum += envelope;
        _levelCount++;
    }

    /// <summary>
    /// A bit of the block was not read at all (a bridged dropout) and stands as a guess: a decision of margin 0. A
    /// checksum that holds over guessed bits vouches for them only as far as its false-match odds reach: n guesses
    /// are 2^n tries.
    /// </summary>
    public void AddErasedBit()
    {
        Decisions.Add(0, 1, 1);
        _erasedBits++;
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
            long length = ReadField(lengthField);

            // A length beyond the layout's limit means a damaged header: read up to the limit and let the checksum fail.
            int payload = (int)Math.Min(length, _layout.MaximumPayloadBytes);
            _expectedTotal = _layout.HeaderBytes + payload + ChecksumBytes;
        }

        if (_bytes.Count >= _expectedTotal)
        {
            Emit(sample, truncated: false);
            return true;
        }

        return false;
    }

    /// <summary>The signal was lost: a stream block ends here; a fixed block ends short and fails.</summary>
    public void End(double sample)
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

        Emit(sample, truncated: !_layout.IsStream);
    }

    private long ReadField(HeaderField field)
    {
        int offset = 0;
        foreach (var f in _layout.Header)
        {
            if (ReferenceEquals(f, field))
            {
                break;
            }

            offset += f.Bytes;
        }

        long value = 0;
        for (int i = 0; i < field.Bytes; i++)
        {
            int index = field.BigEndian ? offset + i : offset + field.Bytes - 1 - i;
            value = (value << 8) | _bytes[index];
        }

        return value;
    }

    private void Emit(double endSample, bool truncated)
    {
        InBlock = false;
        int headerBytes = _layout.IsStream ? 0 : Math.Min(_layout.HeaderBytes, _bytes.Count);
        int checksumBytes = ChecksumBytes;
        int payloadEnd = truncated ? _bytes.Count : Math.Max(headerBytes, _bytes.Count - checksumBytes);
        var all = _bytes.ToArray();
        var header = all.AsSpan(0, headerBytes);
        var payload = all.AsSpan(headerBytes, payloadEnd - headerBytes);

        var (sigma, typicalScale) = Decisions.NoiseEstimate();
        int byteCount = all.Length;
        var byteLogOk = new double[byteCount];
        var byteMargin = new float[byteCount];
        int ambiguous = 0;
        double marginSum = 0;
        double minimumMargin = 1;
        for (int b = 0; b < byteCount; b++)
        {
            int first = _byteFirstDecision[b];
            int last = b + 1 < byteCount ? _byteFirstDecision[b + 1] : Decisions.Count;
            double logOk = 0;
            float minMargin = 1;
            for (int i = first; i < last; i++)
            {
                logOk += Decisions.LogRightOdds(i, sigma);
                float m = Decisions.Margin(i);
                minMargin = Math.Min(minMargin, m);
                marginSum += m;
                if (m < DecisionLog.AmbiguousMargin)
                {
                    ambiguous++;
                }
            }

            byteLogOk[b] = logOk + Math.Log(1 - _byteFramingDoubt[b]);
            byteMargin[b] = minMargin;
            minimumMargin = Math.Min(minimumMargin, minMargin);
        }

        double logPayloadOk = 0;
        double logRestOk = 0;
        for (int b = 0; b < byteCount; b++)
        {
            if (b >= headerBytes && b < payloadEnd)
            {
                logPayloadOk += byteLogOk[b];
            }
            else
            {
                logRestOk += byteLogOk[b];
            }
        }

        BlockStatus status;
        uint? stored = null;
        double confidence;
        if (_checksum is null)
        {
            status = truncated ? BlockStatus.Failed : BlockStatus.Unchecked;
            confidence = Math.Exp(logPayloadOk);
        }
        else if (truncated)
        {
            status = BlockStatus.Failed;
            confidence = 0;
        }
        else
        {
            var checkSpan = all.AsSpan(payloadEnd, checksumBytes);
            stored = ReadUnsigned(checkSpan, _layout.Checksum!.BigEndian);
            var covered = _layout.Checksum.Covers == ChecksumCoverage.Payload ? payload : all.AsSpan(0, payloadEnd);
            uint computed = _checksum.Compute(covered) & WidthMask(checksumBytes);
            status = computed == stored ? BlockStatus.Clean : BlockStatus.Failed;
            if (status == BlockStatus.Clean && Math.ScaleB(_checksum.FalseMatchProbability, _erasedBits) > MostGuessedMatchOdds)
            {
                // Erasures guessed as zeros can make a checksum's own codeword (all zeros passes a CRC with no
                // initial value): an unproven reading, left for the merge to vote on.
                status = BlockStatus.Failed;
            }

            // A failed block whose (damaged) header claims no payload has nothing that could be right: trusting its empty
            // payload would mark a misread as certain.
            confidence = status == BlockStatus.Clean
                ? PosteriorGivenMatch(logPayloadOk + logRestOk, _checksum.FalseMatchProbability)
                : payloadEnd == headerBytes ? 0
                : computed == stored ? Math.Exp(logPayloadOk)
                : PayloadRightGivenMismatch(logPayloadOk, logRestOk);
        }

        if (_framingErrors > 0 && status == BlockStatus.Clean)
        {
            // A checksum can hold over a framing slip only by chance; keep the block but trust it less.
            confidence *= 0.5;
        }

        var identity = ReadIdentity(_layout, header, _ordinal);
        var payloadMargins = byteMargin.AsSpan(headerBytes, payloadEnd - headerBytes).ToArray();
        var payloadOdds = new float[payloadEnd - headerBytes];
        var payloadSeconds = new double[payloadEnd - headerBytes];
        for (int b = headerBytes; b < payloadEnd; b++)
        {
            payloadOdds[b - headerBytes] = (float)(1 - Math.Exp(byteLogOk[b]));
            payloadSeconds[b - headerBytes] = _byteSample[b] / _sampleRate;
        }

        double level = _levelCount > 0 ? _levelSum / _levelCount : 0;
        var headerOdds = new float[headerBytes];
        for (int b = 0; b < headerBytes; b++)
        {
            headerOdds[b] = (float)(1 - Math.Exp(byteLogOk[b]));
        }

        var checksumOdds = new float[stored is null ? 0 : byteCount - payloadEnd];
        for (int b = 0; b < checksumOdds.Length; b++)
        {
            checksumOdds[b] = (float)(1 - Math.Exp(byteLogOk[payloadEnd + b]));
        }

        _output.Add(new BlockCandidate
        {
            SettingIndex = _settingIndex,
            SettingName = _settingName,
            Identity = identity,
            Header = [.. header],
            Payload = [.. payload],
            StoredChecksum = stored,
            Status = status,
            Confidence = Math.Clamp(confidence, 0, 1),
            ByteMargins = ImmutableArray.Create(payloadMargins),
            ByteErrorOdds = ImmutableArray.Create(payloadOdds),
            HeaderErrorOdds = ImmutableArray.Create(headerOdds),
            ChecksumErrorOdds = ImmutableArray.Create(checksumOdds),
            ByteSeconds = ImmutableArray.Create(payloadSeconds),
            Decisions = Decisions.Count,
            AmbiguousDecisions = ambiguous,
            MinimumMargin = Decisions.Count > 0 ? minimumMargin : 0,
            MeanMargin = Decisions.Count > 0 ? marginSum / Decisions.Count : 0,
            FramingErrors = _framingErrors,
            LevelDbfs = level > 0 ? 20 * Math.Log10(level) : -120,
            SnrDb = 20 * Math.Log10(typicalScale / sigma),
            Speed = _speedCount > 0 ? _speedSum / _speedCount : 1,
            StartSeconds = _startSample / _sampleRate,
            EndSeconds = endSample / _sampleRate,
            Truncated = truncated,
        });
        _ordinal++;
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
                    fileId = ReadUnsigned(bytes, field.BigEndian);
                    break;
                case FieldRole.BlockNumber:
                    blockNumber = ReadUnsigned(bytes, field.BigEndian);
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

    private static uint ReadUnsigned(ReadOnlySpan<byte> bytes, bool bigEndian)
    {
        uint value = 0;
        for (int i = 0; i < bytes.Length; i++)
        {
            value = unchecked((value << 8) | bytes[bigEndian ? i : bytes.Length - 1 - i]);
        }

        return value;
    }

    private static uint WidthMask(int bytes) => bytes >= 4 ? uint.MaxValue : (1u << (8 * bytes)) - 1;

    /// <summary>P(right | checksum holds) by Bayes: a wrong block passes with the checksum's false-match odds.</summary>
    public static double PosteriorGivenMatch(double logAllOk, double falseMatch)
    {
        double ok = Math.Exp(logAllOk);
        return ok / (ok + (1 - ok) * falseMatch);
    }

    /// <summary>P(payload right | checksum fails): the error must then lie in the header or the check bytes.</summary>
    public static double PayloadRightGivenMismatch(double logPayloadOk, double logRestOk)
    {
        double payloadOk = Math.Exp(logPayloadOk);
        double restOk = Math.Exp(logRestOk);
        double anyWrong = 1 - payloadOk * restOk;
        return anyWrong <= 1e-12 ? 0 : payloadOk * (1 - restOk) / anyWrong;
    }
}
