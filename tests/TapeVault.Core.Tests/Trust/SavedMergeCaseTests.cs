using System.Collections.Immutable;
using System.Text.Json;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// Merges of readings saved from the trust benchmark (`TAPEVAULT_TRUST_CANDIDATES=folder dotnet run -c Release --project
/// tests/TapeVault.Bench -- trust ...` writes every pass's readings and the blocks written; a case file is the three
/// passes of one tape). Ground truth is what was written; the damage was our channel model, two of the passes then
/// through SoX.
/// </summary>
public sealed class SavedMergeCaseTests
{
    private static readonly JsonSerializerOptions CaseJson = new() { NumberHandling = System.Text.Json.Serialization.JsonNumberHandling.AllowNamedFloatingPointLiterals };

    private sealed record SavedPass(string Source, List<BlockCandidate> Candidates, List<WrittenSpan>? Copies = null);

    private sealed record SavedTape(string Profile, int Seed, string[] Written, List<SavedPass> Passes);

    [Fact]
    public void Short_blocks_that_all_carry_block_number_0_are_one_position_each_and_not_each_others_conflict()
    {
        // biphase-1200, tuning seed 12024: 15 one-block files, each block numbered 0, most of them a few dozen bytes
        // (a tenth of a second of tape) with the format's 0.15 s block gap between them. In one pass the positioner put
        // a failed reading of the next block into a block's position; with the same identity (every block is number
        // 0) it stretched the position over the next block, whose clean readings in the other passes then joined it:
        // two contents each read clean by two captures, merged at 0.5 although both were right, and one written block
        // fewer in the image (before: 5 of 8 clean positions held two written blocks).
        var (_, profile, written, readClean, image) = Merged("biphase-1200-short-blocks-three-passes.json");

        var clean = image.Blocks.Where(b => b.Status == RecoveryStatus.Clean).ToList();
        Assert.All(clean, b => Assert.False(b.Conflict, $"position {b.Position} holds two clean contents"));
        Assert.All(clean, b => Assert.Contains(written, w => IsBlock(profile, b.Header, b.Payload, w)));

        // Every written block some pass read clean is a clean position of its own, as sure as its readings are.
        Assert.Equal(readClean.Count, clean.Count);
        Assert.All(clean, b => Assert.True(b.Confidence >= 0.99, $"position {b.Position} right at {b.Confidence}"));
    }

    [Fact]
    public void Headers_of_neighbouring_files_read_without_their_names_are_not_one_position()
    {
        // three-class-pairs, tuning seed 15013: eight files, each a header block and a data block, every block written
        // twice. No pass read a header clean, and most header readings lost their name: every one of them carries the
        // same identity (no name, the header kind), which is every file's header. A reading of one copy was let join a
        // position of its identity up to half a second away, so the readings of four files' headers in all three passes
        // chained into one position, whose vote held the 8-bit XOR with a header that was never written (before: voted
        // at 0.994 from 105 readings).
        var (tape, profile, written, _, image) = Merged("three-class-pairs-neighbouring-headers-three-passes.json");

        // Ground truth: the blocks the synthesiser wrote. A position the merge is sure of is one of them.
        var sure = image.Blocks.Where(b => b.Status != RecoveryStatus.Missing && b.Confidence >= 0.99).ToList();
        Assert.All(sure, b => Assert.Contains(written, w => IsBlock(profile, b.Header, b.Payload, w)));

        // Each position holds readings of one place on the tape: of each capture, the readings that start at a written
        // copy's sync (where the synthesiser wrote it, in that capture's time) start at copies of one written block.
        // Judged within each capture: the first, with no clean block in common with the others, lies on a timeline that
        // drifts by about a block over the tape, so which position its readings join is the alignment's doing.
        var captures = image.Captures.Select(c => c.CaptureSha256).ToList();
        foreach (var block in image.Blocks)
        {
            foreach (var capture in block.Sources.GroupBy(s => captures.IndexOf(s.CaptureSha256)))
            {
                var places = capture
                    .Select(s => WrittenAt(tape.Passes[capture.Key], s.StartSeconds))
                    .OfType<WrittenSpan>()
                    .Select(w => w.Block)
                    .Distinct()
                    .ToList();
                Assert.True(places.Count <= 1, $"position {block.Position} ({block.Key}) holds capture {capture.Key}'s readings of written blocks {string.Join(", ", places)}");
            }
        }
    }

