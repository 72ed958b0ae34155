using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;

namespace TapeVault.Archive.Jobs;

public static class JobKinds
{
    public const string Decode = "decode";
    public const string Merge = "merge";
    public const string Fixity = "fixity";
    public const string Bag = "bag";
    public const string Publish = "publish";
}

/// <summary>The persisted job table's operations. Claiming is one conditional UPDATE, so two workers never take the same job.</summary>
public sealed class JobQueue(IDbContextFactory<ArchiveDbContext> contexts, ArchiveOptions options)
{
    public static JobRecord Enqueue(ArchiveDbContext db, string kind, string parameters, string agent, int? itemId = null, int? captureId = null)
    {
        ArgumentNullException.ThrowIfNull(db);
        var job = new JobRecord
        {
            Kind = kind,
            State = JobState.Queued,
            Parameters = parameters,
            CreatedBy = agent,
            CreatedUtc = DateTimeOffset.UtcNow,
            ItemId = itemId,
            CaptureId = captureId,
            ProgressText = "Waiting for a free worker.",
        };
        db.Jobs.Add(job);
        return job;
    }

    /// <summary>
    /// At start, before any worker runs: a job found running was cut off by a stop or crash. Its partial work was never
    /// committed (a decode run is written in one transaction at the end), so it is queued again, or failed with the
    /// reason once it has been cut off <see cref="ArchiveOptions.MaxAttempts"/> times.
    /// </summary>
    public async Task<int> RecoverInterruptedAsync(CancellationToken cancellation = default)
    {
        await using var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false);
        var running = await db.Jobs.Where(j => j.State == JobState.Running).ToListAsync(cancellation).ConfigureAwait(false);
        foreach (var job in running)
        {
            if (job.CancelRequested)
            {
                job.State = JobState.Cancelled;
                job.FinishedUtc = DateTimeOffset.UtcNow;
                job.ProgressText = "Cancelled (the app stopped before the cancel took effect).";
            }
            else if (job.Attempts >= options.MaxAttempts)
            {
                job.State = JobState.Failed;
                job.FinishedUtc = DateTimeOffset.UtcNow;
                job.Error = $"The app stopped {job.Attempts} times while this job ran, so it was not started again; start it anew once the cause is found.";
            }
            else
            {
                job.State = JobState.Queued;
                job.Progress = 0;
                job.ProgressText = "Queued again: the app stopped while this job ran, and it starts over from the beginning.";
            }
        }

        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        return running.Count;
    }

    /// <summary>Takes the oldest queued job, or returns null when there is none.</summary>
    public async Task<JobRecord?> ClaimNextAsync(CancellationToken cancellation = default)
    {
        await using var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false);
        for (int attempt = 0; attempt < 5; attempt++)
        {
            var next = await db.Jobs.AsNoTracking().Where(j => j.State == JobState.Queued)
                .OrderBy(j => j.Id).Select(j => j.Id).FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
            if (next == 0)
            {
                return null;
            }

            var now = DateTimeOffset.UtcNow;
            int claimed = await db.Jobs.Where(j => j.Id == next && j.State == JobState.Queued)
                .ExecuteUpdateAsync(s => s
                    .SetProperty(j => j.State, JobState.Running)
                    .SetProperty(j => j.StartedUtc, now)
                    .SetProperty(j => j.Attempts, j => j.Attempts + 1)
                    .SetProperty(j => j.ProgressText, "Starting."), cancellation).ConfigureAwait(false);
            if (claimed == 1)
            {
                return await db.Jobs.AsNoTracking().FirstAsync(j => j.Id == next, cancellation).ConfigureAwait(false);
            }
        }

        return null;
    }

    /// <summary>Records progress and says whether a cancel was asked for.</summary>
    public async Task<bool> ReportAsync(int jobId, double progress, string text, CancellationToken cancellation = default)
    {
        await using var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false);
        double clamped = Math.Clamp(progress, 0, 1);
        await db.Jobs.Where(j => j.Id == jobId && j.State == JobState.Running)
            .ExecuteUpdateAsync(s => s.SetProperty(j => j.Progress, clamped).SetProperty(j => j.ProgressText, text), cancellation)
            .ConfigureAwait(false);
        return await db.Jobs.AsNoTracking().Where(j => j.Id == jobId).Select(j => j.CancelRequested).FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
    }

    public async Task FinishAsync(int jobId, JobState state, string text, string? error = null, int? resultId = null)
    {
        await using var db = await contexts.CreateDbContextAsync().ConfigureAwait(false);
        var now = DateTimeOffset.UtcNow;
        double progress = state == JobState.Done ? 1 : 0;
        await db.Jobs.Where(j => j.Id == jobId)
            .ExecuteUpdateAsync(s => s
                .SetProperty(j => j.State, state)
                .SetProperty(j => j.FinishedUtc, now)
                .SetProperty(j => j.ProgressText, text)
                .SetProperty(j => j.Error, error)
                .SetProperty(j => j.ResultId, resultId)
                .SetProperty(j => j.Progress, j => state == JobState.Done ? progress : j.Progress))
            .ConfigureAwait(false);
    }

    /// <summary>Asks a job to stop: a queued job is cancelled at once, a running one at its next progress report.</summary>
    public async Task<JobRecord?> CancelAsync(int jobId, CancellationToken cancellation = default)
    {
        await using var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false);
        var now = DateTimeOffset.UtcNow;
        await db.Jobs.Where(j => j.Id == jobId && j.State == JobState.Queued)
            .ExecuteUpdateAsync(s => s.SetProperty(j => j.State, JobState.Cancelled).SetProperty(j => j.FinishedUtc, now)
                .SetProperty(j => j.ProgressText, "Cancelled before it started."), cancellation).ConfigureAwait(false);
        await db.Jobs.Where(j => j.Id == jobId && j.State == JobState.Running)
            .ExecuteUpdateAsync(s => s.SetProperty(j => j.CancelRequested, true).SetProperty(j => j.ProgressText, "Cancelling."), cancellation)
            .ConfigureAwait(false);
        return await db.Jobs.AsNoTracking().FirstOrDefaultAsync(j => j.Id == jobId, cancellation).ConfigureAwait(false);
    }
}
