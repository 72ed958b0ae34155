using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Logging.Abstractions;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Jobs;
using Xunit;

namespace TapeVault.Archive.Tests;

[Collection(SharedArchiveGroup.Name)]
public sealed class JobRunnerTests(SharedArchive shared)
{
    [Fact]
    public async Task AJobThatThrowsSomethingUnexpectedFailsWithTheReasonAndTheWorkerGoesOn()
    {
        var archive = shared.Archive;
        int broken, next;
        await using (var db = archive.NewContext())
        {
            var a = JobQueue.Enqueue(db, Throwing.KindName, "{}", "tester");
            var b = JobQueue.Enqueue(db, Working.KindName, "{}", "tester");
            await db.SaveChangesAsync();
            (broken, next) = (a.Id, b.Id);
        }

        var options = new ArchiveOptions { Workers = 1, BaseFolder = archive.Options.BaseFolder, DatabasePath = archive.Options.DatabasePath, StorePath = archive.Options.StorePath };
        using var runner = new JobRunner(archive.Services.GetRequiredService<JobQueue>(), [new Throwing(), new Working()], options, NullLogger<JobRunner>.Instance);
        await runner.StartAsync(CancellationToken.None);
        var deadline = DateTime.UtcNow.AddSeconds(90);
        JobRecord first, second;
        do
        {
            await Task.Delay(100);
            await using var db = archive.NewContext();
            first = await db.Jobs.AsNoTracking().SingleAsync(j => j.Id == broken);
            second = await db.Jobs.AsNoTracking().SingleAsync(j => j.Id == next);
        }
        while ((second.State != JobState.Done || first.State == JobState.Running) && DateTime.UtcNow < deadline);

        await runner.StopAsync(CancellationToken.None);
        Assert.Equal(JobState.Failed, first.State);
        Assert.Contains("the disk said no", first.Error, StringComparison.Ordinal);
        Assert.Equal(JobState.Done, second.State);
    }

    private sealed class Throwing : IJobHandler
    {
        public const string KindName = "test-throwing";

        public string Kind => KindName;

        public Task<JobOutcome> RunAsync(JobRecord job, JobProgress progress, CancellationToken cancellation) =>
            throw new NotSupportedException("the disk said no");
    }

    private sealed class Working : IJobHandler
    {
        public const string KindName = "test-working";

        public string Kind => KindName;

        public Task<JobOutcome> RunAsync(JobRecord job, JobProgress progress, CancellationToken cancellation) =>
            Task.FromResult(new JobOutcome(null, "Done."));
    }
}
