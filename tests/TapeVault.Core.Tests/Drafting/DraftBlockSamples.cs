using System.Text;
using TapeVault.Core.Checksums;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// Blocks as a format with two block kinds writes them, built here byte by byte so that the drafting searches can
/// be checked against what was written: each file a header block (a name of eight printable characters, then a
/// start and an exclusive end address, little-endian) and a data block of end − start bytes, each block written
/// twice with a sync of nine bytes that differs between the copies (a countdown), and a check value after the sync
/// over what follows it. The check is a model of the CRC catalogue, confirmed against the catalogue's check value by
/// the test that uses it.
/// </summary>
internal static class DraftBlockSamples
{
    public static readonly byte[] FirstCopySync = [0x39, 0x38, 0x37, 0x36, 0x35, 0x34, 0x33, 0x32, 0x31];

    public static readonly byte[] SecondCopySync = [0xB9, 0xB8, 0xB7, 0xB6, 0xB5, 0xB4, 0xB3, 0xB2, 0xB1];

    public static readonly string[] Names = ["ALPHA   ", "BRAVO.01", "CHARLIE2"];

    public static readonly int[] PayloadLengths = [40, 57, 23];

    public static readonly int[] StartAddresses = [0x1200, 0x3000, 0x0400];

    /// <summary>The bodies (after the sync, check value included) of the header and data block of each file, in order.</summary>
    public static List<byte[]> Bodies(IBlockChecksum check, bool bigEndian, int seed)
    {
        var rng = new Random(seed);
        var bodies = new List<byte[]>();
        for (int f = 0; f < Names.Length; f++)
        {
            var header = new List<byte>(Encoding.ASCII.GetBytes(Names[f]));
            int start = StartAddresses[f];
            int end = start + PayloadLengths[f];
            header.AddRange([(byte)(start & 0xFF), (byte)(start >> 8), (byte)(end & 0xFF), (byte)(end >> 8)]);
            bodies.Add(WithCheck([.. header], check, bigEndian));
            var payload = new byte[PayloadLengths[f]];
            rng.NextBytes(payload);
            bodies.Add(WithCheck(payload, check, bigEndian));
        }

        return bodies;
    }

    /// <summary>Every body written twice, the first copy after <see cref="FirstCopySync"/>, the second after <see cref="SecondCopySync"/>.</summary>
    public static List<byte[]> Blocks(IBlockChecksum check, bool bigEndian, int seed)
    {
        var blocks = new List<byte[]>();
        foreach (var body in Bodies(check, bigEndian, seed))
        {
            blocks.Add([.. FirstCopySync, .. body]);
            blocks.Add([.. SecondCopySync, .. body]);
        }

        return blocks;
    }

    public static byte[] WithCheck(byte[] covered, IBlockChecksum check, bool bigEndian)
    {
        uint value = check.Compute(covered);
        var stored = new byte[check.Width];
        for (int i = 0; i < stored.Length; i++)
        {
            int shift = 8 * (bigEndian ? stored.Length - 1 - i : i);
            stored[i] = (byte)((value >> shift) & 0xFF);
        }

        return [.. covered, .. stored];
    }
}
