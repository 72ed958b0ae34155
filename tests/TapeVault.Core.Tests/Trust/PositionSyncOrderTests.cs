using System.Collections.Immutable;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// The three-class pair format writes each block twice in a row, the first copy after a countdown sync 89 … 81, the
/// second after 09 … 01 (its profile), and its data block's header is that countdown alone. The sync read is the only
/// thing that tells a data block's second copy from the next block's first: copies of one block are read at syncs of
/// ascending copy. The readings below are those of a capture at tuning seed 16003 (pass 1), cut down to one file's
/// data block between two files' header blocks: one setting reads the header blocks clean and both data copies with a
/// failed check (its sync read right), others garble the header or stop after a byte or two.
/// </summary>
public sealed class PositionSyncOrderTests
{
    private static readonly FormatProfile Profile = ProfileCatalog.BuiltIn.Get("three-class-pairs");

    private static readonly byte[] FirstSync = [0x89, 0x88, 0x87, 0x86, 0x85, 0x84, 0x83, 0x82, 0x81];

    private static readonly byte[] SecondSync = [0x09, 0x08, 0x07, 0x06, 0x05, 0x04, 0x03, 0x02, 0x01];

    private static BlockCandidate Reading(
        int setting, double start, double end, BlockStatus status, BlockIdentity identity, byte[] header, int? syncCopy, bool cut, int payload = 0) => new()
        {
            SettingIndex = setting,
            SettingName = $"s{setting}",
            Identity = identity,
            Header = [.. header],
            Payload = [.. new byte[payload]],
            Status = status,
            Confidence = status == BlockStatus.Clean ? 0.99 : 0,
            ByteMargins = [.. Enumerable.Repeat(0.9f, payload)],
            ByteErrorOdds = [.. Enumerable.Repeat(1e-4f, payload)],
            ByteSeconds = [.. Enumerable.Range(0, payload).Select(i => start + 0.05 + (0.006 * i))],
            Decisions = payload * 8,
            AmbiguousDecisions = 0,
            MinimumMargin = 0.5,
            MeanMargin = 0.9,
            FramingErrors = 0,
            LevelDbfs = -12,
            SnrDb = 20,
            Speed = 1,
            StartSeconds = start,
            EndSeconds = end,
            Truncated = cut,
            SyncCopy = syncCopy,
        };

    private static byte[] HeaderBlock(string name)
    {
        var header = new byte[30];
        FirstSync.CopyTo(header, 0);
        System.Text.Encoding.ASCII.GetBytes(name.PadRight(16)).CopyTo(header, 10);
        return header;
    }

    /// <summary>Both copies of a file's header block: read clean by s0, cut short by s1 and s2 (a byte or two, no copy told).</summary>
    private static IEnumerable<BlockCandidate> HeaderCopies(string name, double first, double second, int ordinal)
    {
        var identity = new BlockIdentity(name, null, 0, ordinal);
        var cutIdentity = new BlockIdentity(null, null, 0, ordinal);
        foreach (var (start, copy) in new[] { (first, 0), (second, 1) })
        {
            yield return Reading(0, start, start + 0.229, BlockStatus.Clean, identity, HeaderBlock(name), copy, cut: false);
            yield return Reading(1, start + 0.001, start + 0.030, BlockStatus.Failed, cutIdentity, [0xDB], null, cut: true);
            yield return Reading(2, start, start + 0.045, BlockStatus.Failed, cutIdentity, [0xEF, 0x1E], null, cut: true);
        }
    }

    private static List<BlockCandidate> Capture()
    {
        var data = new BlockIdentity("F0031", null, 1, 6);
        var unnamed = new BlockIdentity(null, null, 1, 6);
        var readings = new List<BlockCandidate>();
        readings.AddRange(HeaderCopies("F0031", 3.158, 3.547, 4));

        // The data block, both copies failed: s0 read each sync right (the header keeps the first copy's sync), s1
        // stopped after a byte, s2 and s3 garbled the countdown and ran to a marker.
        foreach (var (start, copy) in new[] { (3.937, 0), (4.385, 1) })
        {
            readings.Add(Reading(0, start, start + 0.288, BlockStatus.Failed, data, FirstSync, copy, cut: false, payload: 29));
            readings.Add(Reading(1, start - 0.001, start + 0.006, BlockStatus.Failed, unnamed, [0xDB], null, cut: true));
            readings.Add(Reading(2, start, start + 0.294, BlockStatus.Failed, unnamed, [0xCD, 0x89, 0xA7, 0xC6, 0x85, 0x95, 0xC3, 0x93, 0xC5], null, cut: false, payload: 31));
            readings.Add(Reading(3, start, start + 0.030, BlockStatus.Failed, unnamed, copy == 0 ? [0x89, 0x88, 0x78, 0xC3] : [0x09, 0x08, 0x07, 0x06, 0xFA, 0x82], null, cut: true));
        }

        readings.AddRange(HeaderCopies("F0032", 4.833, 5.222, 8));
        return readings;
    }

