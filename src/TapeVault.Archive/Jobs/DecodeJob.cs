using System.Text.Json;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Runs;
using TapeVault.Archive.Storage;
using TapeVault.Archive.Timeline;
using TapeVault.Core.Audio;
using TapeVault.Core.Decoding;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;

namespace TapeVault.Archive.Jobs;

/// <summary>What a decode job decodes: one capture, one profile, and the bank (null: the default bank).</summary>
public sealed record DecodeJobParameters(int CaptureId, string ProfileId, IReadOnlyList<DetectorSetting>? Settings, string Channel = "mix")
{
    public string ToJson() => JsonSerializer.Serialize(this, SettingsJson.Options);

    public static DecodeJobParameters FromJson(string json) =>
        JsonSerializer.Deserialize<DecodeJobParameters>(json, SettingsJson.Options)
        ?? throw new JobFailedException("The job's parameters are empty.");
}

/// <summary>Decodes a stored capture with a bank and stores the run and every candidate in one transaction.</summary>
public sealed class DecodeJob(IDbContextFactory<ArchiveDbContext> contexts, ContentStore store, ProfileCatalog profiles, TimeProvider clock) : IJobHandler
{
    private static readonly TimeSpan ReportEvery = TimeSpan.FromMilliseconds(400);

    public string Kind => JobKinds.Decode;

    public async Task<JobOutcome> RunAsync(JobRecord job, JobProgress progress, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(job);
        ArgumentNullException.ThrowIfNull(progress);
        var parameters = DecodeJobParameters.FromJson(job.Parameters);
        Capture capture;
        await using (var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false))
        {
            capture = await db.Captures.AsNoTracking().FirstOrDefaultAsync(c => c.Id == parameters.CaptureId, cancellation).ConfigureAwait(false)
                ?? throw new JobFailedException($"Capture {parameters.CaptureId} no longer exists.");
        }

        if (!profiles.TryGet(parameters.ProfileId, out var profile))
        {
            throw new JobFailedException($"There is no format profile '{parameters.ProfileId}'.");
        }

        var path = store.PathOf(capture.Sha256);
        if (!File.Exists(path))
        {
            throw new JobFailedException($"The stored original of capture {capture.Id} is missing from the content store; run a fixity audit.");
        }

        var channel = parameters.Channel switch
        {
            "left" => ChannelChoice.Left,
            "right" => ChannelChoice.Right,
            _ => ChannelChoice.Mix,
        };

        // The decoder reports from its reading thread; forward at most a few times a second, never blocking it.
        var lastReport = DateTimeOffset.MinValue;
        Task pending = Task.CompletedTask;
        var forward = new InlineProgress<DecodeProgress>(p =>
        {
            var now = clock.GetUtcNow();
            if (now - lastReport < ReportEvery || !pending.IsCompleted)
            {
                return;
            }

            lastReport = now;
            pending = progress(p.Fraction * 0.97, $"Decoded {p.SamplesDone:N0} of {p.SamplesTotal:N0} samples.");
        });

        var started = clock.GetUtcNow();
        DecodeResult result;
        try
        {
            result = await Task.Factory.StartNew(
                () => CaptureDecoder.Decode(path, profile, parameters.Settings, new DecodeOptions
                {
                    Channel = channel,
                    Progress = forward,
                    Cancellation = cancellation,

                    // The plots' pulse-length surveys and waveform overview are of the capture mixed to mono: made in the
                    // decode's own pass when it reads the capture so, so the job reads the file once.
                    SurveyIntervals = channel == WholeCaptureSurveys.Channel,
                    OverviewColumns = channel == ChannelChoice.Mix ? OverviewColumns(capture) : 0,
                }),
                cancellation,
                TaskCreationOptions.LongRunning,
                TaskScheduler.Default).ConfigureAwait(false);
        }
        catch (CaptureFormatException e)
        {
            throw new JobFailedException($"The stored capture could not be read: {e.Message}");
        }

        // The decode's readings are read back from its spool file until the run is made of them; the file goes with the job.
        using var readings = result;
        await pending.ConfigureAwait(false);
        cancellation.ThrowIfCancellationRequested();
        if (!string.Equals(result.Capture.Sha256, capture.Sha256, StringComparison.Ordinal))
        {
            throw new JobFailedException(
                $"The stored original of capture {capture.Id} no longer matches its SHA-256 (read {result.Capture.Sha256[..12]}…, recorded {capture.Sha256[..12]}…); nothing was decoded. Run a fixity audit.");
        }

        var run = RunStore.ToRun(capture.Id, result, started, clock.GetUtcNow());

        // What the capture page plots over the whole capture is made here, once, not by whoever opens the page: the
        // pulse-length survey of every setting and the waveform overview, both counted in the decode's own pass over the
        // capture (a capture decoded from one channel alone is read once more for them, mixed). They are a cache:
        // the run is stored whatever happens to them, and the page makes any that are missing. They are made before the
        // run is stored, so a stop while they are being made repeats the job without leaving a second run behind.
        await progress(0.975, "Keeping the pulse-length surveys and the waveform overview for the plots.").ConfigureAwait(false);
        string plots;
        try
        {
            int surveys = await Task.Factory.StartNew(
                () => WholeCaptureSurveys.MakeForRun(store, path, capture.Sha256, profile, result.Settings, run.Candidates, cancellation, result.Surveys),
                cancellation,
                TaskCreationOptions.LongRunning,
                TaskScheduler.Default).ConfigureAwait(false);
            if (result.Overview is { } overview)
            {
                CaptureOverviews.Keep(store, capture.Sha256, ChannelChoice.Mix, overview);
            }
            else
            {
                await CaptureOverviews.GetAsync(store, capture.Sha256, OverviewColumns(capture), ChannelChoice.Mix, cancellation).ConfigureAwait(false);
            }

            plots = $" Plots made: {surveys} pulse-length survey(s) and the overview.";
        }
        catch (Exception e) when (e is IOException or ArchiveConflictException or CaptureFormatException)
        {
            plots = StorageFaults.IsDiskFull(e)
                ? " The plots were not made ahead: the archive's disk is full; the capture page makes them when asked."
                : " The plots were not made ahead; the capture page makes them when asked.";
        }