    [Fact]
    public void A_pass_that_read_no_block_clean_joins_the_position_its_readings_mostly_name()
    {
        // one-cycle-bits, seed 126335: ten one-block files. The third pass read every block but one clean; the SoX pass
        // read none. Its position over the second block holds four garbled readings with four identities, two of them
        // block number 0 (the block's) and two misframed ones carrying 64 and 20; the first of them, number 64, was
        // taken for the position's identity, which kept it from the second block's position, and its one reading whose
        // 16-bit sum holds (two header bytes and the stored sum's high byte misread alike) stood alone as a voted block
        // at 0.994 that was never written.
        var (_, profile, written, readClean, image) = Merged("one-cycle-bits-garbled-headers-three-passes.json");

        // Ground truth: the blocks the synthesiser wrote. A position the merge is sure of is one of them, and every
        // written block some pass read clean is a clean position of its own.
        var clean = AssertSureAreWrittenAndCleanAreRead(profile, written, readClean, image);
        Assert.All(readClean, w => Assert.Contains(clean, b => IsBlock(profile, b.Header, b.Payload, w)));
    }

    [Fact]
    public void A_name_no_check_proved_that_breaks_the_names_of_the_proven_positions_around_it_is_not_sure()
    {
        // one-cycle-bits, seed 138341: fourteen one-block files named F3410 to F34113. The third pass read every block
        // but the twelfth clean and read nothing at all of that one; the second read nothing clean. The first's only
        // reading of it holds the 16-bit sum only because two misread bits cancel in it (0x31 read 0x21 in the name,
        // 0x2a read 0x3a in the payload), a failed reading no other capture proved: F341!1, which stood as a voted
        // block at 0.994 that was never written, between the proven F34110 and F34112.
        var (_, profile, written, readClean, image) = Merged("one-cycle-bits-misread-name-between-proven-names-three-passes.json");

        // Ground truth: the blocks the synthesiser wrote. A position the merge is sure of is one of them, and every
        // written block some pass read clean is a clean position of its own, as sure as its readings are.
        var clean = AssertSureAreWrittenAndCleanAreRead(profile, written, readClean, image);
        Assert.All(clean, b => Assert.True(b.Confidence >= 0.99, $"position {b.Position} right at {b.Confidence}"));
    }

    [Fact]
    public void A_lone_reading_whose_weak_sum_holds_that_no_other_setting_repeats_is_not_sure()
    {
        // one-cycle-bits, seed 144435: nineteen one-block files named F4350 to F43518. The eighteenth, F43517 (forty
        // bytes 0xdd), lies at the tape's end after the last block read clean: the first pass read nothing of it, the
        // second nothing but noise, and the third two readings, one whose 16-bit sum fails (it slipped a bit after an
        // erased one) and one whose sum holds only because the same bit was lost in two payload bytes (0xdd read 0xd9)
        // and one bit in the sum (0x3a read 0x32). No vote held above even odds, so that reading was kept at the rate
        // of such readings (0.9974), and the passes that missed the block lowered it only to 0.991: a voted block that
        // was never written.
        var (_, profile, written, readClean, image) = Merged("one-cycle-bits-last-block-lone-weak-vote-three-passes.json");

        // Ground truth: the blocks the synthesiser wrote. A position the merge is sure of is one of them, and every
        // written block some pass read clean is a clean position of its own, as sure as its readings are.
        var clean = AssertSureAreWrittenAndCleanAreRead(profile, written, readClean, image);
        Assert.All(clean, b => Assert.True(b.Confidence >= 0.99, $"position {b.Position} right at {b.Confidence}"));
    }

    [Fact]
    public void Blocks_no_pass_saw_are_counted_only_from_numbers_read_whole()
    {
        // one-cycle-bits, seed 138141: nineteen one-block files, every one read clean. One setting of the second pass
        // read four bytes ahead of the first block as a block named " ?? ?  ?", number 8, failed. Its position was missing, and
        // its garbled number stood for the eighth block of a file whose first eight blocks no pass saw: eight more
        // missing positions of a file that was never written (before: 28 positions for 19 blocks).
        var (_, profile, written, _, image) = Merged("one-cycle-bits-garbled-missing-header-three-passes.json");

        // Ground truth: the blocks the synthesiser wrote, each a file of its own. A position no pass saw at all is a
        // block of a file that a position read whole names.
        var read = image.Blocks.Where(b => b.Status != RecoveryStatus.Missing).ToList();
        Assert.All(read, b => Assert.True(written.Exists(w => IsBlock(profile, b.Header, b.Payload, w)), $"position {b.Position} ({b.Key}) was never written"));
        Assert.All(
            image.Blocks.Where(b => b.Status == RecoveryStatus.Missing && b.Sources.IsEmpty),
            b => Assert.True(read.Exists(r => r.FileName == b.FileName && r.FileId == b.FileId), $"position {b.Position} ({b.Key}) is a block of a file no block read names"));
        Assert.Equal(written.Count, read.Count);
    }

