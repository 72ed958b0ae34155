namespace TapeVault.Core.Checksums;

/// <summary>
/// A CRC of any parameters in the Rocksoft/Williams model, table-driven: one 256-entry table built when the model is
/// built, in the reflected form (register shifts right) when input bytes are reflected and in the normal form
/// otherwise.
/// </summary>
public sealed class CrcChecksum : IBlockChecksum
{
    private readonly uint[] _table;
    private readonly uint _mask;
    private readonly uint _start;
    private readonly int _topShift;

    public CrcChecksum(string name, CrcParameters parameters)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(name);
        ArgumentNullException.ThrowIfNull(parameters);
        Name = name;
        Parameters = parameters;
        int width = parameters.Width;
        _mask = CrcParameters.Mask(width);
        _topShift = width - 8;
        _table = new uint[256];
        if (parameters.RefIn)
        {
            // Reflected form: the register holds the CRC bit-reversed, and bytes enter at its low end.
            uint poly = Reflect(parameters.Poly, width);
            for (uint i = 0; i < 256; i++)
            {
                uint c = i;
                for (int bit = 0; bit < 8; bit++)
                {
                    c = (c & 1u) != 0 ? (c >> 1) ^ poly : c >> 1;
                }

                _table[i] = c;
            }

            _start = Reflect(parameters.Init, width);
        }
        else
        {
            // Normal form: bytes enter at the register's top eight bits.
            uint top = 1u << (width - 1);
            for (uint i = 0; i < 256; i++)
            {
                uint c = i << _topShift;
                for (int bit = 0; bit < 8; bit++)
                {
                    c = ((c & top) != 0 ? (c << 1) ^ parameters.Poly : c << 1) & _mask;
                }

                _table[i] = c;
            }

            _start = parameters.Init;
        }
    }

    /// <summary>The same model (and table) under another name.</summary>
    public CrcChecksum(string name, CrcChecksum same)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(name);
        ArgumentNullException.ThrowIfNull(same);
        Name = name;
        Parameters = same.Parameters;
        _table = same._table;
        _mask = same._mask;
        _start = same._start;
        _topShift = same._topShift;
    }

    public string Name { get; }

    public CrcParameters Parameters { get; }

    public int Width => Parameters.Bytes;

    /// <summary>A random block matches a w-bit CRC with odds 2^-w (a 12-bit CRC stored in two bytes has 4096 values).</summary>
    public double FalseMatchProbability => Math.ScaleB(1.0, -Parameters.Width);

    public uint Compute(ReadOnlySpan<byte> data)
    {
        uint[] table = _table;
        uint crc = _start;
        if (Parameters.RefIn)
        {
            foreach (byte b in data)
            {
                crc = table[(crc ^ b) & 0xFFu] ^ (crc >> 8);
            }
        }
        else
        {
            int shift = _topShift;
            uint mask = _mask;
            foreach (byte b in data)
            {
                // Shifting left pushes bits past the width; the mask keeps the register at its width.
                crc = ((crc << 8) ^ table[((crc >> shift) ^ b) & 0xFFu]) & mask;
            }
        }

        // The register of the reflected form is the CRC reversed: refout says which way round the result is read.
        if (Parameters.RefIn != Parameters.RefOut)
        {
            crc = Reflect(crc, Parameters.Width);
        }

        return (crc ^ Parameters.XorOut) & _mask;
    }

    /// <summary>The low <paramref name="width"/> bits of <paramref name="value"/> in reverse order.</summary>
    public static uint Reflect(uint value, int width) => ReverseBits(value) >> (32 - width);

    private static uint ReverseBits(uint v)
    {
        v = ((v >> 1) & 0x55555555u) | ((v & 0x55555555u) << 1);
        v = ((v >> 2) & 0x33333333u) | ((v & 0x33333333u) << 2);
        v = ((v >> 4) & 0x0F0F0F0Fu) | ((v & 0x0F0F0F0Fu) << 4);
        return System.Buffers.Binary.BinaryPrimitives.ReverseEndianness(v);
    }
}

/// <summary>An additive sum of bytes or 16-bit words, 8 or 16 bits wide, with or without end-around carry, optionally complemented.</summary>
public sealed class SumChecksum : IBlockChecksum
{
    public SumChecksum(string name, SumParameters parameters)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(name);
        ArgumentNullException.ThrowIfNull(parameters);
        Name = name;
        Parameters = parameters;
    }

    public string Name { get; }

    public SumParameters Parameters { get; }

    public int Width => Parameters.Bytes;

    /// <summary>
    /// The odds of an 8-bit check, whatever the sum's width: a sum cancels any pair of equal and opposite changes (the
    /// same bit lost in a covered byte and in the stored sum, or gained in one byte and lost in another), the commonest
    /// error pair on tape, which no CRC misses (a known weakness of additive checks; common practice, from memory).
    /// </summary>
    public double FalseMatchProbability => 1.0 / 256;

    /// <inheritdoc/>
    public double MultipleErrorMatchProbability => IBlockChecksum.PairCancellingOdds;

    public uint Compute(ReadOnlySpan<byte> data)
    {
        var p = Parameters;
        int bits = p.Bits;
        uint mask = CrcParameters.Mask(bits);
        bool endAround = p.Carry == SumCarry.EndAround;
        uint acc = 0;
        if (p.Addend == SumAddend.Byte)
        {
            foreach (byte b in data)
            {
                acc = Add(acc, b, bits, mask, endAround);
            }
        }
        else
        {
            bool big = p.Addend == SumAddend.WordBigEndian;
            for (int i = 0; i < data.Length; i += 2)
            {
                uint first = data[i];
                uint second = i + 1 < data.Length ? data[i + 1] : 0u;
                acc = Add(acc, big ? (first << 8) | second : (second << 8) | first, bits, mask, endAround);
            }
        }

        return p.Complement switch
        {
            SumComplement.Ones => ~acc & mask,
            SumComplement.Twos => unchecked(0u - acc) & mask,
            _ => acc,
        };
    }

    private static uint Add(uint acc, uint addend, int bits, uint mask, bool endAround)
    {
        // Both terms are below 2^16, so the sum fits in 17 bits and cannot overflow.
        uint sum = acc + addend;
        return endAround ? (sum & mask) + (sum >> bits) : sum & mask;
    }
}

/// <summary>The XOR of all bytes.</summary>
public sealed class XorChecksum : IBlockChecksum
{
    public XorChecksum(string name)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(name);
        Name = name;
    }

    public string Name { get; }

    public XorParameters Parameters { get; } = new();

    public int Width => 1;

    /// <summary>Any two errors at one bit position cancel in an xor (see <see cref="IBlockChecksum.MultipleErrorMatchProbability"/>).</summary>
    public double MultipleErrorMatchProbability => IBlockChecksum.PairCancellingOdds;

    public uint Compute(ReadOnlySpan<byte> data)
    {
        uint acc = 0;
        foreach (byte b in data)
        {
            acc ^= b;
        }

        return acc;
    }
}
