using System.Buffers.Binary;
using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Blocks;

/// <summary>
/// Blocks written by <see cref="BlockWriter"/> read back through <see cref="BlockLayoutCodec"/>, for every kind of
/// checksum and both byte orders: the fields, the stored check value where the layout puts it, and the check that
/// holds over what it covers and fails when a covered byte changes.
/// </summary>
public sealed class BlockLayoutCodecTests
{
    public static readonly TheoryData<string, bool> Kinds = Build();

    [Theory]
    [MemberData(nameof(Kinds))]
    public void A_written_block_reads_back_with_its_fields_and_a_check_that_holds(string algorithm, bool bigEndian)
    {
        var layout = Layout(algorithm, bigEndian, ChecksumCoverage.HeaderAndPayload);
        var codec = BlockLayoutCodec.For(layout);
        var payload = Payload(37, 1);

        var block = BlockWriter.Build(layout, "NAME", 0x0102, 0x0A0B, payload);

        Assert.Equal(codec.BlockBytes(payload.Length), block.Length);
        Assert.Equal(0x0102, codec.ReadField(block, layout.Header[1]));
        Assert.Equal(0x0A0B, codec.ReadField(block, layout.Header[2]));
        Assert.Equal(payload.Length, codec.ReadField(block, layout.Header[3]));
        Assert.Equal(payload, block.AsSpan(codec.HeaderBytes, payload.Length).ToArray());
        Assert.True(codec.CheckHolds(block, payload.Length));

        // The check value is the checksum of header and payload as they lie in the block, stored in the byte order
        // the profile gives; the byte order is checked with the BCL's BinaryPrimitives.
        var checksum = ChecksumCatalog.Get(algorithm);
        uint expected = checksum.Compute(block.AsSpan(0, codec.HeaderBytes + payload.Length));
        Assert.Equal(expected, codec.ReadStoredCheck(block, payload.Length));
        Assert.Equal(expected, StoredByBcl(block.AsSpan(codec.HeaderBytes + payload.Length), checksum.Width, bigEndian));
    }

    [Theory]
    [MemberData(nameof(Kinds))]
    public void Header_fields_follow_their_byte_order(string algorithm, bool bigEndian)
    {
        var layout = Layout(algorithm, bigEndian, ChecksumCoverage.Payload);
        var codec = BlockLayoutCodec.For(layout);

        var block = BlockWriter.Build(layout, "N", 7, 0x1234, Payload(3, 2));

        // Source: System.Buffers.Binary.BinaryPrimitives (BCL) for the two byte orders of a 16-bit field.
        var number = block.AsSpan(codec.FieldOffset(layout.Header[2]), 2);
        ushort read = bigEndian ? BinaryPrimitives.ReadUInt16BigEndian(number) : BinaryPrimitives.ReadUInt16LittleEndian(number);
        Assert.Equal(0x1234, read);
    }

    [Theory]
    [MemberData(nameof(Kinds))]
    public void Changing_any_covered_byte_breaks_the_check_and_an_uncovered_field_does_not(string algorithm, bool bigEndian)
    {
        // Covers the length field and the payload, not the name or the numbers.
        var layout = Layout(algorithm, bigEndian, ChecksumCoverage.Fields, "length", ChecksumSpec.PayloadName);
        var codec = BlockLayoutCodec.For(layout);
        var payload = Payload(20, 3);
        var block = BlockWriter.Build(layout, "FILE", 1, 2, payload);
        Assert.True(codec.CheckHolds(block, payload.Length));

        // The check over the covered stretch only, cut out here by hand.
        int lengthAt = codec.FieldOffset(layout.Header[3]);
        var covered = block.AsSpan(lengthAt, 1 + payload.Length);
        Assert.Equal(ChecksumCatalog.Get(algorithm).Compute(covered), codec.ReadStoredCheck(block, payload.Length));

        for (int i = codec.HeaderBytes; i < codec.HeaderBytes + payload.Length; i++)
        {
            // Common practice: every checksum here (XOR, sums, CRCs) detects a change of one byte by 0x01.
            block[i] ^= 0x01;
            Assert.False(codec.CheckHolds(block, payload.Length), $"byte {i} changed");
            block[i] ^= 0x01;
        }

        block[codec.FieldOffset(layout.Header[2])] ^= 0x40;
        Assert.True(codec.CheckHolds(block, payload.Length));
    }

    [Fact]
    public void A_check_that_skips_a_field_between_covered_ones_joins_the_covered_pieces()
    {
        // Covers the name and the length but not the two numbers between them, and the payload.
        var layout = Layout("CRC-16/KERMIT", true, ChecksumCoverage.Fields, "name", "length", ChecksumSpec.PayloadName);
        var codec = BlockLayoutCodec.For(layout);
        var payload = Payload(9, 4);
        var block = BlockWriter.Build(layout, "ABCD", 5, 6, payload);

        int lengthAt = codec.FieldOffset(layout.Header[3]);
        byte[] joined = [.. block.AsSpan(0, 4), .. block.AsSpan(lengthAt, 1 + payload.Length)];
        Assert.Equal(ChecksumCatalog.Get("CRC-16/KERMIT").Compute(joined), codec.ReadStoredCheck(block, payload.Length));
        Assert.True(codec.CheckHolds(block, payload.Length));
    }