        using var timeline = await StageTimelineAsync(capture, run, cancellation).ConfigureAwait(false);

        await progress(0.98, "Storing the blocks.").ConfigureAwait(false);
        await using var write = await contexts.CreateDbContextAsync(CancellationToken.None).ConfigureAwait(false);
        // The write lock is held from here to the commit: taken again after a pause while another writer holds it, and
        // held for no more than the rows themselves (the run's readings go in with one statement).
        await using var transaction = await ArchiveDatabase.BeginWriteAsync(write, CancellationToken.None).ConfigureAwait(false);
        await RunStore.SaveAsync(write, run, CancellationToken.None).ConfigureAwait(false);
        EventLog.Add(write, EventTypes.Decode, job.CreatedBy, "run", run.Id.ToString(), "success",
            $"Capture {capture.Id} with profile {profile.Id} and {result.Settings.Count} detector setting(s), code {result.CodeVersion}: {run.Outcome}", capture.ItemId);
        if (result.Capture.FixityFinding is { } finding)
        {
            // The file's bytes match their SHA-256 but its audio no longer matches the digest the file carries (a FLAC
            // STREAMINFO MD5): recorded as a fixity finding against the original, the decode itself stands.
            EventLog.Add(write, EventTypes.FixityCheck, job.CreatedBy, "object", capture.Sha256, Fixity.FixityAudit.Mismatch,
                $"capture {capture.Id} ({capture.OriginalFileName}), decoded by run {run.Id}: {finding}", capture.ItemId);
        }
        await write.SaveChangesAsync(CancellationToken.None).ConfigureAwait(false);

        // The run and the job's end are one commit, and only while this firing still holds the job: a decode is
        // stored once, even when a node taken for dead wakes up after another finished its job.
        string summary = $"Decode run {run.Id}: {run.Outcome}{plots}";
        if (!await JobQueue.FinishHeldAsync(write, job, summary, run.Id).ConfigureAwait(false))
        {
            throw new JobTakenOverException(job.Id);
        }

        timeline?.Place();
        await transaction.CommitAsync(CancellationToken.None).ConfigureAwait(false);
        timeline?.Committed();
        return new JobOutcome(run.Id, summary);
    }

    /// <summary>
    /// The tape page's timeline with the new run, drawn before the write transaction from the run in memory and the
    /// tape's stored runs and newest image as they are now, so the write lock is not held for it; put in place just
    /// before the commit, so that the curator's first view reads it. Not when a merge of the tape waits to run after
    /// this decode: the merge changes the timeline again and draws it then.
    /// </summary>
    private async Task<StagedTimeline?> StageTimelineAsync(Capture capture, DecodeRun run, CancellationToken cancellation)
    {
        try
        {
            await using var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false);
            bool mergeWaits = await db.Jobs.AsNoTracking()
                .AnyAsync(j => j.ItemId == capture.ItemId && j.Kind == JobKinds.Merge && (j.State == JobState.Queued || j.State == JobState.Running), cancellation)
                .ConfigureAwait(false);
            string? accession = await db.Items.AsNoTracking().Where(i => i.Id == capture.ItemId).Select(i => i.AccessionNumber)
                .FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
            if (mergeWaits || accession is null)
            {
                return null;
            }

            var stored = await db.Runs.AsNoTracking().Include(r => r.Capture)
                .Where(r => r.Capture!.ItemId == capture.ItemId).OrderByDescending(r => r.Id)
                .ToListAsync(cancellation).ConfigureAwait(false);
            var runs = MergeJob.RunsToMerge([run, .. stored]);
            var captures = stored.Select(r => r.Capture!).Append(capture).DistinctBy(c => c.Id).ToDictionary(c => c.Id);
            var readings = run.Candidates.Select(c => TimelineDrawings.ReadingOf(capture.Sha256, c)).ToList();
            var storedRuns = runs.Where(r => !ReferenceEquals(r, run)).ToDictionary(r => r.Id, r => captures[r.CaptureId].Sha256);
            readings.AddRange(await TimelineDrawings.StoredReadingsAsync(db, storedRuns, cancellation).ConfigureAwait(false));

            string? newest = await TimelineDrawings.NewestImageAsync(db, store, capture.ItemId, cancellation).ConfigureAwait(false);
            TapeImage? image = newest is null ? null : await TimelineDrawings.ReadStoredImageAsync(store, newest, cancellation).ConfigureAwait(false);
            return await TimelineDrawings.StageForPageAsync(store, capture.ItemId, accession, runs, captures, readings, image, newest, cancellation).ConfigureAwait(false);
        }
        catch (Exception e) when (e is not OperationCanceledException)
        {
            // The drawing is a cache: whatever stops it (a damaged image, unreadable settings, the database), the decode
            // stands and the page draws the timeline (and tells what is wrong) when asked.
            return null;
        }
    }

    /// <summary>The columns of the capture page's overview of this capture (no more than it has frames).</summary>
    private static int OverviewColumns(Capture capture) =>
        (int)Math.Max(1, Math.Min(CaptureOverviews.DefaultColumns, (long)Math.Round(capture.DurationSeconds * capture.SampleRate)));

}
