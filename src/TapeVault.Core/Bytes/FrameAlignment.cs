using TapeVault.Core.Formats;

namespace TapeVault.Core.Bytes;

/// <summary>
/// Whether a run of asynchronous characters, framed from a start bit that nothing confirmed, can only be framed where
/// it was. Characters sent back to back form a bit stream that repeats every frame (start, data, parity, stop bits);
/// the same stream read from a start bit k bits later is another framing, and while it too has space where its start
/// bit would be and mark where its stop bits would be, the decisions cannot tell the two apart (lower-case text, whose
/// bits 5 and 6 are mark and bit 7 space, frames as well three bits early). Each confident decision that breaks one of
/// those other framings rules it out; once all are ruled out, the framing in use is the only one the stream allows.
/// The framing in use itself is never tested: if it is wrong, the true one is among the others and survives, so the
/// run stays unconfirmed.
/// </summary>
public struct FrameAlignment
{
    /// <summary>|D| at or above this counts as a confident decision that may rule a framing out.</summary>
    private const float ConfidentLevel = 0.3f;

    private readonly ByteFraming _framing;
    private readonly int _period;

    // Two frames of the stream: the previous character's bits, then this one's; 1 mark, 0 space, −1 not decided.
    private readonly sbyte[] _stream;
    private uint _alive;
    private bool _hasPrevious;
    private double _previousStart;

    public FrameAlignment(ByteFraming framing)
    {
        _framing = framing ?? throw new ArgumentNullException(nameof(framing));
        _period = framing.BitsPerByte;
        _stream = new sbyte[2 * _period];
        Reset();
    }

    /// <summary>Whether every other framing of the characters seen since <see cref="Reset"/> has been ruled out.</summary>
    public readonly bool Unambiguous => _alive == 0;

    /// <summary>Starts again: every framing a whole number of bits off is possible.</summary>
    public void Reset()
    {
        _alive = (_period >= 32 ? uint.MaxValue : (1u << _period) - 1) & ~1u;
        _hasPrevious = false;
    }

    /// <summary>
    /// Adds one character: the D of its decided bits (from the start bit on) and where it started. Only characters that
    /// follow the one before back to back (within half a bit) say anything about the other framings.
    /// </summary>
    public void Add(ReadOnlySpan<float> levels, double start, double bitSamples)
    {
        bool backToBack = _hasPrevious && Math.Abs(start - _previousStart - (_period * bitSamples)) < 0.5 * bitSamples;
        for (int i = 0; i < _period; i++)
        {
            _stream[_period + i] = i < levels.Length && Math.Abs(levels[i]) >= ConfidentLevel ? (sbyte)(levels[i] > 0 ? 1 : 0) : (sbyte)-1;
        }

        if (backToBack)
        {
            for (int shift = 1; shift < _period; shift++)
            {
                if ((_alive & (1u << shift)) != 0 && Breaks(shift))
                {
                    _alive &= ~(1u << shift);
                }
            }
        }

        Array.Copy(_stream, _period, _stream, 0, _period);
        _hasPrevious = true;
        _previousStart = start;
    }

    /// <summary>Whether a confident decision contradicts the start or stop bits of the frame that begins <paramref name="shift"/> bits into the previous character.</summary>
    private readonly bool Breaks(int shift)
    {
        string startBits = _framing.StartBits;
        string stopBits = _framing.StopBits;
        for (int i = 0; i < startBits.Length; i++)
        {
            if (Contradicts(shift + i, startBits[i]))
            {
                return true;
            }
        }

        for (int j = 0; j < stopBits.Length; j++)
        {
            if (Contradicts(shift + _period - stopBits.Length + j, stopBits[j]))
            {
                return true;
            }
        }

        return false;
    }

    private readonly bool Contradicts(int position, char expected) =>
        _stream[position] >= 0 && _stream[position] != (expected == '1' ? 1 : 0);
}
