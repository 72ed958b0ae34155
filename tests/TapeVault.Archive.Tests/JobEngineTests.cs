using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Quartz;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Jobs;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>The job engine (Quartz.NET over its SQLite store) keeps the promises of the job table.</summary>
public sealed class JobEngineTests
{
    [Fact]
    public async Task AJobThatThrowsSomethingUnexpectedFailsWithTheReasonAndTheEngineGoesOn()
    {
        await using var archive = await JobArchive.CreateAsync();
        var working = new CountingHandler("test-working");
        int broken = await archive.EnqueueAsync(ThrowingHandler.KindName);
        int next = await archive.EnqueueAsync(working.Kind);
        using var worker = archive.Worker([new ThrowingHandler(), working], workers: 1);
        await worker.StartAsync();
        var second = await archive.WaitAsync(next, j => j.State == JobState.Done, "done");
        var first = await archive.WaitAsync(broken, j => j.State != JobState.Running && j.State != JobState.Queued, "an end");
        await worker.StopAsync();

        Assert.Equal(JobState.Failed, first.State);
        Assert.Contains("the disk said no", first.Error, StringComparison.Ordinal);
        Assert.Equal(JobState.Done, second.State);
        Assert.Equal(1, working.Runs);
    }

    [Fact]
    public async Task AStopMidJobHandsItBack_AndTheNextStartRunsItExactlyOnce()
    {
        await using var archive = await JobArchive.CreateAsync();
        int id = await archive.EnqueueAsync("test-long");
        var held = new CountingHandler("test-long", new TaskCompletionSource());
        using (var first = archive.Worker([held]))
        {
            await first.StartAsync();
            await archive.WaitAsync(id, j => j.State == JobState.Running && j.Progress > 0, "running with progress");
            await first.StopAsync();
        }

        // The stop cut the job off: still marked running, one attempt, and Quartz kept the firing for recovery.
        var cut = await archive.JobAsync(id);
        Assert.Equal(JobState.Running, cut.State);
        Assert.Equal(1, cut.Attempts);
        Assert.Equal(1, held.Runs);

        var again = new CountingHandler("test-long");
        using var second = archive.Worker([again]);
        await second.StartAsync();
        var done = await archive.WaitAsync(id, j => j.State == JobState.Done, "done");
        var scheduler = await second.Services.GetRequiredService<ISchedulerFactory>().GetScheduler();
        await WaitUntilAsync(async () => !await scheduler.Exists(JobEngine.KeyOf(id)), "the finished job to leave the schedule");

        // Exactly once: one run on the second start, nothing left in the schedule that could run it again, and a
        // sweep of the job table finds nothing to hand over.
        Assert.Equal(2, done.Attempts);
        Assert.Equal(1, again.Runs);
        Assert.Equal(0, await second.Services.GetRequiredService<JobDispatcher>().DispatchWaitingAsync());
        await second.StopAsync();
        Assert.Equal(1, again.Runs);
    }

