using System.Text;

namespace TapeVault.Tests.Shared;

/// <summary>The input minimodem's transmitter takes when it writes raw bits (no start or stop bits of its own).</summary>
internal static class MinimodemRawBits
{
    /// <summary>
    /// Bits written as 0/1 text, padded with mark (1) to a whole byte and packed eight a byte least significant first:
    /// what minimodem's transmitter takes with <c>--startbits 0 --stopbits 0</c> (minimodem(1)).
    /// </summary>
    public static byte[] Pack(StringBuilder bits)
    {
        ArgumentNullException.ThrowIfNull(bits);
        while (bits.Length % 8 != 0)
        {
            bits.Append('1');
        }

        var packed = new byte[bits.Length / 8];
        for (int i = 0; i < bits.Length; i++)
        {
            if (bits[i] == '1')
            {
                packed[i / 8] |= (byte)(1 << (i % 8));
            }
        }

        return packed;
    }
}
