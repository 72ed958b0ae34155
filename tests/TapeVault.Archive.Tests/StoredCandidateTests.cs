using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Runs;
using TapeVault.Archive.Timeline;
using TapeVault.Core.Timeline;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>A merge rebuilds candidates from their rows, so a row must give back every field the merge reads.</summary>
[Collection(SharedArchiveGroup.Name)]
public sealed class StoredCandidateTests(SharedArchive shared)
{
    [Fact]
    public async Task A_stored_candidate_gives_back_the_error_odds_of_its_header_and_check_bytes()
    {
        await using var db = shared.Archive.NewContext();
        var rows = await db.Candidates.AsNoTracking().Where(c => c.StoredChecksum != null).Take(20).ToListAsync();
        Assert.NotEmpty(rows);
        foreach (var row in rows)
        {
            var candidate = RunStore.ToCandidate(row);
            Assert.Equal(candidate.Header.Length, candidate.HeaderErrorOdds.Length);
            Assert.Equal(2, candidate.ChecksumErrorOdds.Length);
            Assert.All(candidate.HeaderErrorOdds, e => Assert.InRange(e, 0f, 1f));

            var again = RunStore.ToCandidate(RunStore.ToRecord(candidate));
            Assert.Equal(candidate.HeaderErrorOdds.ToArray(), again.HeaderErrorOdds.ToArray());
            Assert.Equal(candidate.ChecksumErrorOdds.ToArray(), again.ChecksumErrorOdds.ToArray());
            Assert.Equal(candidate.Doubts, again.Doubts);
            Assert.Equal(candidate.Doubts, (TapeVault.Core.Blocks.BlockDoubts)row.Doubts);
        }

        // The archive keeps why a reading failed: every failed row says it.
        var failed = await db.Candidates.AsNoTracking().Where(c => c.Status == TapeVault.Core.Blocks.BlockStatus.Failed).ToListAsync();
        Assert.All(failed, f => Assert.NotEqual(0, f.Doubts));
    }

    [Fact]
    public async Task A_row_stored_before_those_odds_were_kept_reads_back_with_none()
    {
        await using var db = shared.Archive.NewContext();
        var row = await db.Candidates.AsNoTracking().FirstAsync();
        row.HeaderErrorOdds = null;
        row.ChecksumErrorOdds = null;
        var candidate = RunStore.ToCandidate(row);
        Assert.Empty(candidate.HeaderErrorOdds);
        Assert.Empty(candidate.ChecksumErrorOdds);
    }

    [Fact]
    public async Task A_runs_kept_timeline_readings_are_the_readings_of_its_rows()
    {
        await using var db = shared.Archive.NewContext();
        var runs = await db.Runs.AsNoTracking().Include(r => r.Timeline).Include(r => r.Candidates).ToListAsync();
        Assert.Contains(runs, r => r.Candidates.Count > 1);
        foreach (var run in runs)
        {
            // Written with the run by the decode job, once; read back, every field of every reading is its row's.
            Assert.NotNull(run.Timeline);
            var kept = new List<TimelineReading>();
            Assert.True(TimelineReadingsValue.TryRead(run.Timeline.Readings, "capture", kept));
            var rows = run.Candidates.Select(c => TimelineDrawings.ReadingOf("capture", c)).ToList();
            Assert.Equal(Ordered(rows), Ordered(kept));
        }
    }

