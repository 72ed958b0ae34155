using System.Text;
using TapeVault.Core.Checksums;
using TapeVault.Core.Drafting;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// The character-leader search on blocks as an FSK stream reads them, built here byte by byte: a leader of one
/// character repeated, three sync characters outside the check, then a header (a block number, a name of three
/// printable characters, a length, little-endian), the payload and a CRC of the catalogue over header and payload.
/// The sync characters are printable text too, as a run of printable bytes as long as the name, so that a name
/// search that reaches back into them finds them first.
/// </summary>
public sealed class CharacterLeaderSearchTests
{
    private static readonly ByteFraming EightOddOne = new(8, BitOrder.LsbFirst, "0", "1", Parity.Odd);

    private static IBlockChecksum Kermit()
    {
        var crc = ChecksumCatalog.Get("CRC-16/KERMIT");

        // Source: CRC catalogue (reveng), CRC-16/KERMIT, check = 0x2189: the blocks below carry this model's values.
        Assert.Equal(0x2189u, crc.Compute("123456789"u8));
        return crc;
    }

    private static List<byte[]> Blocks(int leader, byte[] sync, int seed, IBlockChecksum? crc = null)
    {
        crc ??= Kermit();
        var rng = new Random(seed);
        var blocks = new List<byte[]>();
        for (int n = 0; n < 6; n++)
        {
            var payload = new byte[10 + rng.Next(20)];
            rng.NextBytes(payload);
            byte[] covered = [(byte)n, .. Encoding.ASCII.GetBytes("ORB"), (byte)payload.Length, 0, .. payload];
            var run = Enumerable.Repeat((byte)leader, 20 + rng.Next(30));
            blocks.Add([.. run, .. sync, .. DraftBlockSamples.WithCheck(covered, crc, false)]);
        }

        return blocks;
    }

    [Fact]
    public void Finds_the_leader_the_sync_characters_and_the_fields_after_them()
    {
        var blocks = Blocks(0xAA, "SYN"u8.ToArray(), 21);

        var found = CharacterLeaderSearch.Find(blocks, EightOddOne);

        Assert.NotNull(found);
        Assert.Equal(0xAA, found.Character);
        Assert.Equal(blocks.Min(b => b.TakeWhile(x => x == 0xAA).Count()), found.ShortestRun);
        Assert.Equal(6, found.BlocksWithLeader);
        var layout = found.Layout;
        Assert.Equal(ChecksumCatalog.ParametersOf(Kermit()), ChecksumCatalog.ParametersOf(ChecksumCatalog.Get(layout.Checksum!)));
        Assert.False(layout.ChecksumBigEndian);
        Assert.Equal(3, layout.CoverageStart);

        // The fields are found where they were written, after the sync characters: none reaches into them.
        Assert.All(layout.Fields, f => Assert.True(f.Offset >= 3, $"{f.Role} at {f.Offset}"));
        Assert.Contains(layout.Fields, f => f is { Role: "file-name", Offset: 4, Bytes: 3 });
        Assert.Contains(layout.Fields, f => f is { Role: "block-number", Offset: 3, Bytes: 1 });
        Assert.Contains(layout.Fields, f => f is { Role: "payload-length", Offset: 7 });
        Assert.Equal(9, layout.HeaderBytes);
    }

    [Fact]
    public void A_sync_character_misread_in_one_block_leaves_the_leader_and_the_sync_most_blocks_share()
    {
        // The check does not cover the sync characters, so a block whose sync was misread by one bit still holds its
        // check: the sync proposed is what the other blocks share, and the leader is still found.
        var blocks = Blocks(0xAA, "SYN"u8.ToArray(), 24);
        var misread = blocks[3];
        int at = misread.AsSpan().IndexOf("SYN"u8);
        misread[at + 2] ^= 0x80;

        var found = CharacterLeaderSearch.Find(blocks, EightOddOne);

        Assert.NotNull(found);
        Assert.Equal(0xAA, found.Character);
        Assert.Equal(6, found.Layout.BlocksHolding);
        Assert.Equal("SYN"u8.ToArray(), found.Layout.Sync);
    }

    [Fact]
    public void Sync_characters_that_differ_in_half_the_blocks_are_no_sync()
    {
        // Bytes outside the check that half the blocks hold one way and half another are a field, not a sync a
        // reader could wait for.
        var blocks = Blocks(0xAA, "SYN"u8.ToArray(), 25);
        foreach (var block in blocks.Where((_, i) => i % 2 == 1))
        {
            block[block.AsSpan().IndexOf("SYN"u8) + 1] = (byte)'X';
        }

        Assert.Null(CharacterLeaderSearch.Find(blocks, EightOddOne));
    }

    [Fact]
    public void A_leader_whose_blocks_have_no_sync_characters_before_the_check_is_not_proposed()
    {
        // With no characters outside the check there is nothing a reader could wait for after the leader.
        var blocks = Blocks(0x16, [], 22);

        Assert.Null(CharacterLeaderSearch.Find(blocks, EightOddOne));
    }

    [Fact]
    public void A_stream_of_text_with_runs_of_one_character_but_no_check_has_no_leader()
    {
        string[] lines = ["THE CLUB MEETS ON THURSDAYS", "BRING TAPES AND LEADS", "A SPARE DECK IS WELCOME", "TEA AT NINE", "NEW MEMBERS FREE", "NEXT SWAP IN MAY"];
        var blocks = lines.Select((line, i) => Encoding.ASCII.GetBytes($"============ {10 * (i + 1)} REM {line} ==========\n{10 * (i + 2)} PRINT \"{line.ToLowerInvariant()}\"\n")).ToList();

        Assert.Null(CharacterLeaderSearch.Find(blocks, EightOddOne));
    }

    [Fact]
    public void A_leader_character_that_also_frames_at_a_shift_is_not_proposed()
    {
        // 0x55 in 8N1, least significant bit first, is start 0, data 1 0 1 0 1 0 1 0, stop 1: the line alternates,
        // so it frames as well two bits later (common practice: an alternating line has no framing of its own), and a
        // reader could not tell where its characters begin.
        var framing = new ByteFraming(8, BitOrder.LsbFirst, "0", "1", Parity.None);
        Assert.Equal(2, BitPatterns.SelfSimilarShift(framing, 0x55));

        var blocks = Blocks(0x55, "SYN"u8.ToArray(), 23);

        Assert.Null(CharacterLeaderSearch.Find(blocks, framing));
        Assert.NotNull(CharacterLeaderSearch.Find(Blocks(0xAA, "SYN"u8.ToArray(), 23), framing));
    }
}
