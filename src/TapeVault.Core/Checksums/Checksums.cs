namespace TapeVault.Core.Checksums;

/// <summary>XOR of all bytes (<c>xor8</c>).</summary>
public sealed class Xor8Checksum : IBlockChecksum
{
    public string Name => "xor8";

    public int Width => 1;

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

/// <summary>Sum of all bytes modulo 256 (<c>sum8</c>).</summary>
public sealed class Sum8Checksum : IBlockChecksum
{
    public string Name => "sum8";

    public int Width => 1;

    public uint Compute(ReadOnlySpan<byte> data)
    {
        uint acc = 0;
        foreach (byte b in data)
        {
            // Masked every step, so the accumulator never exceeds 0x1FE and cannot overflow.
            acc = (acc + b) & 0xFFu;
        }

        return acc;
    }
}

/// <summary>
/// CRC-16/IBM-3740, a.k.a. CRC-16/CCITT-FALSE (<c>crc16-ccitt-false</c>):
/// poly 0x1021, init 0xFFFF, no reflection, xorout 0.
/// </summary>
public sealed class Crc16CcittFalseChecksum : IBlockChecksum
{
    public string Name => "crc16-ccitt-false";

    public int Width => 2;

    public uint Compute(ReadOnlySpan<byte> data) => Crc16Msb.Update(0xFFFFu, data);
}

/// <summary>
/// CRC-16/XMODEM (<c>crc16-xmodem</c>): poly 0x1021, init 0, no reflection, xorout 0.
/// </summary>
public sealed class Crc16XmodemChecksum : IBlockChecksum
{
    public string Name => "crc16-xmodem";

    public int Width => 2;

    public uint Compute(ReadOnlySpan<byte> data) => Crc16Msb.Update(0u, data);
}

/// <summary>
/// CRC-32/ISO-HDLC (<c>crc32</c>): reflected poly 0xEDB88320, init 0xFFFFFFFF, xorout 0xFFFFFFFF.
/// </summary>
public sealed class Crc32Checksum : IBlockChecksum
{
    private static readonly uint[] Table = BuildTable();

    public string Name => "crc32";

    public int Width => 4;

    public uint Compute(ReadOnlySpan<byte> data)
    {
        uint[] table = Table;
        uint crc = 0xFFFFFFFFu;
        foreach (byte b in data)
        {
            crc = table[(crc ^ b) & 0xFFu] ^ (crc >> 8);
        }

        return crc ^ 0xFFFFFFFFu;
    }

    private static uint[] BuildTable()
    {
        const uint reflectedPoly = 0xEDB88320u;
        var table = new uint[256];
        for (uint i = 0; i < 256; i++)
        {
            uint c = i;
            for (int bit = 0; bit < 8; bit++)
            {
                c = (c & 1u) != 0 ? (c >> 1) ^ reflectedPoly : c >> 1;
            }

            table[i] = c;
        }

        return table;
    }
}

/// <summary>Shared MSB-first (non-reflected) table for the poly-0x1021 CRC-16 variants.</summary>
internal static class Crc16Msb
{
    private static readonly ushort[] Table = BuildTable();

    public static uint Update(uint crc, ReadOnlySpan<byte> data)
    {
        ushort[] table = Table;
        foreach (byte b in data)
        {
            // Shifting left pushes bits past bit 15; the mask keeps the register at 16 bits.
            crc = ((crc << 8) ^ table[((crc >> 8) ^ b) & 0xFFu]) & 0xFFFFu;
        }

        return crc;
    }

    private static ushort[] BuildTable()
    {
        const uint poly = 0x1021u;
        var table = new ushort[256];
        for (uint i = 0; i < 256; i++)
        {
            uint c = i << 8;
            for (int bit = 0; bit < 8; bit++)
            {
                c = (c & 0x8000u) != 0 ? ((c << 1) ^ poly) & 0xFFFFu : (c << 1) & 0xFFFFu;
            }

            table[i] = (ushort)c;
        }

        return table;
    }
}