    [Fact]
    public void A_length_field_that_disagrees_with_the_payload_fails_the_check_even_where_the_value_holds()
    {
        // The check covers the payload only, so a changed length field leaves the value right: the block is still
        // not the one it claims to be.
        var layout = Layout("crc16-xmodem", true, ChecksumCoverage.Payload);
        var codec = BlockLayoutCodec.For(layout);
        var payload = Payload(12, 5);
        var block = BlockWriter.Build(layout, "X", 0, 0, payload);
        Assert.True(codec.CheckHolds(block, payload.Length));

        codec.WriteField(block, layout.Header[3], 13);

        Assert.Equal(codec.ComputeCheck(block, payload.Length), codec.ReadStoredCheck(block, payload.Length));
        Assert.False(codec.CheckHolds(block, payload.Length));
    }

    [Fact]
    public void Too_few_bytes_for_the_block_do_not_hold_and_a_cut_header_reads_no_field()
    {
        var layout = Layout("sum8", false, ChecksumCoverage.HeaderAndPayload);
        var codec = BlockLayoutCodec.For(layout);
        var block = BlockWriter.Build(layout, "X", 0, 0, Payload(4, 6));

        Assert.False(codec.CheckHolds(block.AsSpan(0, block.Length - 1), 4));
        Assert.False(codec.TryReadField(block.AsSpan(0, 5), layout.Header[2], out _));
        Assert.True(codec.TryReadField(block.AsSpan(0, 6), layout.Header[1], out long id));
        Assert.Equal(0, id);
    }

    [Fact]
    public void Written_check_bytes_read_back_as_the_stored_value()
    {
        var layout = Layout("CRC-24/OPENPGP", false, ChecksumCoverage.HeaderAndPayload);
        var codec = BlockLayoutCodec.For(layout);
        var check = new byte[3];

        codec.WriteStoredCheck(check, 0x21CF02);

        // Little-endian: least significant byte first (worked by hand).
        Assert.Equal([0x02, 0xCF, 0x21], check);
        Assert.Throws<ArgumentException>(() => codec.WriteStoredCheck(new byte[2], 1));
    }

    [Fact]
    public void The_codec_of_a_layout_is_made_once()
    {
        var layout = Layout("xor8", true, ChecksumCoverage.Payload);
        Assert.Same(BlockLayoutCodec.For(layout), BlockLayoutCodec.For(layout));
    }

    [Fact]
    public void The_built_in_profiles_write_blocks_whose_check_holds()
    {
        foreach (var profile in ProfileCatalog.BuiltIn.All.Where(p => p.Layout.Checksum is not null))
        {
            // Blocks of several kinds come in the order a file writes them, each kind with its own layout.
            int index = 0;
            foreach (var block in BlockWriter.Blocks(profile, [new TapeFile("DEMO", Payload(300, 7))]))
            {
                var codec = BlockLayoutCodec.For(profile.BlockKinds[index++ % profile.BlockKinds.Count]);
                int payloadLength = block.Length - codec.HeaderBytes - codec.CheckBytes;
                Assert.True(codec.CheckHolds(block, payloadLength), profile.Id);
            }
        }
    }

    private static TheoryData<string, bool> Build()
    {
        var data = new TheoryData<string, bool>();
        string[] kinds =
        [
            "xor8",
            "sum8",
            new SumParameters(16, SumCarry.EndAround, SumComplement.Ones, SumAddend.WordBigEndian).Describe(),
            new SumParameters(16, SumCarry.None, SumComplement.Twos).Describe(),
            "CRC-8/SMBUS",
            "CRC-12/UMTS",
            "CRC-16/ARC",
            "CRC-16/ISO-HDLC",
            "CRC-24/OPENPGP",
            "CRC-32/BZIP2",
            "crc32",
        ];
        foreach (string kind in kinds)
        {
            data.Add(kind, true);
            data.Add(kind, false);
        }

        return data;
    }

    private static BlockLayout Layout(string algorithm, bool bigEndian, ChecksumCoverage covers, params string[] fields)
    {
        HeaderField[] header =
        [
            new("name", 4, FieldRole.FileName, false),
            new("file", 2, FieldRole.FileId, bigEndian),
            new("block", 2, FieldRole.BlockNumber, bigEndian),
            new("length", 1, FieldRole.PayloadLength, bigEndian),
        ];
        var spec = new ChecksumSpec(algorithm, covers, bigEndian) { CoveredFields = fields };
        return new BlockLayout(header, null, 255, spec, 1);
    }

    private static byte[] Payload(int length, int seed)
    {
        var payload = new byte[length];
        new Random(seed).NextBytes(payload);
        return payload;
    }

    private static uint StoredByBcl(ReadOnlySpan<byte> check, int width, bool bigEndian)
    {
        Span<byte> four = stackalloc byte[4];
        four.Clear();
        if (bigEndian)
        {
            check[..width].CopyTo(four[(4 - width)..]);
            return BinaryPrimitives.ReadUInt32BigEndian(four);
        }

        check[..width].CopyTo(four);
        return BinaryPrimitives.ReadUInt32LittleEndian(four);
    }
}
