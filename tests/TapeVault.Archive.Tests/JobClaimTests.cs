using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Ingest;
using TapeVault.Archive.Jobs;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// A job's result is stored by the firing whose claim stands, once: a node taken for dead (frozen, cut off) that wakes
/// after another node resumed its job stores nothing. And the job engine's rows take their times from the host's clock.
/// </summary>
public sealed class JobClaimTests
{
    [Fact]
    public async Task AFiringWhoseJobWasResumedElsewhere_StoresNoRun_AndTheResumingFiringStoresOne()
    {
        await using var archive = await JobArchive.CreateAsync();
        using var pages = archive.PagesNode();
        var (captureId, jobId) = await QueueDecodeAsync(pages, archive.Root);
        var queue = pages.GetRequiredService<JobQueue>();
        var decode = pages.GetServices<IJobHandler>().Single(h => h.Kind == JobKinds.Decode);

        // The first node claims the job, then is taken for dead; a second node resumes it (its claim counts attempt 2).
        var first = await queue.ClaimAsync(jobId, resuming: false);
        Assert.NotNull(first);
        var second = await queue.ClaimAsync(jobId, resuming: true);
        Assert.NotNull(second);
        Assert.Equal(2, second.Attempts);

        // The first node wakes and finishes its decode: its claim is gone, so it must store nothing.
        await Assert.ThrowsAsync<JobTakenOverException>(() => decode.RunAsync(first, (_, _) => Task.FromResult(false), CancellationToken.None));
        await using (var db = archive.NewContext())
        {
            Assert.Equal(0, await db.Runs.CountAsync(r => r.CaptureId == captureId));
            Assert.Equal(JobState.Running, (await db.Jobs.AsNoTracking().SingleAsync(j => j.Id == jobId)).State);
        }

        // The node holding the job stores the run and ends the job in the same commit; the stale firing's end changes nothing.
        var outcome = await decode.RunAsync(second, (_, _) => Task.FromResult(false), CancellationToken.None);
        Assert.False(await queue.FinishAsync(jobId, first.Attempts, JobState.Failed, "Failed.", "stale"));
        await using (var db = archive.NewContext())
        {
            var run = await db.Runs.AsNoTracking().SingleAsync(r => r.CaptureId == captureId);
            var job = await db.Jobs.AsNoTracking().SingleAsync(j => j.Id == jobId);
            Assert.Equal(JobState.Done, job.State);
            Assert.Equal(run.Id, job.ResultId);
            Assert.Equal(outcome.ResultId, run.Id);
            Assert.Null(job.Error);
            Assert.Equal(1, await db.Events.CountAsync(e => e.EventType == EventTypes.Decode));
        }
    }

    [Theory]
    [InlineData(JobKinds.Bag)]
    [InlineData(JobKinds.Publish)]
    public async Task AFiringWhoseExportJobWasResumedElsewhere_RecordsNoExport_AndTheResumingFiringRecordsOne(string kind)
    {
        await using var archive = await JobArchive.CreateAsync();
        using var pages = archive.PagesNode();
        var (captureId, _) = await QueueDecodeAsync(pages, archive.Root, queue: false);
        int itemId, collectionId;
        await using (var db = archive.NewContext())
        {
            var capture = await db.Captures.AsNoTracking().Include(c => c.Item).SingleAsync(c => c.Id == captureId);
            (itemId, collectionId) = (capture.ItemId, capture.Item!.CollectionId);
        }

        var scope = kind == JobKinds.Bag ? new ScopeParameters(null, itemId) : new ScopeParameters(collectionId, null);
        int jobId = await archive.EnqueueAsync(kind, scope.ToJson(), kind == JobKinds.Bag ? itemId : null);
        var queue = pages.GetRequiredService<JobQueue>();
        var handler = pages.GetServices<IJobHandler>().Single(h => h.Kind == kind);
        var first = await queue.ClaimAsync(jobId, resuming: false);
        Assert.NotNull(first);
        var second = await queue.ClaimAsync(jobId, resuming: true);
        Assert.NotNull(second);

        // The node taken for dead wakes and finishes its export: its claim is gone, so it records nothing (no export
        // row, no export event) and leaves the job to the node holding it.
        await Assert.ThrowsAsync<JobTakenOverException>(() => handler.RunAsync(first, (_, _) => Task.FromResult(false), CancellationToken.None));
        await using (var db = archive.NewContext())
        {
            Assert.Equal(0, await db.Exports.CountAsync());
            Assert.Equal(0, await db.Events.CountAsync(e => e.EventType == EventTypes.Export));
            Assert.Equal(JobState.Running, (await db.Jobs.AsNoTracking().SingleAsync(j => j.Id == jobId)).State);
        }

        // The node holding the job records the export and ends the job in the same commit.
        var outcome = await handler.RunAsync(second, (_, _) => Task.FromResult(false), CancellationToken.None);
        await using (var db = archive.NewContext())
        {
            var export = await db.Exports.AsNoTracking().SingleAsync();
            var job = await db.Jobs.AsNoTracking().SingleAsync(j => j.Id == jobId);
            Assert.Equal(JobState.Done, job.State);
            Assert.Equal(export.Id, job.ResultId);
            Assert.Equal(outcome.ResultId, export.Id);
            Assert.Equal(outcome.Summary, job.ProgressText);
            Assert.True(await db.Events.CountAsync(e => e.EventType == EventTypes.Export) >= 1);
        }
    }

