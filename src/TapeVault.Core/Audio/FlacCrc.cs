namespace TapeVault.Core.Audio;

/// <summary>
/// The two CRCs of a FLAC frame (RFC 9639, sections 9.1.8 and 9.3): CRC-8 with polynomial x^8 + x^2 + x + 1 (0x07)
/// over the frame header, and CRC-16 with polynomial x^16 + x^15 + x^2 + 1 (0x8005) over the whole frame; both start
/// at 0, most significant bit first, no final XOR. In the CRC catalogue these are CRC-8/SMBUS and CRC-16/UMTS.
/// </summary>
internal static class FlacCrc
{
    private static readonly byte[] Table8 = Build8();
    private static readonly ushort[] Table16 = Build16();

    /// <summary>CRC-8 (polynomial 0x07, initial 0) of <paramref name="data"/>.</summary>
    public static byte Crc8(ReadOnlySpan<byte> data)
    {
        byte crc = 0;
        foreach (byte b in data)
        {
            crc = Table8[crc ^ b];
        }

        return crc;
    }

    /// <summary>CRC-16 (polynomial 0x8005, initial 0) of <paramref name="data"/>.</summary>
    public static ushort Crc16(ReadOnlySpan<byte> data)
    {
        ushort crc = 0;
        foreach (byte b in data)
        {
            crc = unchecked((ushort)((crc << 8) ^ Table16[(crc >> 8) ^ b]));
        }

        return crc;
    }

    private static byte[] Build8()
    {
        var table = new byte[256];
        for (int i = 0; i < 256; i++)
        {
            int crc = i;
            for (int bit = 0; bit < 8; bit++)
            {
                crc = (crc & 0x80) != 0 ? ((crc << 1) ^ 0x07) & 0xFF : (crc << 1) & 0xFF;
            }

            table[i] = (byte)crc;
        }

        return table;
    }

    private static ushort[] Build16()
    {
        var table = new ushort[256];
        for (int i = 0; i < 256; i++)
        {
            int crc = i << 8;
            for (int bit = 0; bit < 8; bit++)
            {
                crc = (crc & 0x8000) != 0 ? ((crc << 1) ^ 0x8005) & 0xFFFF : (crc << 1) & 0xFFFF;
            }

            table[i] = (ushort)crc;
        }

        return table;
    }
}