    [Fact]
    public void The_two_copies_of_a_data_block_make_one_position_between_the_header_blocks_around_it()
    {
        var placed = BlockPositioner.Place(Capture(), Profile.Layout.Copies);

        // Three blocks were written: the first file's header, its data, the next file's header (before, four positions:
        // the data block's first copy joined the header before it in most settings and stood alone in the others, and
        // its second copy joined the next header).
        Assert.Equal(3, placed.Select(c => c.Position).Distinct().Count());
        var data = placed.Where(c => c.StartSeconds > 3.9 && c.StartSeconds < 4.7).Select(c => c.Position).Distinct().ToList();
        Assert.Single(data);
        Assert.DoesNotContain(data[0], placed.Where(c => c.StartSeconds < 3.9 || c.StartSeconds > 4.7).Select(c => c.Position));
    }

    [Fact]
    public void A_failed_reading_that_starts_inside_a_copy_joins_that_copy_s_position()
    {
        // A setting lost the signal in the data block's first copy and found a byte boundary 0.12 s on: its reading
        // starts inside the copy, with a header of payload bytes that names no copy and no block.
        var readings = Capture();
        readings.Add(Reading(4, 4.057, 4.225, BlockStatus.Failed, new BlockIdentity(null, null, 1, 3), [0x5B, 0x3E, 0x11, 0x90, 0x27, 0x6A, 0x01, 0xC4, 0x3D], null, cut: false, payload: 20));

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        Assert.Equal(3, placed.Select(c => c.Position).Distinct().Count());
        int resync = placed.Single(c => c.SettingIndex == 4).Position;
        Assert.Equal(placed.Single(c => c.SettingIndex == 0 && c.StartSeconds == 3.937).Position, resync);
    }

    [Fact]
    public void A_first_copy_after_a_first_copy_is_the_next_block_however_alike_their_headers()
    {
        // Two data blocks in a row, each read only at its first copy (the second copies lost), by s0 with a failed check
        // and by s1 cut short; both name no file. Their headers are the countdown alone, alike in both: only the sync
        // order says they are two blocks.
        var unnamed = new BlockIdentity(null, null, 1, 0);
        var readings = new List<BlockCandidate>();
        foreach (double start in new[] { 2.000, 2.400 })
        {
            readings.Add(Reading(0, start, start + 0.288, BlockStatus.Failed, unnamed, FirstSync, 0, cut: false, payload: 29));
            readings.Add(Reading(1, start, start + 0.040, BlockStatus.Failed, unnamed, [0x89, 0x88, 0x87], 0, cut: true));
        }

        var placed = BlockPositioner.Place(readings, Profile.Layout.Copies);

        Assert.Equal(2, placed.Select(c => c.Position).Distinct().Count());
    }

    [Theory]
    [InlineData("89 88 87 86 85 84 83 82 81 00 46", 0)]
    [InlineData("09 08 07 06 05 04 03 02 01", 1)]
    [InlineData("89 88", 0)]
    [InlineData("09 08 07", 1)]
    [InlineData("89", null)]
    [InlineData("89 88 78", null)]
    [InlineData("DB BF 8E", null)]
    public void The_copy_a_reading_began_at_is_the_one_whose_countdown_agrees_with_every_sync_byte_read(string read, int? copy)
    {
        // The countdowns are the profile's own: 89 … 81 before the first copy, 09 … 01 before the second. One byte is
        // not enough: 89 and 09 differ in one bit.
        var codec = BlockLayoutCodec.For(Profile.Kinds[1]);
        byte[] bytes = Convert.FromHexString(read.Replace(" ", string.Empty, StringComparison.Ordinal));

        Assert.Equal(copy, codec.SyncCopyRead(bytes));
    }

    [Fact]
    public void A_reading_of_the_second_copy_keeps_its_copy_while_its_header_carries_the_first_copy_s_sync()
    {
        // The data block of a file of four bytes: the countdown of the second copy, the payload and its XOR (the
        // profile's check, computed here by hand over the payload: 01 ^ 02 ^ 03 ^ 04 = 04).
        var output = new List<BlockCandidate>();
        var assembler = new BlockAssembler(Profile, 0, "s0", 44_100, output);
        byte[] written = [.. SecondSync, 0x01, 0x02, 0x03, 0x04, 0x04];
        assembler.Begin(0, BlockStartEvidence.LeadIn);
        for (int b = 0; b < written.Length; b++)
        {
            int first = assembler.DecisionCount;
            for (int k = 0; k < 8; k++)
            {
                assembler.AddDecision(0.9f, 0.01f, 1);
            }

            assembler.AddByte(written[b], first, framingOk: true, sample: 100 * (b + 1));
        }

        assembler.End(100 * (written.Length + 1));

        var reading = Assert.Single(output);
        Assert.Equal(1, reading.SyncCopy);
        Assert.Equal(FirstSync, reading.Header.AsSpan(0, 9).ToArray());
    }
}
