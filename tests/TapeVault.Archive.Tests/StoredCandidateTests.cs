using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Runs;
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
}