    [Fact]
    public async Task A_kept_timeline_value_cut_short_or_of_an_unknown_format_is_not_read()
    {
        await using var db = shared.Archive.NewContext();
        var value = (await db.RunTimelines.AsNoTracking().Where(t => t.Run!.Candidates.Count > 1).FirstAsync()).Readings;
        var into = new List<TimelineReading> { new("other", "s", "k", "clean", 1, 0, 1, 1) };
        Assert.False(TimelineReadingsValue.TryRead(value[..^1], "capture", into));
        Assert.False(TimelineReadingsValue.TryRead([.. value, 0], "capture", into));
        Assert.False(TimelineReadingsValue.TryRead([(byte)(value[0] + 1), .. value[1..]], "capture", into));
        Assert.False(TimelineReadingsValue.TryRead([], "capture", into));

        // A count of readings far beyond what the value holds (here the largest a 7-bit encoded count can say) is
        // refused before anything is made for them.
        int tables = TablesLength(value);
        Assert.False(TimelineReadingsValue.TryRead([.. value[..tables], 0xFF, 0xFF, 0xFF, 0xFF, 0x07, .. value[(tables + CountLength(value, tables))..]], "capture", into));
        Assert.Single(into);
        Assert.True(TimelineReadingsValue.TryRead(value, "capture", into));
        Assert.True(into.Count > 2);
    }

    [Fact]
    public async Task A_decode_jobs_rows_hold_every_field_of_every_reading_the_decoder_made_in_its_order()
    {
        // The job writes its readings with one statement of the model's columns, not through EF Core's tracking: each
        // row must hold what the decoder made, column by column, as the run store's record of the reading has it.
        await using var db = shared.Archive.NewContext();
        var runs = await db.Runs.AsNoTracking().Include(r => r.Capture).OrderBy(r => r.Id).ToListAsync();
        Assert.NotEmpty(runs);
        var columns = db.Model.FindEntityType(typeof(CandidateRecord))!.GetProperties()
            .Where(p => p.Name is not nameof(CandidateRecord.Id) and not nameof(CandidateRecord.RunId)).ToList();
        foreach (var run in runs)
        {
            var rows = await db.Candidates.AsNoTracking().Where(c => c.RunId == run.Id).OrderBy(c => c.Id).ToListAsync();
            using var decoded = TapeVault.Core.Decoding.CaptureDecoder.Decode(
                shared.Archive.Store.PathOf(run.Capture!.Sha256), TapeVault.Core.Formats.ProfileCatalog.BuiltIn.Get(run.ProfileId));
            var made = decoded.Candidates.Select(RunStore.ToRecord).ToList();
            Assert.Equal(made.Count, rows.Count);
            Assert.True(rows.Count > 1);
            for (int i = 0; i < rows.Count; i++)
            {
                foreach (var column in columns)
                {
                    object? want = column.GetGetter().GetClrValue(made[i]);
                    object? got = column.GetGetter().GetClrValue(rows[i]);
                    if (want is byte[] bytes)
                    {
                        Assert.True(got is byte[] stored && bytes.AsSpan().SequenceEqual(stored), $"run {run.Id}, reading {i}: {column.Name}");
                    }
                    else
                    {
                        Assert.True(Equals(want, got), $"run {run.Id}, reading {i}: {column.Name} {want} stored as {got}");
                    }
                }
            }
        }
    }

    /// <summary>Where a value's count of readings starts: after its format byte and its three tables of names.</summary>
    private static int TablesLength(byte[] value)
    {
        using var reader = new BinaryReader(new MemoryStream(value), System.Text.Encoding.UTF8);
        reader.ReadByte();
        for (int table = 0; table < 3; table++)
        {
            int names = reader.Read7BitEncodedInt();
            for (int i = 0; i < names; i++)
            {
                reader.ReadString();
            }
        }

        return (int)reader.BaseStream.Position;
    }

    /// <summary>How many bytes the 7-bit encoded count at <paramref name="at"/> takes (each but the last has its top bit set).</summary>
    private static int CountLength(byte[] value, int at)
    {
        int length = 1;
        while ((value[at + length - 1] & 0x80) != 0)
        {
            length++;
        }

        return length;
    }

    private static List<TimelineReading> Ordered(List<TimelineReading> readings) =>
        [.. readings.OrderBy(r => r.Setting, StringComparer.Ordinal).ThenBy(r => r.StartSeconds).ThenBy(r => r.EndSeconds).ThenBy(r => r.Key, StringComparer.Ordinal)
            .ThenBy(r => r.Status, StringComparer.Ordinal).ThenBy(r => r.Confidence).ThenBy(r => r.Speed)];
}