    [Fact]
    public async Task AJobCutOffAsOftenAsAllowedFailsWithTheReason_InsteadOfStartingAgain()
    {
        await using var archive = await JobArchive.CreateAsync();
        int id = await archive.EnqueueAsync("test-long");
        for (int stop = 1; stop <= 2; stop++)
        {
            var held = new CountingHandler("test-long", new TaskCompletionSource());
            using var node = archive.Worker([held], maxAttempts: 2);
            await node.StartAsync();
            int attempt = stop;
            await archive.WaitAsync(id, j => j.State == JobState.Running && j.Attempts == attempt && j.Progress > 0, $"attempt {attempt} running");
            await node.StopAsync();
        }

        var never = new CountingHandler("test-long");
        using var last = archive.Worker([never], maxAttempts: 2);
        await last.StartAsync();
        var failed = await archive.WaitAsync(id, j => j.State == JobState.Failed, "failed");
        await last.StopAsync();

        Assert.Equal(0, never.Runs);
        Assert.Contains("cut off 2 times", failed.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task AMergeWaitsInTheQueueForItsTapesDecodes_AndRunsAfterThem()
    {
        await using var archive = await JobArchive.CreateAsync();
        int itemId;
        using (var pages = archive.PagesNode())
        {
            await using var scope = pages.CreateAsyncScope();
            var actions = scope.ServiceProvider.GetRequiredService<CuratorActions>();
            int collection = (await actions.CreateCollectionAsync("Shelf", null, "tester")).Id;
            itemId = (await actions.CreateItemAsync(collection, "WAIT-1", "Waiting tape", null, null, "A", "tester")).Id;
        }

        var gate = new TaskCompletionSource();
        var decode = new CountingHandler(JobKinds.Decode, gate);
        int decodeId = await archive.EnqueueAsync(JobKinds.Decode, itemId: itemId);
        int mergeId = await archive.EnqueueAsync(JobKinds.Merge, new MergeJobParameters(itemId).ToJson(), itemId);
        using var worker = archive.Worker([decode], workers: 2, more: s => s.AddSingleton<IJobHandler, MergeJob>());
        await worker.StartAsync();

        // With the decode held, the merge is seen back in the queue saying what it waits for.
        await archive.WaitAsync(decodeId, j => j.State == JobState.Running, "running");
        var waiting = await archive.WaitAsync(mergeId, j => j.State == JobState.Queued && j.ProgressText.Contains($"decode job(s) {decodeId}", StringComparison.Ordinal), "waiting for the decode");
        Assert.Equal(0, waiting.Attempts);

        gate.SetResult();
        var decoded = await archive.WaitAsync(decodeId, j => j.State == JobState.Done, "done");
        var merged = await archive.WaitAsync(mergeId, j => j.State is JobState.Done or JobState.Failed, "an end");
        await worker.StopAsync();

        // The fake decode stored no run, so the merge ends with the reason; what matters is that it ran after the decode.
        Assert.Equal(JobState.Failed, merged.State);
        Assert.Contains("no decode runs", merged.Error, StringComparison.Ordinal);
        Assert.True(merged.StartedUtc >= decoded.FinishedUtc, $"The merge started at {merged.StartedUtc:O}, before its decode finished at {decoded.FinishedUtc:O}.");
        Assert.Equal(1, merged.Attempts);
    }

    [Fact]
    public async Task APagesOnlyNodeQueuesAJob_AndAWorkerRunsIt_WhileASecondWorkerOnTheSameSqliteScheduleIsRefused()
    {
        await using var archive = await JobArchive.CreateAsync();
        var working = new CountingHandler("test-working");
        using var pages = archive.PagesNode();
        var dispatcher = pages.GetRequiredService<JobDispatcher>();

        // Queued while no worker runs: the pages node stores it in the schedule and runs nothing itself.
        int first = await archive.EnqueueAsync(working.Kind);
        Assert.Equal(1, await dispatcher.DispatchWaitingAsync());
        Assert.Equal(SchedulerStatus.Created, await (await pages.GetRequiredService<ISchedulerFactory>().GetScheduler()).GetStatus());
        Assert.Equal(JobState.Queued, (await archive.JobAsync(first)).State);

        using var worker = archive.Worker([working]);
        await worker.StartAsync();
        await archive.WaitAsync(first, j => j.State == JobState.Done, "done");

        // Queued while the worker runs: the worker finds it in the schedule.
        int later = await archive.EnqueueAsync(working.Kind);
        await dispatcher.DispatchWaitingAsync();
        await archive.WaitAsync(later, j => j.State == JobState.Done, "done");
        Assert.Equal(2, working.Runs);

        // Quartz.NET refuses to cluster on SQLite, so a second process running jobs on this schedule is stopped at its start.
        using var second = archive.Worker([new CountingHandler("test-working")]);
        var refused = await Assert.ThrowsAsync<ScheduleInUseException>(() => second.StartAsync());
        Assert.Contains("PostgreSQL", refused.Message, StringComparison.Ordinal);
        await worker.StopAsync();
    }

    private static async Task WaitUntilAsync(Func<Task<bool>> condition, string what)
    {
        var deadline = DateTime.UtcNow.AddSeconds(60);
        while (!await condition())
        {
            Assert.True(DateTime.UtcNow < deadline, $"Never saw {what}.");
            await Task.Delay(50);
        }
    }
}
