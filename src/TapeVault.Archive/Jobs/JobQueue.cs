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

/// <summary>
/// The job table: the user's record of every job (kind, progress, cancel, outcome, error). The job engine
/// (<see cref="JobEngine"/>) decides when and where a job runs; claiming here is one conditional UPDATE, so two firings
/// never both run the same job. On SQLite a change of a job's row that finds another writer holding the write lock past
/// the busy wait is made again after a pause (<see cref="ArchiveDatabase.WhileBusyAsync"/>), and a progress report so
/// refused is dropped: a job never fails only because another writer held the lock.
/// </summary>
public sealed class JobQueue(IDbContextFactory<ArchiveDbContext> contexts, ArchiveOptions options, TimeProvider clock)
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
            CreatedUtc = db.Clock.GetUtcNow(),
            ItemId = itemId,
            CaptureId = captureId,
            ProgressText = "Waiting for a free worker.",
        };
        db.Jobs.Add(job);
        return job;
    }

    /// <summary>
    /// Takes job <paramref name="jobId"/> for one firing of the job engine, or returns null when there is nothing to
    /// run. A queued job is claimed with one conditional UPDATE, so two firings never both take it. A firing that
    /// resumes a job cut off by a stop or by a node that died (<paramref name="resuming"/>) finds it still running:
    /// its partial work was never committed (a decode run is written in one transaction at the end), so it starts
    /// over, or is failed with the reason once it has been cut off <see cref="ArchiveOptions.MaxAttempts"/> times, or
    /// ends cancelled when a cancel was asked for before the stop. Its attempt count is the claim's version: of two
    /// firings that resume the same cut-off, only one moves it on.
    /// </summary>
    public Task<JobRecord?> ClaimAsync(int jobId, bool resuming, CancellationToken cancellation = default) =>
        ArchiveDatabase.WhileBusyAsync(clock, () => ClaimOnceAsync(jobId, resuming, cancellation), cancellation);

    private async Task<JobRecord?> ClaimOnceAsync(int jobId, bool resuming, CancellationToken cancellation)
    {
        await using var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false);
        var job = await db.Jobs.AsNoTracking().FirstOrDefaultAsync(j => j.Id == jobId, cancellation).ConfigureAwait(false);
        if (job is null)
        {
            return null;
        }

        var now = db.Clock.GetUtcNow();
        if (job.State == JobState.Queued)
        {
            int claimed = await db.Jobs.Where(j => j.Id == jobId && j.State == JobState.Queued)
                .ExecuteUpdateAsync(s => s
                    .SetProperty(j => j.State, JobState.Running)
                    .SetProperty(j => j.StartedUtc, now)
                    .SetProperty(j => j.Attempts, j => j.Attempts + 1)
                    .SetProperty(j => j.ProgressText, "Starting."), cancellation).ConfigureAwait(false);
            return claimed == 1 ? await db.Jobs.AsNoTracking().FirstAsync(j => j.Id == jobId, cancellation).ConfigureAwait(false) : null;
        }

        if (job.State != JobState.Running || !resuming)
        {
            return null;
        }

        int attempts = job.Attempts;
        var cutOff = db.Jobs.Where(j => j.Id == jobId && j.State == JobState.Running && j.Attempts == attempts);
        if (job.CancelRequested)
        {
            await cutOff.ExecuteUpdateAsync(s => s.SetProperty(j => j.State, JobState.Cancelled).SetProperty(j => j.FinishedUtc, now)
                .SetProperty(j => j.ProgressText, "Cancelled (the job was cut off before the cancel took effect)."), cancellation).ConfigureAwait(false);
            return null;
        }

        if (attempts >= options.MaxAttempts)
        {
            await cutOff.ExecuteUpdateAsync(s => s.SetProperty(j => j.State, JobState.Failed).SetProperty(j => j.FinishedUtc, now)
                .SetProperty(j => j.ProgressText, "Failed.")
                .SetProperty(j => j.Error, $"The job was cut off {attempts} times while it ran (the app stopped or the worker running it died), so it was not started again; start it anew once the cause is found."),
                cancellation).ConfigureAwait(false);
            return null;
        }

        int resumed = await cutOff.ExecuteUpdateAsync(s => s
            .SetProperty(j => j.Attempts, attempts + 1)
            .SetProperty(j => j.StartedUtc, now)
            .SetProperty(j => j.Progress, 0.0)
            .SetProperty(j => j.ProgressText, "Started again: the job was cut off while it ran (the app stopped or its worker died), and it starts over from the beginning."),
            cancellation).ConfigureAwait(false);
        return resumed == 1 ? await db.Jobs.AsNoTracking().FirstAsync(j => j.Id == jobId, cancellation).ConfigureAwait(false) : null;
    }

    /// <summary>
    /// Hands a claimed job back to the queue without counting the claim as an attempt (it did no work): a merge whose
    /// decodes have not finished yet waits queued rather than holding a worker.
    /// </summary>
    public async Task<bool> DeferAsync(int jobId, int attempts, string text, CancellationToken cancellation = default)
    {
        await using var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false);
        int deferred = await ArchiveDatabase.WhileBusyAsync(clock, () => db.Jobs.Where(j => j.Id == jobId && j.State == JobState.Running && j.Attempts == attempts && !j.CancelRequested)
            .ExecuteUpdateAsync(s => s
                .SetProperty(j => j.State, JobState.Queued)
                .SetProperty(j => j.Attempts, attempts - 1)
                .SetProperty(j => j.Progress, 0.0)
                .SetProperty(j => j.ProgressText, text), cancellation), cancellation).ConfigureAwait(false);
        if (deferred == 0)
        {
            // A cancel came in while the job was looking: it ends cancelled rather than waiting on.
            await FinishAsync(jobId, attempts, JobState.Cancelled, "Cancelled by a curator; nothing was stored.").ConfigureAwait(false);
        }

        return deferred == 1;
    }

    /// <summary>The ids of the jobs still to be finished, queued or running, oldest first.</summary>
    public async Task<List<(int Id, JobState State, string Kind)>> UnfinishedAsync(CancellationToken cancellation = default)
    {
        await using var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false);
        var rows = await db.Jobs.AsNoTracking().Where(j => j.State == JobState.Queued || j.State == JobState.Running)
            .OrderBy(j => j.Id).Select(j => new { j.Id, j.State, j.Kind }).ToListAsync(cancellation).ConfigureAwait(false);
        return [.. rows.Select(r => (r.Id, r.State, r.Kind))];
    }

    /// <summary>
    /// Records the progress of the firing holding claim <paramref name="attempts"/> and says whether it should stop: a
    /// cancel was asked for, or the firing no longer holds the job (its node was taken for dead and another resumed the
    /// job). The claim fences the report, so a stale firing never overwrites the progress of the one holding the job. A
    /// report refused the write lock (<see cref="ArchiveDatabase.IsBusy"/>) is dropped and the job goes on: the next
    /// report, or the job's end, records where it is, and is fenced in its turn.
    /// </summary>
    public async Task<bool> ReportAsync(int jobId, int attempts, double progress, string text, CancellationToken cancellation = default)
    {
        await using var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false);
        double clamped = Math.Clamp(progress, 0, 1);
        int held;
        try
        {
            held = await db.Jobs.Where(j => j.Id == jobId && j.State == JobState.Running && j.Attempts == attempts)
                .ExecuteUpdateAsync(s => s.SetProperty(j => j.Progress, clamped).SetProperty(j => j.ProgressText, text), cancellation)
                .ConfigureAwait(false);
        }
        catch (Exception e) when (ArchiveDatabase.IsBusy(e))
        {
            return false;
        }

        return held == 0
            || await db.Jobs.AsNoTracking().Where(j => j.Id == jobId).Select(j => j.CancelRequested).FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
    }

    /// <summary>
    /// Ends the job that the firing holding claim <paramref name="attempts"/> ran. The claim fences it: a firing whose
    /// job was taken over meanwhile (its node was taken for dead and another resumed the job) changes nothing, and a
    /// job its handler already ended (<see cref="FinishHeldAsync"/>) stays as the handler left it. Says whether it ended it.
    /// </summary>
    public async Task<bool> FinishAsync(int jobId, int attempts, JobState state, string text, string? error = null, int? resultId = null)
    {
        await using var db = await contexts.CreateDbContextAsync().ConfigureAwait(false);
        var now = db.Clock.GetUtcNow();
        double progress = state == JobState.Done ? 1 : 0;
        return 1 == await ArchiveDatabase.WhileBusyAsync(clock, () => db.Jobs.Where(j => j.Id == jobId && j.State == JobState.Running && j.Attempts == attempts)
            .ExecuteUpdateAsync(s => s
                .SetProperty(j => j.State, state)
                .SetProperty(j => j.FinishedUtc, now)
                .SetProperty(j => j.ProgressText, text)
                .SetProperty(j => j.Error, error)
                .SetProperty(j => j.ResultId, resultId)
                .SetProperty(j => j.Progress, j => state == JobState.Done ? progress : j.Progress))).ConfigureAwait(false);
    }

    /// <summary>
    /// Ends <paramref name="job"/> done with <paramref name="resultId"/> inside the transaction that stores its result
    /// (<paramref name="write"/>'s), only while this firing still holds it: the row is running under the claim this
    /// firing made. A node that was taken for dead (frozen, cut off from the network) while another resumed the job
    /// finds its claim gone and must roll back, so the result is stored once, by the one firing whose claim stands,
    /// and a crash between storing the result and ending the job cannot happen (they are one commit).
    /// </summary>
    public static async Task<bool> FinishHeldAsync(ArchiveDbContext write, JobRecord job, string text, int resultId)
    {
        ArgumentNullException.ThrowIfNull(write);
        ArgumentNullException.ThrowIfNull(job);
        if (job.Id == 0)
        {
            // A job that was never in the job table, its handler called directly: there is no row to hold or end.
            return true;
        }

        var now = write.Clock.GetUtcNow();
        return 1 == await write.Jobs.Where(j => j.Id == job.Id && j.State == JobState.Running && j.Attempts == job.Attempts)
            .ExecuteUpdateAsync(s => s
                .SetProperty(j => j.State, JobState.Done)
                .SetProperty(j => j.FinishedUtc, now)
                .SetProperty(j => j.ProgressText, text)
                .SetProperty(j => j.Error, (string?)null)
                .SetProperty(j => j.ResultId, resultId)
                .SetProperty(j => j.Progress, 1.0), CancellationToken.None)
            .ConfigureAwait(false);
    }

    /// <summary>Asks a job to stop: a queued job is cancelled at once, a running one at its next progress report.</summary>
    public async Task<JobRecord?> CancelAsync(int jobId, CancellationToken cancellation = default)
    {
        await using var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false);
        var now = db.Clock.GetUtcNow();
        await db.Jobs.Where(j => j.Id == jobId && j.State == JobState.Queued)
            .ExecuteUpdateAsync(s => s.SetProperty(j => j.State, JobState.Cancelled).SetProperty(j => j.FinishedUtc, now)
                .SetProperty(j => j.ProgressText, "Cancelled before it started."), cancellation).ConfigureAwait(false);
        await db.Jobs.Where(j => j.Id == jobId && j.State == JobState.Running)
            .ExecuteUpdateAsync(s => s.SetProperty(j => j.CancelRequested, true).SetProperty(j => j.ProgressText, "Cancelling."), cancellation)
            .ConfigureAwait(false);
        return await db.Jobs.AsNoTracking().FirstOrDefaultAsync(j => j.Id == jobId, cancellation).ConfigureAwait(false);
    }
}