    [Fact]
    public void Readings_of_one_capture_whose_repair_is_likelier_a_false_match_are_no_position()
    {
        // orrin-80, seed 138009: ten blocks, every one read clean by two captures or three. One setting of the second
        // pass read the first block with its name and number garbled (F0090  !, number 45355, failed), which kept it
        // from that block's position; the repair search found a pattern its CRC holds, likelier a false match than a
        // block, and the reading stood as a missing position of its own: an eleventh position on a tape of ten
        // blocks, which failed readings make only from two captures (one capture's for which no pattern holds make none).
        var (_, profile, written, _, image) = Merged("orrin-80-one-capture-false-match-three-passes.json");

        // Ground truth: the ten blocks the synthesiser wrote, each a position of its own and nothing else.
        Assert.All(image.Blocks, b => Assert.True(written.Exists(w => IsBlock(profile, b.Header, b.Payload, w)), $"position {b.Position} ({b.Key}, {b.Status}) is no written block"));
        Assert.Equal(written.Count, image.Blocks.Length);
    }

    [Fact]
    public void A_pass_that_read_one_copy_of_a_block_clean_is_lined_up_at_that_copy()
    {
        // three-class-pairs, seed 134211: every block written twice, each copy after a sync of its own (89 down to 81,
        // then 09 down to 01). The second pass read one block clean, its first copy; the first pass read both copies of
        // it clean. A header keeps the first copy's sync whatever copy was read, so the one anchor paired alike with
        // both copies, and the tie went to the pair nearer the captures' starts lined up: the second copy, a block
        // (0.34 s) off, and that pass's readings of seven blocks made positions of their own. Only the clean readings
        // are kept in this case: they are what passes are lined up on.
        var tape = Load("three-class-pairs-one-copy-read-clean-three-passes.json");
        var profile = ProfileCatalog.BuiltIn.Get(tape.Profile);
        var passes = tape.Passes.Select((p, i) => Readings.Pass(i, [.. p.Candidates])).ToList();

        AssertLinedUp(tape, TapeMerger.Align(passes, profile));
    }

    [Fact]
    public void A_pass_that_read_no_block_clean_is_lined_up_by_the_rhythm_of_its_blocks()
    {
        // orrin-80, seed 134573: ten blocks. No pass read any of them clean (the third read nothing at all), so the
        // passes had no anchor in common and the second was lined up at its first reading's start, which lies in its
        // lead-in, 1.06 s before its first block's sync, where the first pass's first reading starts: every reading of
        // the second pass lay over another block than its own. Where the readings start (each block's sync) still lies
        // at the same gaps in both passes.
        var tape = Load("orrin-80-pass-read-nothing-clean-three-passes.json");
        var profile = ProfileCatalog.BuiltIn.Get(tape.Profile);
        var passes = tape.Passes.Select((p, i) => Readings.Pass(i, [.. p.Candidates])).ToList();
        Assert.All(passes, p => Assert.DoesNotContain(p.Candidates, c => c.Status == BlockStatus.Clean));

        AssertLinedUp(tape, TapeMerger.Align(passes, profile));
    }

    [Fact]
    public void A_voted_header_block_keeps_the_number_its_kind_has_in_the_file()
    {
        // three-class-pairs, seed 134183, the readings of the eleventh header block's two copies only. A header carries
        // no block number; the assembler numbers each kind by its place in the file (header 0, data 1), and every
        // reading of this header is keyed F1835:0. The readings of the third pass held the 8-bit XOR only by vote, and
        // the voted header was keyed by its fields alone, F1835: with no number: another key than its readings'.
        var (_, profile, written, _, image) = Merged("three-class-pairs-voted-header-three-passes.json");

        var voted = image.Blocks.Where(b => b.Status is RecoveryStatus.Voted or RecoveryStatus.Repaired).ToList();
        Assert.NotEmpty(voted);

        // Ground truth: the header block the synthesiser wrote, its name field as the profile lays it out.
        Assert.All(image.Blocks.Where(b => b.Status != RecoveryStatus.Missing), b => Assert.Contains(written, w => IsBlock(profile, b.Header, b.Payload, w)));
        Assert.All(voted, b => Assert.Equal("F1835:0", b.Key));
    }

