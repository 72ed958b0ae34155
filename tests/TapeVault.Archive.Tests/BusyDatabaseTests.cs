using System.Data.Common;
using Microsoft.Data.Sqlite;
using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Diagnostics;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Tests.PostgreSql;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// SQLite lets one writer at a time hold the database's write lock; another writer waits for it (the connection's busy
/// wait) and is then refused with "database is locked" (SQLite result code 5, SQLITE_BUSY: sqlite.org, "Result and
/// Error Codes", from memory). A job must not fail only because another writer held the lock longer than that wait. Here a second
/// connection on the same archive file holds the lock (BEGIN IMMEDIATE) while a job writes, with the job's busy wait
/// cut to one second so the refusal comes quickly; the lock is let go only once the job has been refused at least once.
/// </summary>
public sealed class BusyDatabaseTests
{
    private const string Why = "the write lock another writer waits for, and its busy wait, are SQLite's";

    [SqliteOnlyFact(Why)]
    public async Task A_decode_job_refused_the_write_lock_when_it_stores_its_run_stores_it_once_the_lock_is_free()
    {
        await using var archive = await JobArchive.CreateAsync();
        int captureId, jobId;
        using (var pages = archive.PagesNode())
        {
            (captureId, jobId) = await JobClaimTests.QueueDecodeAsync(pages, archive.Root);
        }

        var refusals = new BusyRefusals();
        await using var node = ShortBusyWaitNode(archive, refusals);
        var job = await node.GetRequiredService<JobQueue>().ClaimAsync(jobId, resuming: false);
        Assert.NotNull(job);
        var decode = node.GetServices<IJobHandler>().Single(h => h.Kind == JobKinds.Decode);

        // The other writer takes the lock at the job's first progress report (the job only reads until it stores its
        // run) and keeps it until the job has been refused it.
        await using var other = OpenOtherWriter(archive);
        DbTransaction? held = null;
        Task<bool> Progress(double fraction, string text)
        {
            if (held is null)
            {
                held = other.BeginTransaction(deferred: false);
                refusals.Watch();
            }

            return Task.FromResult(false);
        }

        var running = decode.RunAsync(job, Progress, CancellationToken.None);
        await Task.WhenAny(refusals.First, running).WaitAsync(TimeSpan.FromMinutes(5));
        Assert.NotNull(held);
        if (!refusals.First.IsCompleted)
        {
            // The job ended while the other writer held the lock: its error says why (before the fix, "database is locked").
            await running;
            Assert.Fail("the job was never refused the lock the other writer held, yet it ended");
        }

        await held.RollbackAsync();
        var outcome = await running;
        await using var db = archive.NewContext();
        var run = await db.Runs.AsNoTracking().Include(r => r.Timeline).SingleAsync(r => r.CaptureId == captureId);
        var stored = await db.Jobs.AsNoTracking().SingleAsync(j => j.Id == jobId);
        Assert.Equal(run.Id, outcome.ResultId);
        Assert.Equal(JobState.Done, stored.State);
        Assert.Equal(run.Id, stored.ResultId);
        Assert.Null(stored.Error);
        Assert.Equal(1, await db.Events.CountAsync(e => e.EventType == EventTypes.Decode && e.ObjectId == run.Id.ToString()));

        // Stored once and whole: every reading of the run, as many as its kept timeline value names.
        int readings = await db.Candidates.CountAsync(c => c.RunId == run.Id);
        Assert.True(readings > 0);
        var kept = new List<TapeVault.Core.Timeline.TimelineReading>();
        Assert.True(Timeline.TimelineReadingsValue.TryRead(run.Timeline!.Readings, "capture", kept));
        Assert.Equal(readings, kept.Count);
        Assert.Equal(1, await db.Runs.CountAsync());
    }

    [SqliteOnlyFact(Why)]
    public async Task A_progress_report_refused_the_write_lock_lets_the_job_go_on_and_the_next_report_is_recorded()
    {
        await using var archive = await JobArchive.CreateAsync();
        var refusals = new BusyRefusals();
        await using var node = ShortBusyWaitNode(archive, refusals);
        var (queue, job) = await ClaimedJobAsync(archive, node);
        await using var other = OpenOtherWriter(archive);
        using (var held = other.BeginTransaction(deferred: false))
        {
            // Refused the lock: the report is dropped, and the job is not told to stop (nor failed).
            Assert.False(await queue.ReportAsync(job.Id, job.Attempts, 0.4, "at 40 %"));
            Assert.True(refusals.First.IsCompleted);
            held.Rollback();
        }

        Assert.False(await queue.ReportAsync(job.Id, job.Attempts, 0.5, "at 50 %"));
        var row = await archive.JobAsync(job.Id);
        Assert.Equal("at 50 %", row.ProgressText);
        Assert.Equal(JobState.Running, row.State);
    }

