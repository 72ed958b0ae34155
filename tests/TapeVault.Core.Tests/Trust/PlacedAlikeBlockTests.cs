using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using TapeVault.Core.Tests.RoundTrip;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// Data blocks whose check holds over alike bytes (a run of zeros, one byte and its XOR, no bytes at all) in a format
/// that places every block by marks that are not its bytes: three-class-pairs writes a countdown sync before each copy
/// (89 down to 81 before the first, 09 down to 01 before the second), ends each block with a marker, and its header
/// block gives the data block's length. Where the sync was read whole and the marker came where the header block said,
/// a stuck line or a steady tone cannot have made the block, so its holding check is evidence like any other and the
/// block may be clean. Where the sync was not read, nothing but its bytes says a block is there, and it stays failed.
/// </summary>
public sealed class PlacedAlikeBlockTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    private static readonly FormatProfile Profile = ProfileCatalog.BuiltIn.Get("three-class-pairs");

    /// <summary>
    /// A tape whose data blocks are all alike but one: 40 zero bytes (an XOR of zeros is zero), one byte (the XOR of
    /// one byte is that byte), no bytes (the check covers nothing and is zero), then a file of text. XOR's value over
    /// such bytes is its definition (common practice).
    /// </summary>
    private static List<TapeFile> Files() =>
    [
        new("ZEROS", new byte[40]) { Address = 0x1000 },
        new("ONE", [0xA5]) { Address = 0x2000 },
        new("EMPTY", []) { Address = 0x3000 },
        new("TEXT", Encoding.ASCII.GetBytes("archive tape block 0123456789")) { Address = 0x4000 },
    ];

    [Fact]
    public void A_tape_of_alike_data_blocks_from_the_channel_model_comes_back_all_clean_and_exact()
    {
        var files = Files();
        string path = folder.NewCapture("alike-channel");
        var capture = CaptureSynthesizer.Write(path, Profile, files, new ChannelDamage { SnrDb = 26, Speed = 0.98, WowPercent = 0.2, Seed = 71 });

        AssertAllCleanAndExact(capture.Blocks, path);
    }

    /// <summary>
    /// Damage made outside the project: SoX (a general-purpose audio tool) plays the capture 4 % fast, band-limits it
    /// to 150–6000 Hz, inverts it and re-quantises it to 8 bits.
    /// </summary>
    [Fact]
    public void A_tape_of_alike_data_blocks_through_a_sox_effect_chain_comes_back_all_clean_and_exact()
    {
        var files = Files();
        string source = folder.NewCapture("alike-sox-source");
        var capture = CaptureSynthesizer.Write(source, Profile, files, new ChannelDamage { SnrDb = 32, Seed = 72 });
        string damaged = folder.NewCapture("alike-sox-damaged");
        OutsideTool.Sox(source, "-b", "8", damaged, "speed", "1.04", "lowpass", "6000", "highpass", "150", "vol", "-1");
        Assert.Equal("8", OutsideTool.SoxInfo("-b", damaged));

        AssertAllCleanAndExact(capture.Blocks, damaged);
    }

    /// <summary>
    /// The control: SoX silences 30 ms of the zeros' countdown in both copies (its trim and synth effects), so neither
    /// copy's sync is read whole. The zeros block then has nothing but its own bytes for evidence and is not clean in
    /// any reading or in the image; the blocks around it still are.
    /// </summary>
    [Fact]
    public void The_zeros_block_whose_sync_was_not_read_is_not_clean()
    {
        var files = Files();
        string source = folder.NewCapture("alike-unsynced-source");
        var capture = CaptureSynthesizer.Write(source, Profile, files, new ChannelDamage { SnrDb = 32, Seed = 73 });
        var truth = RoundTrips.Truth(Profile, capture.Blocks);
        var zeros = truth[1];
        Assert.Equal(new byte[40], zeros.Payload);

        // Where each copy of the zeros' data block begins in the capture: where the undamaged capture's whole readings
        // of it begin, at the first of the countdown's nine bytes of about 7 ms each. 30 ms from the second byte on
        // leave the sync unread.
        var starts = CaptureDecoder.Decode(source, Profile).Candidates
            .Where(c => !c.Truncated && zeros.Matches(c))
            .GroupBy(c => c.SyncCopy)
            .Select(g => g.Min(c => c.StartSeconds))
            .ToList();
        Assert.Equal(2, starts.Count);
        string damaged = source;
        foreach (double start in starts)
        {
            string next = folder.NewCapture("alike-unsynced");
            OutsideTool.SoxSilence(damaged, next, start + 0.008, 0.030);
            damaged = next;
        }

        var result = CaptureDecoder.Decode(damaged, Profile);
        var image = TapeMerger.Merge([result], [Path.GetFileName(damaged)]);

        Assert.DoesNotContain(result.Candidates, c => c.Status == BlockStatus.Clean && zeros.Matches(c));
        Assert.DoesNotContain(image.Blocks, b => b.Status == RecoveryStatus.Clean && b.Payload.AsSpan().SequenceEqual(zeros.Payload) && b.Header.AsSpan().SequenceEqual(zeros.Header));

        // The silence took the zeros block only: the text file's two blocks, after it, are read clean.
        Assert.Contains(image.Blocks, b => b.Status == RecoveryStatus.Clean && b.Payload.AsSpan().SequenceEqual(truth[^1].Payload));
    }

    [Fact]
    public void The_rule_asks_for_the_whole_sync_and_the_end_marker_where_the_header_block_said()
    {
        var blocks = BlockWriter.Blocks(Profile, [new TapeFile("ZEROS", new byte[40]) { Address = 0x1000 }]);
        var (header, data) = (blocks[0], blocks[1]);

        // Read whole after its header block: clean.
        Assert.Equal(BlockStatus.Clean, ReadInTurn((header, LeadInAndSync), (data, LeadInAndSync))[1].Status);

        // The countdown's last byte misread (81 read as 80): no sync, no evidence, not clean.
        var unsynced = (byte[])data.Clone();
        unsynced[8] = 0x80;
        var noSync = ReadInTurn((header, LeadInAndSync), (unsynced, LeadInAndSync))[1];
        Assert.Equal(BlockStatus.Failed, noSync.Status);
        Assert.True(noSync.Doubts.HasFlag(BlockDoubts.NoStartEvidence | BlockDoubts.AllAlikeCheck), $"doubts {noSync.Doubts}");

        // Its header block not read: only the end marker says where it ends.
        var alone = ReadInTurn((data, LeadInAndSync))[0];
        Assert.Equal(BlockStatus.Failed, alone.Status);
        Assert.True(alone.Doubts.HasFlag(BlockDoubts.AllAlikeCheck), $"doubts {alone.Doubts}");

        // The end marker one zero byte early (39 bytes where the header block said 40): a marker lost or gained.
        var early = ReadInTurn((header, LeadInAndSync), (data[..^2].Append(data[^1]).ToArray(), LeadInAndSync))[1];
        Assert.Equal(BlockStatus.Failed, early.Status);
    }

    private const BlockStartEvidence LeadInAndSync = BlockStartEvidence.LeadInAndSync;

    /// <summary>Blocks read one after another by one setting, each begun on its evidence and ended at its end marker, every decision read well.</summary>
    private static List<BlockCandidate> ReadInTurn(params (byte[] Bytes, BlockStartEvidence Evidence)[] blocks)
    {
        var output = new List<BlockCandidate>();
        var assembler = new BlockAssembler(Profile, 0, "s0", 44_100, output);
        double sample = 0;
        foreach (var (bytes, evidence) in blocks)
        {
            assembler.Begin(sample, evidence);
            foreach (byte value in bytes)
            {
                int first = assembler.DecisionCount;
                for (int k = 0; k < 9; k++)
                {
                    assembler.AddDecision(0.9f, 0.02f, 1);
                }

                sample += 300;
                assembler.AddByte(value, first, framingOk: true, sample);
            }

            sample += 300;
            assembler.EndAtMarker(sample);
        }

        Assert.Equal(blocks.Length, output.Count);
        return output;
    }

    private static void AssertAllCleanAndExact(IReadOnlyList<byte[]> written, string path)
    {
        var truth = RoundTrips.Truth(Profile, written);
        var result = CaptureDecoder.Decode(path, Profile);

        var image = TapeMerger.Merge([result], [Path.GetFileName(path)]);

        string got = string.Join("; ", image.Blocks.Select(b => $"#{b.Position} {b.Status} {b.Key} {b.Payload.Length} B c={b.Confidence:0.####}"));
        Assert.True(truth.Count == image.Blocks.Length, $"{truth.Count} blocks written, {image.Blocks.Length} positions: {got}");
        for (int i = 0; i < truth.Count; i++)
        {
            var block = image.Blocks[i];
            Assert.True(block.Status == RecoveryStatus.Clean, $"block {i} is {block.Status}: {got}");

            // Checked against the bytes written (BlockWriter's blocks, the first copy's countdown), not against a reading.
            Assert.Equal(truth[i].Header, block.Header.ToArray());
            Assert.Equal(truth[i].Payload, block.Payload.ToArray());
        }

        Assert.True(image.OverallConfidence >= 0.99, $"overall confidence {image.OverallConfidence}: {got}");
    }
}
