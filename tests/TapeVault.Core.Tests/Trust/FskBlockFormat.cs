using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// An FSK block format invented for these tests: the Kansas City tones and framing at 1200 baud (mark 2400 Hz, space
/// 1200 Hz, one start bit, eight data bits LSB first, two stop bits), blocks with a two-byte block number and a
/// one-byte payload length, closed by a CRC-16/XMODEM over header and payload, 0.3 s of mark tone between blocks.
/// CRC-16/XMODEM has no initial value, so all-zero bytes are one of its codewords: the exposure the phantom-block
/// tests are about.
/// </summary>
internal static class FskBlockFormat
{
    public const string Json = """
        {
          "id": "trust-fsk-blocks",
          "name": "Trust test FSK block format",
          "description": "Invented for the trust tests: Kansas City tones at 1200 baud with numbered, checked blocks.",
          "family": "fsk",
          "fsk": { "markHz": 2400, "spaceHz": 1200, "baud": 1200, "leadInMinimumSeconds": 0.1 },
          "framing": { "dataBits": 8, "bitOrder": "lsb-first", "startBits": "0", "stopBits": "11", "parity": "none" },
          "layout": {
            "header": [
              { "name": "block", "bytes": 2, "role": "block-number", "endian": "little" },
              { "name": "length", "bytes": 1, "role": "payload-length" }
            ],
            "maximumPayloadBytes": 255,
            "checksum": { "algorithm": "crc16-xmodem", "covers": "header-and-payload", "endian": "big" },
            "copies": 1
          },
          "recording": { "leadInSeconds": 1.0, "blockGapSeconds": 0.3, "trailerSeconds": 0.3 }
        }
        """;

    public static FormatProfile Profile { get; } = ProfileLoader.Parse(Json, "trust-fsk-blocks.json");

    public const int HeaderBytes = 3;

    /// <summary>
    /// A whole block as written: header, payload, CRC-16/XMODEM big-endian. The CRC is worked out here bit by bit
    /// (poly 0x1021, init 0, no reflection, no final xor), not by TapeVault's own checksum code, and checked against
    /// the CRC catalogue's check value (reveng: CRC-16/XMODEM of "123456789" is 0x31C3).
    /// </summary>
    public static byte[] Block(int number, ReadOnlySpan<byte> payload)
    {
        Assert.Equal(0x31C3, Crc16Xmodem(Encoding.ASCII.GetBytes("123456789")));
        var block = new byte[HeaderBytes + payload.Length + 2];
        block[0] = unchecked((byte)number);
        block[1] = unchecked((byte)(number >> 8));
        block[2] = checked((byte)payload.Length);
        payload.CopyTo(block.AsSpan(HeaderBytes));
        int crc = Crc16Xmodem(block.AsSpan(0, HeaderBytes + payload.Length));
        block[^2] = unchecked((byte)(crc >> 8));
        block[^1] = unchecked((byte)crc);
        return block;
    }

    /// <summary>Text of <paramref name="length"/> characters that differs from block to block.</summary>
    public static byte[] Text(int block, int length)
    {
        var sb = new StringBuilder();
        while (sb.Length < length)
        {
            sb.Append($"block {block} of the trust tape, line {sb.Length / 32}. ");
        }

        return Encoding.ASCII.GetBytes(sb.ToString(0, length));
    }

    /// <summary>Whether a candidate holds exactly the header and payload of one of the written blocks.</summary>
    public static bool IsWritten(BlockCandidate candidate, IEnumerable<byte[]> written) =>
        written.Any(b => candidate.Header.AsSpan().SequenceEqual(b.AsSpan(0, HeaderBytes))
            && candidate.Payload.AsSpan().SequenceEqual(b.AsSpan(HeaderBytes, b.Length - HeaderBytes - 2)));

    private static int Crc16Xmodem(ReadOnlySpan<byte> bytes)
    {
        int crc = 0;
        foreach (byte b in bytes)
        {
            crc ^= b << 8;
            for (int i = 0; i < 8; i++)
            {
                crc = (crc & 0x8000) != 0 ? ((crc << 1) ^ 0x1021) & 0xFFFF : (crc << 1) & 0xFFFF;
            }
        }

        return crc;
    }
}
