using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Quartz;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;

namespace TapeVault.Archive.Jobs;

/// <summary>The fixity audit's cron trigger, from <see cref="FixityOptions.Schedule"/>.</summary>
public static class FixitySchedule
{
    public static readonly TriggerKey TriggerKey = new("fixity-audit", JobEngine.ScheduleGroup);

    /// <summary>Refuses a schedule that is not a cron expression, naming the setting.</summary>
    public static void Validate(FixityOptions fixity)
    {
        ArgumentNullException.ThrowIfNull(fixity);
        if (fixity.Schedule.Length > 0 && !CronExpression.TryParse(fixity.Schedule, out _))
        {
            throw new InvalidOperationException(
                $"{FixityOptions.Section}:Schedule '{fixity.Schedule}' is not a cron expression (seconds minutes hours day-of-month month day-of-week, e.g. \"0 0 3 ? * SUN\"); leave it empty to turn the schedule off.");
        }
    }

    /// <summary>
    /// Makes the stored trigger follow the settings: kept as it is when the expression is unchanged (so an audit missed
    /// while every node was down still fires once at the next start), replaced when it changed, removed when empty.
    /// </summary>
    public static async Task EnsureAsync(IScheduler scheduler, FixityOptions fixity, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(scheduler);
        ArgumentNullException.ThrowIfNull(fixity);
        if (fixity.Schedule.Length == 0)
        {
            await scheduler.DeleteJob(JobEngine.FixityAuditKey, cancellation).ConfigureAwait(false);
            return;
        }

        if (await scheduler.GetTrigger(TriggerKey, cancellation).ConfigureAwait(false) is ICronTrigger stored
            && stored.CronExpressionString == fixity.Schedule && stored.TimeZone.Id == TimeZoneInfo.Local.Id)
        {
            return;
        }

        var job = JobBuilder.Create<FixityScheduleJob>().WithIdentity(JobEngine.FixityAuditKey).Build();
        var trigger = TriggerBuilder.Create()
            .WithIdentity(TriggerKey)
            .ForJob(job)
            .WithCronSchedule(fixity.Schedule, cron => cron.InTimeZone(TimeZoneInfo.Local).WithMisfireInstruction(CronTriggerMisfireInstruction.FireAndProceed))
            .Build();
        try
        {
            await scheduler.ScheduleJob(job, trigger, ScheduleJobOptions.Replacing, cancellation).ConfigureAwait(false);
        }
        catch (ObjectAlreadyExistsException)
        {
            // Another node starting at the same moment stored it.
        }
    }
}

/// <summary>Fired by the fixity audit's cron trigger: queues an audit of the whole store unless one is waiting or running.</summary>
[DisallowConcurrentExecution]
public sealed class FixityScheduleJob(IDbContextFactory<ArchiveDbContext> contexts, JobDispatcher dispatcher) : IJob
{
    public const string Agent = $"{EventLog.SystemAgent}:schedule";

    public async ValueTask Execute(IJobExecutionContext context, CancellationToken cancellationToken = default)
    {
        await QueueAuditAsync(cancellationToken).ConfigureAwait(false);
    }

    /// <summary>Queues the audit; false when one was already waiting or running.</summary>
    public async Task<bool> QueueAuditAsync(CancellationToken cancellation)
    {
        await using (var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false))
        {
            if (await db.Jobs.AnyAsync(j => j.Kind == JobKinds.Fixity && (j.State == JobState.Queued || j.State == JobState.Running), cancellation).ConfigureAwait(false))
            {
                return false;
            }

            JobQueue.Enqueue(db, JobKinds.Fixity, new ScopeParameters(null, null).ToJson(), Agent);
            await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        }

        await dispatcher.DispatchWaitingAsync(cancellation).ConfigureAwait(false);
        return true;
    }
}

/// <summary>Every half minute, and at each start, matches the job table with the schedule (<see cref="JobDispatcher"/>).</summary>
[DisallowConcurrentExecution]
public sealed class JobSweepJob(JobDispatcher dispatcher) : IJob
{
    public static readonly TimeSpan Every = TimeSpan.FromSeconds(30);

