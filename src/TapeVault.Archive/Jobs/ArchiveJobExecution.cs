using Microsoft.Extensions.Logging;
using Quartz;
using TapeVault.Archive.Entities;

namespace TapeVault.Archive.Jobs;

/// <summary>
/// One firing of one archive job: claims the job's row, runs its handler on the job engine's thread, and records the
/// outcome in the row. A stop of this node cancels the handler and hands the firing back to Quartz (the row stays
/// running, nothing of the work was committed); Quartz fires it again, marked recovering, on this node's next start or,
/// in a cluster, on another node, and the claim then counts the cut-off.
/// </summary>
[DisallowConcurrentExecution]
public sealed partial class ArchiveJobExecution(JobQueue queue, IEnumerable<IJobHandler> handlers, TimeProvider clock, ILogger<ArchiveJobExecution> logger) : IJob
{
    /// <summary>How long a job that cannot start yet waits in the queue before it is fired again.</summary>
    public static readonly TimeSpan NotReadyWait = TimeSpan.FromSeconds(1);

    public async ValueTask Execute(IJobExecutionContext context, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(context);
        var data = context.MergedJobDataMap;
        int jobId = data.GetInt(JobEngine.JobIdKey);
        bool resuming = context.Recovering || (data.TryGetBoolean(JobEngine.ResumeKey, out bool resume) && resume);
        var job = await queue.ClaimAsync(jobId, resuming, CancellationToken.None).ConfigureAwait(false);
        if (job is null)
        {
            // Finished, cancelled, or claimed by another firing: nothing to do.
            return;
        }

        var handler = handlers.FirstOrDefault(h => h.Kind == job.Kind);
        if (handler is null)
        {
            await queue.FinishAsync(job.Id, job.Attempts, JobState.Failed, "Failed.", $"This version of TapeVault has no worker for '{job.Kind}' jobs.").ConfigureAwait(false);
            return;
        }

        using var cancel = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
        async Task<bool> Report(double fraction, string text)
        {
            bool stop = await queue.ReportAsync(job.Id, job.Attempts, fraction, text, CancellationToken.None).ConfigureAwait(false);
            if (stop)
            {
                await cancel.CancelAsync().ConfigureAwait(false);
            }

            return stop;
        }

        try
        {
            var outcome = await handler.RunAsync(job, Report, cancel.Token).ConfigureAwait(false);
            await queue.FinishAsync(job.Id, job.Attempts, JobState.Done, outcome.Summary, resultId: outcome.ResultId).ConfigureAwait(false);
        }
        catch (OperationCanceledException) when (cancellationToken.IsCancellationRequested)
        {
            // This node is stopping: the row stays "running" and Quartz keeps the firing for recovery.
            LogInterrupted(logger, job.Id);
            throw;
        }
        catch (JobTakenOverException)
        {
            // Another firing resumed the job while this one ran (this node was taken for dead): it stored nothing.
            LogTakenOver(logger, job.Id);
        }
        catch (OperationCanceledException)
        {
            // Stopped at a progress report: a curator's cancel, or this firing no longer holds the job (the fenced end
            // then changes nothing).
            if (!await queue.FinishAsync(job.Id, job.Attempts, JobState.Cancelled, "Cancelled by a curator; nothing was stored.").ConfigureAwait(false))
            {
                LogTakenOver(logger, job.Id);
            }
        }
        catch (JobNotReadyException e)
        {
            if (await queue.DeferAsync(job.Id, job.Attempts, e.Message, CancellationToken.None).ConfigureAwait(false))
            {
                var again = TriggerBuilder.Create()
                    .WithIdentity($"job-{job.Id}-{Guid.NewGuid():N}", JobEngine.ArchiveGroup)
                    .ForJob(context.JobDetail.Key)
                    .WithPriority(JobEngine.PriorityOf(job.Kind))
                    .StartAt(clock.GetUtcNow() + NotReadyWait)
                    .Build();
                await context.Scheduler.ScheduleJob(again, cancellationToken: CancellationToken.None).ConfigureAwait(false);
            }
        }
        catch (JobFailedException e)
        {
            await queue.FinishAsync(job.Id, job.Attempts, JobState.Failed, "Failed.", e.Message).ConfigureAwait(false);
        }
        catch (Exception e)
        {
            // Whatever went wrong (a locked database, a full disk, a bug), the job ends failed with the reason and the
            // engine lives on.
            LogFailed(logger, e, job.Id);
            try
            {
                string reason = Storage.StorageFaults.IsDiskFull(e)
                    ? Storage.StorageFaults.DiskFullSentence($"what the {job.Kind} job made")
                    : $"The job stopped with an error: {e.Message}";
                await queue.FinishAsync(job.Id, job.Attempts, JobState.Failed, "Failed.", reason).ConfigureAwait(false);
            }
            catch (Exception finishing) when (finishing is System.Data.Common.DbException or IOException)
            {
                // The database itself is unreachable; the row stays "running" with no Quartz job, and the dispatcher's
                // sweep resumes it once the database answers again.
                LogFailed(logger, finishing, job.Id);
            }
        }
    }

    [LoggerMessage(Level = LogLevel.Information, Message = "Job {JobId} was interrupted by this node stopping; it is handed back to run again.")]
    private static partial void LogInterrupted(ILogger logger, int jobId);

    [LoggerMessage(Level = LogLevel.Warning, Message = "Job {JobId} was taken over by another node while this one ran it (this node was taken for dead); what this node made was not stored.")]
    private static partial void LogTakenOver(ILogger logger, int jobId);

    [LoggerMessage(Level = LogLevel.Error, Message = "Job {JobId} failed.")]
    private static partial void LogFailed(ILogger logger, Exception exception, int jobId);
}
