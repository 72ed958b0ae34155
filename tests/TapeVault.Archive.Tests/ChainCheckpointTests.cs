using System.Globalization;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Events;
using TapeVault.Archive.Fixity;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// The scheduled fixity audit walks the event chain from the head the last audit verified (its checkpoint) on, and the
/// whole chain when the last whole walk is older than the setting (docs/event-chain.md, "Checkpoints"). Edits are made
/// behind the archive's back as in <see cref="TamperTests"/>; on a PostgreSQL test run, on PostgreSQL.
/// </summary>
public sealed class ChainCheckpointTests
{
    [Fact]
    public async Task AuditAfterAWholeWalkWalksOnlyTheEventsAfterTheHeadItVerified()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var first = await AuditAsync(archive);
        Assert.Null(first.Chain.From);
        Assert.True(first.Chain.Intact);
        await using (var db = archive.NewContext())
        {
            // The first walk covered every event there was before the audit added its own.
            Assert.Equal(await db.Events.CountAsync(e => e.Id <= first.Chain.Head!.EventId), first.Chain.Events);
        }

        int after;
        await using (var db = archive.NewContext())
        {
            after = await db.Events.CountAsync(e => e.Id > first.Chain.Head!.EventId);
        }

        var second = await AuditAsync(archive);
        Assert.True(second.Chain.Intact);
        Assert.Equal(first.Chain.Head, second.Chain.From);
        Assert.Equal(after, second.Chain.Events);
        Assert.Equal(first.HeadAfter!.EventId, second.Chain.Head!.EventId);

        await using var check = archive.NewContext();
        var kinds = await check.Events.Where(e => e.EventType == EventTypes.FixityCheck && e.ObjectType == "event-log").OrderBy(e => e.Id).Select(e => e.ObjectId).ToListAsync();
        Assert.Equal([FixityAudit.WholeChain, FixityAudit.ChainSinceCheckpoint], kinds);
    }

    [Fact]
    public async Task EventEditedAfterTheCheckpointIsFoundByTheNextAudit()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var first = await AuditAsync(archive);

        // One of the first audit's own per-object events: recorded after the head it verified.
        long edited = first.Chain.Head!.EventId + 1;
        TamperTests.TamperBehindTriggers(archive, $"UPDATE \"Events\" SET \"Outcome\" = 'mismatch' WHERE \"Id\" = {edited};");

        var second = await AuditAsync(archive);
        Assert.Equal(first.Chain.Head, second.Chain.From);
        Assert.Equal(edited, second.Chain.FirstBreak?.EventId);
        Assert.Contains(second.Problems, p => p.Problem == FixityAudit.ChainBroken && p.File == $"event {edited}");
    }

    [Fact]
    public async Task EventEditedBeforeTheCheckpointIsFoundByVerifyAtOnceAndByTheAuditWhenTheWholeWalkIsDue()
    {
        var clock = new MovableClock();
        await using var archive = await ArchiveFixture.CreateAsync(clock: clock);
        var first = await AuditAsync(archive);
        long edited;
        await using (var db = archive.NewContext())
        {
            edited = await db.Events.Where(e => e.EventType == EventTypes.Ingest).OrderBy(e => e.Id).Select(e => e.Id).FirstAsync();
        }

        Assert.True(edited < first.Chain.Head!.EventId);
        TamperTests.TamperBehindTriggers(archive, $"UPDATE \"Events\" SET \"Agent\" = 'someone-else' WHERE \"Id\" = {edited};");

        // The trade-off of the checkpoint: a day later, the scheduled audit walks only what came after it.
        clock.Shift = TimeSpan.FromDays(1);
        var soon = await AuditAsync(archive);
        Assert.NotNull(soon.Chain.From);
        Assert.True(soon.Chain.Intact);

        // `tapevault verify` walks the whole chain every time.
        var (exit, output, _) = TamperTests.Verify(archive);
        Assert.Equal(1, exit);
        Assert.Contains($"Event chain BROKEN at event {edited}:", output, StringComparison.Ordinal);

        // Past the interval (7 days by default) since the last whole walk, the scheduled audit walks it whole again.
        clock.Shift = TimeSpan.FromDays(1 + archive.Options.WholeChainWalkDays);
        var due = await AuditAsync(archive);
        Assert.Null(due.Chain.From);
        Assert.Equal(edited, due.Chain.FirstBreak?.EventId);
    }

    [Fact]
    public async Task CheckpointEditedToSkipAnEditedEventBreaksItsOwnLink()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var first = await AuditAsync(archive);
        long checkpoint;
        string detail;
        await using (var db = archive.NewContext())
        {
            var walked = await db.Events.Where(e => e.ObjectType == "event-log" && e.ObjectId == FixityAudit.WholeChain).SingleAsync();
            (checkpoint, detail) = (walked.Id, walked.Detail);
        }

        // An event after the verified head is edited, and the checkpoint's head moved past it (to that event, with
        // the hash stored for it), as someone who can write the database but does not recompute the chain would.
        long edited = first.Chain.Head!.EventId + 2;
        string editedSha;
        await using (var db = archive.NewContext())
        {
            editedSha = (await db.Events.SingleAsync(e => e.Id == edited)).Sha256!;
        }

        Assert.True(edited < checkpoint);
        string moved = detail.Replace(first.Chain.Head.ToString(), new ChainHead(edited, editedSha).ToString(), StringComparison.Ordinal);
        Assert.NotEqual(detail, moved);
        TamperTests.TamperBehindTriggers(archive,
            $"UPDATE \"Events\" SET \"Agent\" = 'someone-else' WHERE \"Id\" = {edited};\nUPDATE \"Events\" SET \"Detail\" = '{moved}' WHERE \"Id\" = {checkpoint};");

        var second = await AuditAsync(archive);
        Assert.Equal(edited, second.Chain.From?.EventId);
        Assert.Equal(checkpoint, second.Chain.FirstBreak?.EventId);
    }

    [Fact]
    public async Task CheckpointHeadRemovedIsFound()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var first = await AuditAsync(archive);
        long head = first.Chain.Head!.EventId;
        TamperTests.TamperBehindTriggers(archive, $"DELETE FROM \"Events\" WHERE \"Id\" = {head};");

        var second = await AuditAsync(archive);
        Assert.Equal(head, second.Chain.FirstBreak?.EventId);
        Assert.Contains(head.ToString(CultureInfo.InvariantCulture), second.Chain.FirstBreak!.Reason, StringComparison.Ordinal);
    }

    private static async Task<FixityReport> AuditAsync(ArchiveFixture archive)
    {
        using var scope = archive.Services.CreateScope();
        return await scope.ServiceProvider.GetRequiredService<FixityAudit>().RunAsync(null, "tester");
    }

    /// <summary>The system's clock moved ahead by <see cref="Shift"/>.</summary>
    private sealed class MovableClock : TimeProvider
    {
        public TimeSpan Shift { get; set; }

        public override DateTimeOffset GetUtcNow() => base.GetUtcNow() + Shift;
    }
}
