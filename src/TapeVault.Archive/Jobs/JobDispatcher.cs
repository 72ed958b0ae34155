using Microsoft.Extensions.Logging;
using Quartz;
using TapeVault.Archive.Entities;

namespace TapeVault.Archive.Jobs;

/// <summary>
/// Hands the job table's unfinished jobs to the job engine. A job row and its Quartz job are written in two
/// transactions (they may live in two databases), so instead of trusting the moment after an enqueue, every unfinished
/// row is matched with its Quartz job by key: a queued row with none gets one; a running row with none was cut off
/// where Quartz could not hand it back (a database fault while it finished) and gets one that resumes it. Doing this
/// twice is harmless: the key is the row's id, and a firing only runs a job it can claim.
/// </summary>
public sealed partial class JobDispatcher(ISchedulerFactory schedulers, JobQueue queue, ILogger<JobDispatcher> logger)
{
    /// <summary>Matches every unfinished job with its Quartz job; returns how many were handed over. Never throws for a schedule fault (the periodic sweep tries again).</summary>
    public async Task<int> DispatchWaitingAsync(CancellationToken cancellation = default)
    {
        try
        {
            var scheduler = await schedulers.GetScheduler(cancellation).ConfigureAwait(false);
            int handed = 0;
            foreach (var (id, state, kind) in await queue.UnfinishedAsync(cancellation).ConfigureAwait(false))
            {
                if (await scheduler.Exists(JobEngine.KeyOf(id), cancellation).ConfigureAwait(false))
                {
                    continue;
                }

                if (await ScheduleAsync(scheduler, id, kind, resuming: state == JobState.Running, cancellation).ConfigureAwait(false))
                {
                    handed++;
                }
            }

            return handed;
        }
        catch (Exception e) when (e is SchedulerException or System.Data.Common.DbException or IOException or InvalidOperationException)
        {
            LogDispatchFailed(logger, e);
            return 0;
        }
    }

    /// <summary>
    /// Hands one job just queued to the engine (what a page or API request does after queuing). Never throws for a
    /// schedule fault: the row is saved, and the periodic sweep hands it over once the schedule answers.
    /// </summary>
    public async Task DispatchAsync(JobRecord job, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(job);
        try
        {
            var scheduler = await schedulers.GetScheduler(cancellation).ConfigureAwait(false);
            await ScheduleAsync(scheduler, job.Id, job.Kind, resuming: false, cancellation).ConfigureAwait(false);
        }
        catch (Exception e) when (e is SchedulerException or System.Data.Common.DbException or IOException or InvalidOperationException)
        {
            LogDispatchFailed(logger, e);
        }
    }

    private static async Task<bool> ScheduleAsync(IScheduler scheduler, int jobId, string kind, bool resuming, CancellationToken cancellation)
    {
        var job = JobBuilder.Create<ArchiveJobExecution>()
            .WithIdentity(JobEngine.KeyOf(jobId))
            .RequestRecovery()
            .UsingJobData(JobEngine.JobIdKey, jobId)
            .UsingJobData(JobEngine.ResumeKey, resuming)
            .Build();
        var trigger = TriggerBuilder.Create()
            .WithIdentity($"job-{jobId}-{Guid.NewGuid():N}", JobEngine.ArchiveGroup)
            .ForJob(job)
            .WithPriority(JobEngine.PriorityOf(kind))
            .StartNow()
            .Build();
        try
        {
            await scheduler.ScheduleJob(job, trigger, cancellationToken: cancellation).ConfigureAwait(false);
            return true;
        }
        catch (ObjectAlreadyExistsException)
        {
            // Another node, or another request of this one, handed it over first.
            return false;
        }
    }

    [LoggerMessage(Level = LogLevel.Warning, Message = "Queued jobs could not be handed to the job engine now; the next sweep tries again.")]
    private static partial void LogDispatchFailed(ILogger logger, Exception exception);
}