    public async ValueTask Execute(IJobExecutionContext context, CancellationToken cancellationToken = default)
    {
        await dispatcher.DispatchWaitingAsync(cancellationToken).ConfigureAwait(false);
    }
}

/// <summary>
/// At start: on SQLite, takes the schedule file's lock (one process per schedule file runs jobs: Quartz cannot
/// cluster on SQLite); on a node that runs jobs, stores the fixity audit's trigger and the sweep's, and sweeps once.
/// </summary>
public sealed partial class JobSchedules(ISchedulerFactory schedulers, ArchiveOptions archive, JobsOptions jobs, FixityOptions fixity, JobEngineRole role, IHostApplicationLifetime lifetime, TimeProvider clock, ILogger<JobSchedules> logger) : IHostedService, IDisposable
{
    private FileStream? runnerLock;

    public async Task StartAsync(CancellationToken cancellationToken)
    {
        if (!role.RunsJobs)
        {
            return;
        }

        if (jobs.Store == ScheduleStoreKind.Sqlite)
        {
            string lockPath = jobs.FullSchedulePath(archive) + ".lock";
            try
            {
                runnerLock = new FileStream(lockPath, FileMode.OpenOrCreate, FileAccess.ReadWrite, FileShare.None);
            }
            catch (IOException e)
            {
                throw new ScheduleInUseException(
                    $"Another TapeVault process already runs the jobs of this archive (it holds {lockPath}). On SQLite one process runs jobs: Quartz.NET cannot cluster on SQLite. Start this one with TapeVault:Web:Role = Pages, or keep the schedule in PostgreSQL (TapeVault:Jobs:Store) for several workers.", e);
            }
        }

        var scheduler = await schedulers.GetScheduler(cancellationToken).ConfigureAwait(false);
        await FixitySchedule.EnsureAsync(scheduler, fixity, cancellationToken).ConfigureAwait(false);
        if (!await scheduler.Exists(JobEngine.SweepKey, cancellationToken).ConfigureAwait(false))
        {
            var sweep = JobBuilder.Create<JobSweepJob>().WithIdentity(JobEngine.SweepKey).Build();
            var every = TriggerBuilder.Create().WithIdentity("sweep", JobEngine.ScheduleGroup).ForJob(sweep)
                .WithSimpleSchedule(s => s.WithInterval(JobSweepJob.Every).RepeatForever().WithMisfireInstruction(SimpleTriggerMisfireInstruction.NextWithRemainingCount))
                .StartAt(clock.GetUtcNow() + JobSweepJob.Every)
                .Build();
            try
            {
                await scheduler.ScheduleJob(sweep, every, default, cancellationToken).ConfigureAwait(false);
            }
            catch (ObjectAlreadyExistsException)
            {
                // Another node stored it.
            }
        }

        // Once running (after Quartz has recovered what the last stop handed back), sweep once on this node.
        lifetime.ApplicationStarted.Register(() => _ = SweepNowAsync(scheduler));
    }

    private async Task SweepNowAsync(IScheduler scheduler)
    {
        try
        {
            await scheduler.TriggerJob(JobEngine.SweepKey, cancellationToken: CancellationToken.None).ConfigureAwait(false);
        }
        catch (SchedulerException e)
        {
            LogSweepFailed(logger, e);
        }
    }

    public Task StopAsync(CancellationToken cancellationToken) => Task.CompletedTask;

    public void Dispose()
    {
        runnerLock?.Dispose();
        runnerLock = null;
    }

    [LoggerMessage(Level = LogLevel.Warning, Message = "The start-up sweep of the job table could not be queued; the periodic one will do it.")]
    private static partial void LogSweepFailed(ILogger logger, Exception exception);
}

/// <summary>Another process already runs the jobs of this SQLite schedule.</summary>
public sealed class ScheduleInUseException(string message, Exception inner) : InvalidOperationException(message, inner);