    [SqliteOnlyFact(Why)]
    public async Task A_jobs_end_refused_the_write_lock_is_recorded_once_the_lock_is_free()
    {
        await using var archive = await JobArchive.CreateAsync();
        var refusals = new BusyRefusals();
        await using var node = ShortBusyWaitNode(archive, refusals);
        var (queue, job) = await ClaimedJobAsync(archive, node);
        await using var other = OpenOtherWriter(archive);
        using var held = other.BeginTransaction(deferred: false);
        var finishing = queue.FinishAsync(job.Id, job.Attempts, JobState.Done, "Done.");
        await Task.WhenAny(refusals.First, finishing).WaitAsync(TimeSpan.FromMinutes(5));
        Assert.True(refusals.First.IsCompleted, "the job's end was never refused the lock the other writer held");
        held.Rollback();

        Assert.True(await finishing);
        var row = await archive.JobAsync(job.Id);
        Assert.Equal(JobState.Done, row.State);
        Assert.Equal("Done.", row.ProgressText);
    }

    /// <summary>The archive's services over <paramref name="archive"/> with a busy wait of one second, watched by <paramref name="refusals"/>.</summary>
    private static ServiceProvider ShortBusyWaitNode(JobArchive archive, BusyRefusals refusals)
    {
        var services = new ServiceCollection();
        services.AddLogging();
        services.AddTapeVaultArchive(archive.Options(), ProfileCatalog.BuiltIn);
        string shortWait = new SqliteConnectionStringBuilder(ArchiveDatabase.ConnectionString(archive.DatabasePath)) { DefaultTimeout = 1 }.ToString();
        services.ConfigureDbContext<ArchiveDbContext>((_, options) => options.UseSqlite(shortWait).AddInterceptors(refusals));
        return services.BuildServiceProvider();
    }

    /// <summary>A fixity job queued and claimed through <paramref name="node"/>'s job queue.</summary>
    private static async Task<(JobQueue Queue, JobRecord Job)> ClaimedJobAsync(JobArchive archive, ServiceProvider node)
    {
        int jobId = await archive.EnqueueAsync(JobKinds.Fixity, new ScopeParameters(null, null).ToJson());
        var queue = node.GetRequiredService<JobQueue>();
        var job = await queue.ClaimAsync(jobId, resuming: false);
        Assert.NotNull(job);
        return (queue, job);
    }

    /// <summary>A second writer on the archive's file, outside the app's pool.</summary>
    private static SqliteConnection OpenOtherWriter(JobArchive archive)
    {
        var other = new SqliteConnection(new SqliteConnectionStringBuilder(ArchiveDatabase.ConnectionString(archive.DatabasePath)) { Pooling = false }.ToString());
        other.Open();
        return other;
    }

    /// <summary>
    /// Tells when the app was first refused the lock the other writer holds: a command of it failed with SQLITE_BUSY, or,
    /// once <see cref="Watch"/> was called (the lock taken), it begins a transaction for the second time. Its write
    /// transactions begin IMMEDIATE, taking the lock at once (Microsoft.Data.Sqlite's default), so while the other
    /// writer holds the lock a second begin means the first was refused.
    /// </summary>
    private sealed class BusyRefusals : IDbCommandInterceptor, IDbTransactionInterceptor
    {
        private readonly TaskCompletionSource first = new(TaskCreationOptions.RunContinuationsAsynchronously);
        private int begins = -1;

        public Task First => first.Task;

        public void Watch() => Interlocked.CompareExchange(ref begins, 0, -1);

        public void CommandFailed(DbCommand command, CommandErrorEventData eventData) => Saw(eventData.Exception);

        public Task CommandFailedAsync(DbCommand command, CommandErrorEventData eventData, CancellationToken cancellationToken = default)
        {
            Saw(eventData.Exception);
            return Task.CompletedTask;
        }

        public InterceptionResult<DbTransaction> TransactionStarting(DbConnection connection, TransactionStartingEventData eventData, InterceptionResult<DbTransaction> result)
        {
            Began();
            return result;
        }

        public ValueTask<InterceptionResult<DbTransaction>> TransactionStartingAsync(DbConnection connection, TransactionStartingEventData eventData, InterceptionResult<DbTransaction> result, CancellationToken cancellationToken = default)
        {
            Began();
            return ValueTask.FromResult(result);
        }

        private void Began()
        {
            if (Volatile.Read(ref begins) >= 0 && Interlocked.Increment(ref begins) >= 2)
            {
                first.TrySetResult();
            }
        }

        private void Saw(Exception e)
        {
            if (e is SqliteException { SqliteErrorCode: 5 })
            {
                first.TrySetResult();
            }
        }
    }
}
