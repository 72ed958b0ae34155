using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Bytes;

/// <summary>
/// Groups a synchronous bit stream into bytes by the profile's framing: start bits, data bits in their order,
/// parity, stop bits. A start, stop or parity bit that is wrong is a framing error on that byte, not a lost byte:
/// the frame length is fixed, so the next byte still starts in the right place.
/// </summary>
public sealed class SyncByteFramer
{
    private readonly ByteFraming _framing;
    private readonly IBlockSink _blocks;
    private readonly int _frameBits;
    private int _bitIndex;
    private int _data;
    private int _ones;
    private bool _framingOk;
    private int _firstDecision;

    public SyncByteFramer(ByteFraming framing, IBlockSink blocks)
    {
        _framing = framing ?? throw new ArgumentNullException(nameof(framing));
        _blocks = blocks ?? throw new ArgumentNullException(nameof(blocks));
        _frameBits = framing.BitsPerByte;
        Reset();
    }

    public void Reset()
    {
        _bitIndex = 0;
        _data = 0;
        _ones = 0;
        _framingOk = true;
    }

    /// <summary>Whether the next bit is the first of a byte.</summary>
    public bool AtByteStart => _bitIndex == 0;

    /// <summary>The byte being framed (or the next one) is badly framed: a marker around it was not what the format writes.</summary>
    public void NoteFramingError() => _framingOk = false;

    /// <summary>Adds one bit; true when it completed the block.</summary>
    public bool AddBit(bool bit, int decisionIndex, double sample)
    {
        if (_bitIndex == 0)
        {
            _firstDecision = decisionIndex;
        }

        int startBits = _framing.StartBits.Length;
        int dataEnd = startBits + _framing.DataBits;
        int parityEnd = dataEnd + (_framing.Parity == Parity.None ? 0 : 1);
        int i = _bitIndex;
        if (i < startBits)
        {
            _framingOk &= bit == (_framing.StartBits[i] == '1');
        }
        else if (i < dataEnd)
        {
            int position = i - startBits;
            if (bit)
            {
                _ones++;
                _data |= 1 << _framing.DataBitShift(position);
            }
        }
        else if (i < parityEnd)
        {
            int total = _ones + (bit ? 1 : 0);
            _framingOk &= _framing.ParityHolds(total);
        }
        else
        {
            _framingOk &= bit == (_framing.StopBits[i - parityEnd] == '1');
        }

        _bitIndex++;
        if (_bitIndex < _frameBits)
        {
            return false;
        }

        byte value = (byte)_data;
        bool ok = _framingOk;
        Reset();
        return _blocks.AddByte(value, _firstDecision, ok, sample);
    }
}
