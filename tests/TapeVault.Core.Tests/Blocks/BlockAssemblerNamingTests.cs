using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.Blocks;

/// <summary>
/// Which header block names the data blocks after it, in a format whose data blocks carry no name of their own:
/// three-class-pairs writes each file as a header block (type, 16-byte name, start and end address) and a data block,
/// each twice (a countdown sync 89..81 before the first copy, 09..01 before the second), and checks each with an XOR of
/// its bytes after the sync. An XOR holds over a misread name where two errors flip the same bit of two bytes (XOR's
/// definition, common practice), so a header block whose check holds but that fails on other evidence (here a framing
/// error) proves no name: the data block after it must not take that name, or the merge keeps it apart from the
/// readings of its own file.
/// </summary>
public sealed class BlockAssemblerNamingTests
{
    private static readonly FormatProfile Profile = ProfileCatalog.BuiltIn.Get("three-class-pairs");

    // The name field's place in the header block: after the nine sync bytes and the type byte (the profile's layout).
    private const int NameOffset = 10;

    [Fact]
    public void A_data_block_after_a_header_that_fails_with_a_holding_check_is_unnamed()
    {
        var (header, data) = Written("LOADER");
        var (nextHeader, nextData) = Written("GAMEDATA");

        // The next file's first header copy misread in two name bytes (the same bit flipped in both: the XOR still
        // holds), with a framing error beside: a failed block whose check holds.
        var misread = Garbled(nextHeader);
        Assert.True(BlockLayoutCodec.For(Profile.BlockKinds[0]).CheckHolds(misread, 0));

        var read = ReadInTurn((header, true), (data, true), (misread, false), (nextData, true));

        Assert.Equal(BlockStatus.Clean, read[0].Status);
        Assert.Equal("LOADER", read[1].Identity.FileName);
        Assert.NotEqual(BlockStatus.Clean, read[2].Status);
        Assert.Equal(BlockStatus.Clean, read[3].Status);

        // Neither the garbled name nor the file before's: nothing read proves which file this data block is.
        Assert.Null(read[3].Identity.FileName);
        Assert.Equal(1, read[3].Identity.BlockNumber);
    }

    [Fact]
    public void A_second_header_copy_that_fails_with_a_holding_check_leaves_the_first_copys_name()
    {
        var (header, data) = Written("LOADER");
        var second = SecondCopy(header);
        var misread = Garbled(second);

        var read = ReadInTurn((header, true), (misread, false), (data, true));

        Assert.Equal(BlockStatus.Clean, read[0].Status);
        Assert.NotEqual(BlockStatus.Clean, read[1].Status);
        Assert.Equal(BlockStatus.Clean, read[2].Status);
        Assert.Equal("LOADER", read[2].Identity.FileName);
    }

    [Fact]
    public void A_first_header_copy_that_fails_is_named_by_a_clean_second_copy()
    {
        var (header, data) = Written("LOADER");
        var read = ReadInTurn((Garbled(header), false), (SecondCopy(header), true), (data, true));

        Assert.Equal(BlockStatus.Clean, read[1].Status);
        Assert.Equal("LOADER", read[2].Identity.FileName);
    }

    private static (byte[] Header, byte[] Data) Written(string name)
    {
        var blocks = BlockWriter.Blocks(Profile, [new TapeFile(name, [.. Enumerable.Range(0, 40).Select(i => (byte)((i * 7 + 3) % 256))]) { Address = 0x1000 }]);
        return (blocks[0], blocks[1]);
    }

    // The same bit (0x40) flipped in the name's first two bytes: letters become control bytes, the XOR is unchanged.
    private static byte[] Garbled(byte[] header)
    {
        var bytes = (byte[])header.Clone();
        bytes[NameOffset] ^= 0x40;
        bytes[NameOffset + 1] ^= 0x40;
        return bytes;
    }

    // The second copy's countdown, 09 down to 01 (the profile's sync field).
    private static byte[] SecondCopy(byte[] block)
    {
        var bytes = (byte[])block.Clone();
        for (int i = 0; i < 9; i++)
        {
            bytes[i] = (byte)(9 - i);
        }

        return bytes;
    }

    /// <summary>Blocks read one after another by one setting, each begun on its lead-in and sync and ended at its end marker; a block read with a framing error has it on its first byte.</summary>
    private static List<BlockCandidate> ReadInTurn(params (byte[] Bytes, bool FramingOk)[] blocks)
    {
        var output = new List<BlockCandidate>();
        var assembler = new BlockAssembler(Profile, 0, "s0", 44_100, output);
        double sample = 0;
        foreach (var (bytes, framingOk) in blocks)
        {
            assembler.Begin(sample, BlockStartEvidence.LeadInAndSync);
            for (int b = 0; b < bytes.Length; b++)
            {
                int first = assembler.DecisionCount;
                for (int k = 0; k < 9; k++)
                {
                    assembler.AddDecision(0.9f, 0.02f, 1);
                }

                sample += 300;
                assembler.AddByte(bytes[b], first, framingOk || b != NameOffset, sample);
            }

            sample += 300;
            assembler.EndAtMarker(sample);
        }

        Assert.Equal(blocks.Length, output.Count);
        return output;
    }
}