    /// <summary>
    /// Every position at confidence 0.99 or more is a written block, and there are as many clean positions as written
    /// blocks some pass read clean. Returns the clean positions.
    /// </summary>
    private static List<ImageBlock> AssertSureAreWrittenAndCleanAreRead(FormatProfile profile, List<byte[]> written, List<byte[]> readClean, TapeImage image)
    {
        var sure = image.Blocks.Where(b => b.Status != RecoveryStatus.Missing && b.Confidence >= 0.99).ToList();
        Assert.All(sure, b => Assert.True(written.Exists(w => IsBlock(profile, b.Header, b.Payload, w)), $"position {b.Position} ({b.Key}, {b.Status} at {b.Confidence}) was never written"));
        var clean = image.Blocks.Where(b => b.Status == RecoveryStatus.Clean).ToList();
        Assert.Equal(readClean.Count, clean.Count);
        return clean;
    }

    /// <summary>
    /// Each pass that read anything lies on the common timeline where its copies were written: the same written
    /// copy (where the synthesiser wrote it, in each capture's time) maps to within 0.1 s in every pass, far less than a
    /// block (a copy of a three-class-pairs header is about 0.3 s of tape, an orrin-80 block more).
    /// </summary>
    private static void AssertLinedUp(SavedTape tape, PassTimeline[] timelines)
    {
        var reference = Enumerable.Range(0, tape.Passes.Count).First(i => tape.Passes[i].Candidates.Count > 0);
        for (int p = 0; p < tape.Passes.Count; p++)
        {
            if (tape.Passes[p].Candidates.Count == 0)
            {
                continue;
            }

            var copies = tape.Passes[p].Copies!;
            var referenceCopies = tape.Passes[reference].Copies!;
            for (int k = 0; k < copies.Count; k++)
            {
                double error = timelines[p].Map(copies[k].DataSeconds) - timelines[reference].Map(referenceCopies[k].DataSeconds);
                Assert.True(Math.Abs(error) <= 0.1, $"pass {p}: block {copies[k].Block} copy {copies[k].Copy} lies {error:0.000} s from pass {reference}'s");
            }
        }
    }

    /// <summary>The written copy of the pass whose sync a reading that starts at <paramref name="start"/> starts at (within 30 ms), or null.</summary>
    private static WrittenSpan? WrittenAt(SavedPass pass, double start) =>
        pass.Copies!.Cast<WrittenSpan?>().FirstOrDefault(w => Math.Abs(w!.Value.DataSeconds - start) <= 0.03);

    private static bool IsBlock(FormatProfile profile, BlockCandidate c, byte[] written) => IsBlock(profile, c.Header, c.Payload, written);

    /// <summary>
    /// Whether header and payload are the written block's: the block's bytes followed by nothing but a check value of a
    /// width one of the profile's block kinds has (kinds may differ in header and check width).
    /// </summary>
    private static bool IsBlock(FormatProfile profile, ImmutableArray<byte> header, ImmutableArray<byte> payload, byte[] written) =>
        written.Length >= header.Length + payload.Length
        && written.AsSpan(0, header.Length).SequenceEqual(header.AsSpan())
        && written.AsSpan(header.Length, payload.Length).SequenceEqual(payload.AsSpan())
        && profile.BlockKinds.Any(k => k.HeaderBytes == header.Length && BlockLayoutCodec.For(k).CheckBytes == written.Length - header.Length - payload.Length);

    /// <summary>
    /// A saved case merged as it was saved: the tape, its profile, the blocks written, those some pass read clean, and
    /// the image.
    /// </summary>
    private static (SavedTape Tape, FormatProfile Profile, List<byte[]> Written, List<byte[]> ReadClean, TapeImage Image) Merged(string name)
    {
        var tape = Load(name);
        var profile = ProfileCatalog.BuiltIn.Get(tape.Profile);
        var written = tape.Written.Select(Convert.FromHexString).ToList();
        var passes = tape.Passes.Select((p, i) => Readings.Pass(i, [.. p.Candidates])).ToList();
        var readClean = written.Where(w => passes.Any(p => p.Candidates.Any(c => c.Status == BlockStatus.Clean && IsBlock(profile, c, w)))).ToList();
        return (tape, profile, written, readClean, TapeMerger.Merge(passes, profile));
    }

    private static SavedTape Load(string name)
    {
        string path = Path.Combine(AppContext.BaseDirectory, "Trust", "Cases", name);
        return JsonSerializer.Deserialize<SavedTape>(File.ReadAllText(path), CaseJson)
            ?? throw new InvalidOperationException($"{name} holds no case.");
    }
}
