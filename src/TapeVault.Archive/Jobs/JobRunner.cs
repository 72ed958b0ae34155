using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using TapeVault.Archive.Entities;

namespace TapeVault.Archive.Jobs;

/// <summary>
/// Works the job table: recovers jobs cut off by the last stop, then runs up to <see cref="ArchiveOptions.Workers"/>
/// jobs at once. Job work runs on its own threads, so page requests keep the request threads.
/// </summary>
public sealed partial class JobRunner(JobQueue queue, IEnumerable<IJobHandler> handlers, ArchiveOptions options, ILogger<JobRunner> logger) : BackgroundService
{
    private static readonly TimeSpan Idle = TimeSpan.FromMilliseconds(500);
    private readonly Dictionary<string, IJobHandler> byKind = handlers.ToDictionary(h => h.Kind, StringComparer.Ordinal);
    private readonly SemaphoreSlim wake = new(0);

    /// <summary>Tells an idle worker to look at the queue now rather than at its next poll.</summary>
    public void Nudge() => wake.Release();

    public override void Dispose()
    {
        wake.Dispose();
        base.Dispose();
    }

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        int recovered = await queue.RecoverInterruptedAsync(stoppingToken).ConfigureAwait(false);
        if (recovered > 0)
        {
            LogRecovered(logger, recovered);
        }

        var workers = Enumerable.Range(0, Math.Max(1, options.Workers)).Select(_ => Task.Run(() => WorkAsync(stoppingToken), stoppingToken));
        await Task.WhenAll(workers).ConfigureAwait(false);
    }

    private async Task WorkAsync(CancellationToken stopping)
    {
        while (!stopping.IsCancellationRequested)
        {
            JobRecord? job;
            try
            {
                job = await queue.ClaimNextAsync(stopping).ConfigureAwait(false);
            }
            catch (OperationCanceledException) when (stopping.IsCancellationRequested)
            {
                return;
            }

            if (job is null)
            {
                try
                {
                    await wake.WaitAsync(Idle, stopping).ConfigureAwait(false);
                }
                catch (OperationCanceledException)
                {
                    return;
                }

                continue;
            }

            await RunOneAsync(job, stopping).ConfigureAwait(false);
        }
    }

    private async Task RunOneAsync(JobRecord job, CancellationToken stopping)
    {
        if (!byKind.TryGetValue(job.Kind, out var handler))
        {
            await queue.FinishAsync(job.Id, JobState.Failed, "Failed.", $"This version of TapeVault has no worker for '{job.Kind}' jobs.").ConfigureAwait(false);
            return;
        }

        using var cancel = CancellationTokenSource.CreateLinkedTokenSource(stopping);
        async Task<bool> Report(double fraction, string text)
        {
            bool cancelAsked = await queue.ReportAsync(job.Id, fraction, text, CancellationToken.None).ConfigureAwait(false);
            if (cancelAsked)
            {
                await cancel.CancelAsync().ConfigureAwait(false);
            }

            return cancelAsked;
        }

        try
        {
            var outcome = await handler.RunAsync(job, Report, cancel.Token).ConfigureAwait(false);
            await queue.FinishAsync(job.Id, JobState.Done, outcome.Summary, resultId: outcome.ResultId).ConfigureAwait(false);
        }
        catch (OperationCanceledException) when (stopping.IsCancellationRequested)
        {
            // The app is stopping: the job stays "running" and is queued again at the next start.
            LogInterrupted(logger, job.Id);
        }
        catch (OperationCanceledException)
        {
            await queue.FinishAsync(job.Id, JobState.Cancelled, "Cancelled by a curator; nothing was stored.").ConfigureAwait(false);
        }
        catch (JobFailedException e)
        {
            await queue.FinishAsync(job.Id, JobState.Failed, "Failed.", e.Message).ConfigureAwait(false);
        }
        catch (Exception e)
        {
            // Whatever went wrong (a locked database, a full disk, a bug), the job ends failed with the reason and the
            // worker lives on; a worker that died here would leave its job "running" until the next restart.
            LogFailed(logger, e, job.Id);
            try
            {
                string reason = Storage.StorageFaults.IsDiskFull(e)
                    ? Storage.StorageFaults.DiskFullSentence($"what the {job.Kind} job made")
                    : $"The job stopped with an error: {e.Message}";
                await queue.FinishAsync(job.Id, JobState.Failed, "Failed.", reason).ConfigureAwait(false);
            }
            catch (Exception finishing) when (finishing is System.Data.Common.DbException or IOException)
            {
                // The database itself is unreachable; the job stays "running" and is recovered at the next start.
                LogFailed(logger, finishing, job.Id);
            }
        }
    }

    [LoggerMessage(Level = LogLevel.Warning, Message = "{Count} job(s) were cut off by the last stop and have been queued again or failed.")]
    private static partial void LogRecovered(ILogger logger, int count);

    [LoggerMessage(Level = LogLevel.Information, Message = "Job {JobId} was interrupted by the app stopping; it will start again at the next start.")]
    private static partial void LogInterrupted(ILogger logger, int jobId);

    [LoggerMessage(Level = LogLevel.Error, Message = "Job {JobId} failed.")]
    private static partial void LogFailed(ILogger logger, Exception exception, int jobId);
}
