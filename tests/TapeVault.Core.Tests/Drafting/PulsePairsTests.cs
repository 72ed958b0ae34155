using TapeVault.Core.Checksums;
using TapeVault.Core.Drafting;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// Pulse pairs with byte markers on symbol streams built here pulse by pulse (classes 0 short, 1 medium, 2 long): a
/// marker long+medium before every byte, a 0 as short+medium and a 1 as medium+short, eight data bits least
/// significant first and an odd parity bit (the count of ones in data and parity bit together is odd: common practice
/// for odd parity), an end marker long+short after the last byte. The bytes are <see cref="DraftBlockSamples"/>'s
/// blocks with an XOR check.
/// </summary>
public sealed class PulsePairsTests
{
    private const int Short = 0;
    private const int Medium = 1;
    private const int Long = 2;

    private static IBlockChecksum Xor()
    {
        var xor = ChecksumCatalog.Get("xor8");

        // Common practice, computed by hand (as in ChecksumTests): the XOR of the bytes of "123456789" is 0x31.
        Assert.Equal(0x31u, xor.Compute("123456789"u8));
        return xor;
    }

    private static int[] Symbols(byte[] bytes, Parity parity = Parity.Odd, BitOrder order = BitOrder.LsbFirst)
    {
        var symbols = new List<int>();
        foreach (byte b in bytes)
        {
            symbols.AddRange([Long, Medium]);
            int ones = 0;
            for (int d = 0; d < 8; d++)
            {
                bool one = ((b >> (order == BitOrder.LsbFirst ? d : 7 - d)) & 1) != 0;
                ones += one ? 1 : 0;
                symbols.AddRange(one ? [Medium, Short] : [Short, Medium]);
            }

            if (parity != Parity.None)
            {
                bool bit = parity == Parity.Odd ? ones % 2 == 0 : ones % 2 == 1;
                symbols.AddRange(bit ? [Medium, Short] : [Short, Medium]);
            }
        }

        symbols.AddRange([Long, Short]);
        return [.. symbols];
    }

    [Fact]
    public void Reads_the_markers_the_bit_pairs_the_parity_and_the_block_kinds()
    {
        var blocks = DraftBlockSamples.Blocks(Xor(), true, 11);
        var symbols = blocks.Select(b => Symbols(b)).ToList();

        var reading = PulsePairs.Read(symbols, 3, Short);

        Assert.NotNull(reading);
        Assert.Equal(Long, reading.Marker);
        Assert.Equal(Medium, reading.MarkerSecond);
        Assert.Equal(Short, reading.EndSecond);
        Assert.Equal((Short, Medium), reading.Zero);
        Assert.Equal((Medium, Short), reading.One);
        Assert.Equal(9, reading.FrameBits);
        Assert.Equal(8, reading.DataBits);
        Assert.Equal(Parity.Odd, reading.Parity);
        Assert.Equal(1.0, reading.ParityShare);
        Assert.Equal(BitOrder.LsbFirst, reading.Order);
        Assert.True(reading.Told);
        Assert.Equal(blocks.Sum(b => b.Length), reading.Frames);
        Assert.Equal(2, reading.Kinds.Copies);
        Assert.Equal(new LengthSource(8, 2, false, 10, false), reading.Kinds.Length);
    }

    [Fact]
    public void Even_parity_and_the_other_bit_order_are_told_too()
    {
        var blocks = DraftBlockSamples.Blocks(Xor(), true, 12);
        var symbols = blocks.Select(b => Symbols(b, Parity.Even, BitOrder.MsbFirst)).ToList();

        var reading = PulsePairs.Read(symbols, 3, Short);

        Assert.NotNull(reading);
        Assert.Equal(Parity.Even, reading.Parity);
        Assert.Equal(BitOrder.MsbFirst, reading.Order);
        Assert.Equal((Short, Medium), reading.Zero);
    }

    [Fact]
    public void The_frames_give_back_every_byte_written()
    {
        var blocks = DraftBlockSamples.Blocks(Xor(), true, 13);
        foreach (var block in blocks)
        {
            var frames = PulsePairs.Frames(Symbols(block), Long, Medium, 20);

            Assert.Equal(block.Length, frames.Length);
            Assert.All(frames, f => Assert.Equal(9, f.Length));
            Assert.Equal(block, PulsePairs.Bytes(frames, (Short, Medium), (Medium, Short), 8, BitOrder.LsbFirst));
        }
    }

    [Fact]
    public void A_lost_pulse_costs_its_frame_only_and_the_frames_after_it_are_read()
    {
        var block = DraftBlockSamples.Blocks(Xor(), true, 14)[1];
        var symbols = Symbols(block).ToList();

        // The fourth pulse of the sixth frame is lost to a dropout.
        symbols.RemoveAt((5 * 20) + 3);
        var frames = PulsePairs.Frames([.. symbols], Long, Medium, 20);
        var bytes = PulsePairs.Bytes(frames, (Short, Medium), (Medium, Short), 8, BitOrder.LsbFirst);

        Assert.InRange(bytes.Length, block.Length - 1, block.Length);
        Assert.Equal(block[..5], bytes[..5]);
        Assert.Equal(block[^6..], bytes[^6..]);
    }

    [Fact]
    public void Symbols_with_no_marker_at_a_fixed_spacing_are_no_pairs_reading()
    {
        // The same bytes with no markers: plain pairs, one after another.
        var blocks = DraftBlockSamples.Blocks(Xor(), true, 15);
        var symbols = blocks.Select(b => Symbols(b)).Select(all => all.Where((s, i) => s != Long && !(i > 0 && all[i - 1] == Long)).ToArray()).ToList();

        Assert.Null(PulsePairs.Read(symbols, 3, Short));
    }
}
