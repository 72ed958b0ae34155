using TapeVault.Core.Formats;

namespace TapeVault.Core.Bytes;

/// <summary>
/// Whether a run of asynchronous characters, framed from a start bit that nothing confirmed, can only be framed where
/// it was. Characters sent back to back form a bit stream that repeats every frame (start, data, parity, stop bits);
/// the same stream read from a start bit k bits later is another framing, and while it too has space where its start
/// bit would be and mark where its stop bits would be, the decisions cannot tell the two apart (lower-case text, whose
/// bits 5 and 6 are mark and bit 7 space, frames as well three bits early). A run of one byte repeated is the worst
/// case: most byte values frame as another byte at some other phase of their own bit stream (0xE3, sent over and over
/// with two stop bits, frames as 0x7C three bits later), and nothing in the run tells the two apart. So one confident
/// decision that breaks another framing does not rule it out (a noise hit or a dropout's click breaks the true framing
/// as readily, where the framing in use is the false one): a framing is ruled out once characters break it in at least
/// <see cref="RuledOutBreaks"/> more characters than they break the framing in use, and in at least one character of
/// <see cref="RuledOutShare"/>. Once every other framing is ruled out, the framing in use is the only one the stream
/// allows; while one is not, the characters stand on a grid that another phase frames as well, and carry its doubt.
/// </summary>
public struct FrameAlignment
{
    /// <summary>|D| at or above this counts as a confident decision that may rule a framing out.</summary>
    private const float ConfidentLevel = 0.3f;

    /// <summary>How many more characters must break another framing than break the framing in use to rule it out.</summary>
    private const int RuledOutBreaks = 2;

    /// <summary>
    /// Another framing is ruled out only if at least one character in this many broke it: a false phase of distinct
    /// characters breaks in most of them, the true phase under a false one only where damage hit a start or stop bit.
    /// </summary>
    private const int RuledOutShare = 4;

    private readonly ByteFraming _framing;
    private readonly int _period;

    // Two frames of the stream: the previous character's bits, then this one's; 1 mark, 0 space, −1 not decided.
    private readonly sbyte[] _stream;

    // How many back-to-back characters broke each framing, the framing in use at 0; and how many were checked.
    private readonly int[] _breaks;
    private int _checked;
    private uint _alive;
    private bool _hasPrevious;
    private double _previousStart;

    public FrameAlignment(ByteFraming framing)
    {
        _framing = framing ?? throw new ArgumentNullException(nameof(framing));
        _period = framing.BitsPerByte;
        _stream = new sbyte[2 * _period];
        _breaks = new int[_period];
        Reset();
    }

    /// <summary>Whether every other framing of the characters seen since <see cref="Reset"/> has been ruled out.</summary>
    public readonly bool Unambiguous => _alive == 0;

    /// <summary>Starts again: every framing a whole number of bits off is possible.</summary>
    public void Reset()
    {
        _alive = (_period >= 32 ? uint.MaxValue : (1u << _period) - 1) & ~1u;
        _hasPrevious = false;
        Array.Clear(_breaks);
        _checked = 0;
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

        // Only the framing in use and those not yet ruled out are counted: a framing ruled out stays so until Reset.
        if (backToBack && _alive != 0)
        {
            _checked++;
            if (Breaks(0))
            {
                _breaks[0]++;
            }

            for (int shift = 1; shift < _period; shift++)
            {
                if ((_alive & (1u << shift)) == 0 || !Breaks(shift))
                {
                    continue;
                }

                if (++_breaks[shift] >= _breaks[0] + RuledOutBreaks && RuledOutShare * _breaks[shift] >= _checked)
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