    [Fact]
    public async Task AFiringWhoseJobWasResumedElsewhere_LeavesItsProgressAlone_AndIsToldToStop()
    {
        await using var archive = await JobArchive.CreateAsync();
        using var pages = archive.PagesNode();
        int jobId = await archive.EnqueueAsync(JobKinds.Fixity, new ScopeParameters(null, null).ToJson());
        var queue = pages.GetRequiredService<JobQueue>();
        var first = await queue.ClaimAsync(jobId, resuming: false);
        Assert.NotNull(first);
        Assert.False(await queue.ReportAsync(jobId, first.Attempts, 0.3, "first node at 30 %"));
        var second = await queue.ClaimAsync(jobId, resuming: true);
        Assert.NotNull(second);
        Assert.False(await queue.ReportAsync(jobId, second.Attempts, 0.1, "second node at 10 %"));

        // The stale firing's report changes nothing and tells it to stop; the holder's progress stands.
        Assert.True(await queue.ReportAsync(jobId, first.Attempts, 0.9, "first node at 90 %"));
        var job = await archive.JobAsync(jobId);
        Assert.Equal("second node at 10 %", job.ProgressText);
        Assert.Equal(0.1, job.Progress, 6);
        Assert.Equal(JobState.Running, job.State);
    }

    [Fact]
    public async Task AWorkersJobsRunsAndImages_TakeTheirTimesFromTheHostClock()
    {
        await using var archive = await JobArchive.CreateAsync();
        int captureId, itemId;
        using (var pages = archive.PagesNode())
        {
            (captureId, _) = await QueueDecodeAsync(pages, archive.Root, queue: false);
            await using var db = archive.NewContext();
            itemId = (await db.Captures.SingleAsync(c => c.Id == captureId)).ItemId;
        }

        // A clock five years ahead of the system's that still moves (the job engine's triggers run on it too).
        var clock = new ShiftedClock(TimeSpan.FromDays(5 * 365));
        var before = clock.GetUtcNow();
        using var worker = archive.Worker(workers: 1, more: s => s.AddSingleton<TimeProvider>(clock));
        int decodeId;
        await using (var db = worker.Services.GetRequiredService<IDbContextFactory<ArchiveDbContext>>().CreateDbContext())
        {
            var job = JobQueue.Enqueue(db, JobKinds.Decode, new DecodeJobParameters(captureId, "orrin-80", null).ToJson(), "tester", itemId, captureId);
            await db.SaveChangesAsync();
            decodeId = job.Id;
        }

        await worker.StartAsync();
        await worker.Services.GetRequiredService<JobDispatcher>().DispatchWaitingAsync();
        await archive.WaitAsync(decodeId, j => j.State is JobState.Done or JobState.Failed, "an end");
        int mergeId;
        await using (var db = worker.Services.GetRequiredService<IDbContextFactory<ArchiveDbContext>>().CreateDbContext())
        {
            var job = JobQueue.Enqueue(db, JobKinds.Merge, new MergeJobParameters(itemId).ToJson(), "tester", itemId);
            await db.SaveChangesAsync();
            mergeId = job.Id;
        }

        await worker.Services.GetRequiredService<JobDispatcher>().DispatchWaitingAsync();
        await archive.WaitAsync(mergeId, j => j.State is JobState.Done or JobState.Failed, "an end");
        await worker.StopAsync();
        var after = clock.GetUtcNow();

        await using (var db = archive.NewContext())
        {
            foreach (var job in await db.Jobs.AsNoTracking().ToListAsync())
            {
                Assert.True(job.State == JobState.Done, $"Job {job.Id} ended {job.State}: {job.Error}");
                Assert.InRange(job.CreatedUtc, before, after);
                Assert.InRange(job.StartedUtc!.Value, before, after);
                Assert.InRange(job.FinishedUtc!.Value, before, after);
            }

            var run = await db.Runs.AsNoTracking().SingleAsync();
            Assert.InRange(run.StartedUtc, before, after);
            Assert.InRange(run.FinishedUtc, before, after);
            var image = await db.Images.AsNoTracking().SingleAsync();
            Assert.InRange(image.CreatedUtc, before, after);
            Assert.InRange((await db.Objects.AsNoTracking().SingleAsync(o => o.Sha256 == image.Sha256)).StoredUtc, before, after);
        }
    }

    /// <summary>Ingests a short synthesised capture of the demo format and queues its decode (unless told not to: job id 0).</summary>
    internal static async Task<(int CaptureId, int JobId)> QueueDecodeAsync(ServiceProvider pages, string root, bool queue = true)
    {
        await using var scope = pages.CreateAsyncScope();
        var actions = scope.ServiceProvider.GetRequiredService<CuratorActions>();
        int collection = (await actions.CreateCollectionAsync("Claim shelf", null, "tester")).Id;
        int item = (await actions.CreateItemAsync(collection, "CLAIM-1", "Claimed tape", null, null, "A", "tester")).Id;
        var path = Path.Combine(root, "claim.wav");
        CaptureSynthesizer.Write(path, ProfileCatalog.BuiltIn.Get("orrin-80"), [new TapeFile("CLAIM", new byte[300])], new ChannelDamage { SnrDb = 30, Seed = 5 });
        int captureId;
        await using (var wav = File.OpenRead(path))
        {
            captureId = (await scope.ServiceProvider.GetRequiredService<CaptureIngest>().IngestAsync(
                wav, new IngestRequest { ItemId = item, FileName = "claim.wav", ContentType = "audio/wav", Agent = "tester" })).Capture.Id;
        }

        return (captureId, queue ? (await actions.QueueDecodeAsync(captureId, "orrin-80", null, null, "tester")).Id : 0);
    }

    private sealed class ShiftedClock(TimeSpan shift) : TimeProvider
    {
        public override DateTimeOffset GetUtcNow() => System.GetUtcNow() + shift;
    }
}
