using System.Text.Json;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Runs;
using TapeVault.Archive.Storage;
using TapeVault.Archive.Timeline;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Timeline;

namespace TapeVault.Archive.Jobs;

public sealed record MergeJobParameters(int ItemId)
{
    public string ToJson() => JsonSerializer.Serialize(this, SettingsJson.Options);

    public static MergeJobParameters FromJson(string json) =>
        JsonSerializer.Deserialize<MergeJobParameters>(json, SettingsJson.Options)
        ?? throw new JobFailedException("The job's parameters are empty.");
}

/// <summary>
/// Merges an item's decode runs (the newest run of each capture, with the profile of the newest run of all) into a
/// tape image, stores the container in the content store and records a new image version; older versions stay.
/// </summary>
public sealed class MergeJob(IDbContextFactory<ArchiveDbContext> contexts, ContentStore store, ProfileCatalog profiles, TimeProvider clock) : IJobHandler
{
    public string Kind => JobKinds.Merge;

    /// <summary>The runs a merge of the item takes: per capture the newest run with the newest run's profile.</summary>
    public static async Task<List<DecodeRun>> RunsToMergeAsync(ArchiveDbContext db, int itemId, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        var runs = await db.Runs.AsNoTracking().Include(r => r.Capture)
            .Where(r => r.Capture!.ItemId == itemId).OrderByDescending(r => r.Id)
            .ToListAsync(cancellation).ConfigureAwait(false);
        return RunsToMerge(runs);
    }

    /// <summary>Of an item's runs, newest first, the ones a merge takes: per capture the newest run with the newest run's profile.</summary>
    public static List<DecodeRun> RunsToMerge(IReadOnlyList<DecodeRun> newestFirst)
    {
        ArgumentNullException.ThrowIfNull(newestFirst);
        if (newestFirst.Count == 0)
        {
            return [];
        }

        string profileId = newestFirst[0].ProfileId;
        return [.. newestFirst.Where(r => r.ProfileId == profileId).GroupBy(r => r.CaptureId).Select(g => g.First()).OrderBy(r => r.CaptureId)];
    }

    /// <summary>
    /// A merge asked for while decodes of the same tape are still queued or running (the demo's, or a curator who
    /// merges straight after starting them) waits for them, so that it merges every pass it was asked to. It waits only
    /// for jobs queued before it, and waits in the queue, not on a worker: with one worker, the decodes run meanwhile.
    /// </summary>
    private async Task EnsureEarlierDecodesFinishedAsync(JobRecord job, int itemId, CancellationToken cancellation)
    {
        int[] waiting;
        await using (var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false))
        {
            waiting = await db.Jobs.AsNoTracking()
                .Where(j => j.ItemId == itemId && j.Kind == JobKinds.Decode && j.Id < job.Id && (j.State == JobState.Queued || j.State == JobState.Running))
                .OrderBy(j => j.Id).Select(j => j.Id).ToArrayAsync(cancellation).ConfigureAwait(false);
        }

        if (waiting.Length > 0)
        {
            throw new JobNotReadyException($"Waiting for decode job(s) {string.Join(", ", waiting)} of this tape to finish.");
        }
    }

    public async Task<JobOutcome> RunAsync(JobRecord job, JobProgress progress, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(job);
        ArgumentNullException.ThrowIfNull(progress);
        var parameters = MergeJobParameters.FromJson(job.Parameters);
        await EnsureEarlierDecodesFinishedAsync(job, parameters.ItemId, cancellation).ConfigureAwait(false);
        List<DecodeRun> runs;
        string accession;
        var passes = new List<MergePass>();
        var readings = new List<TimelineReading>();
        await using (var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false))
        {
            accession = await db.Items.AsNoTracking().Where(i => i.Id == parameters.ItemId).Select(i => i.AccessionNumber)
                .FirstOrDefaultAsync(cancellation).ConfigureAwait(false)
                ?? throw new JobFailedException($"Item {parameters.ItemId} no longer exists.");

            runs = await RunsToMergeAsync(db, parameters.ItemId, cancellation).ConfigureAwait(false);
            if (runs.Count == 0)
            {
                throw new JobFailedException("The item has no decode runs to merge; decode its captures first.");
            }

            foreach (var run in runs)
            {
                var records = await db.Candidates.AsNoTracking().Where(c => c.RunId == run.Id).OrderBy(c => c.Id).ToListAsync(cancellation).ConfigureAwait(false);
                var capture = run.Capture!;
                readings.AddRange(records.Select(c => TimelineDrawings.ReadingOf(capture.Sha256, c)));
                passes.Add(new MergePass(
                    new ImageSource(capture.Sha256, capture.OriginalFileName, capture.SampleRate, capture.Channels, capture.DurationSeconds),
                    [.. records.Select(RunStore.ToCandidate)],
                    run.CodeVersion));
            }
        }

        if (!profiles.TryGet(runs[0].ProfileId, out var profile))
        {
            throw new JobFailedException($"There is no format profile '{runs[0].ProfileId}' any more.");
        }

        await progress(0.1, $"Merging {passes.Count} pass(es) with profile {profile.Id}.").ConfigureAwait(false);
        var image = await Task.Factory.StartNew(() => TapeMerger.Merge(passes, profile, new MergeOptions { Clock = clock }), cancellation, TaskCreationOptions.LongRunning, TaskScheduler.Default).ConfigureAwait(false);
        cancellation.ThrowIfCancellationRequested();
        await progress(0.8, "Writing the tape image.").ConfigureAwait(false);

        using var staged = await store.StageAsync(stream =>
        {
            TapeImageContainer.Write(stream, image);
            return Task.CompletedTask;
        }, cancellation).ConfigureAwait(false);

        // The tape page's timeline with the new image, drawn now from what the merge holds, outside the write
        // transaction, and put in place just before the commit, so that the curator's first view reads it.
        using var timeline = await TimelineDrawings.StageForPageAsync(
            store, parameters.ItemId, accession, runs, runs.ToDictionary(r => r.CaptureId, r => r.Capture!), readings, image, staged.Sha256, cancellation).ConfigureAwait(false);

        await using var write = await contexts.CreateDbContextAsync(CancellationToken.None).ConfigureAwait(false);
        await using var transaction = await ArchiveDatabase.BeginWriteAsync(write, CancellationToken.None).ConfigureAwait(false);
        bool known = await write.Objects.AnyAsync(o => o.Sha256 == staged.Sha256, CancellationToken.None).ConfigureAwait(false);
        if (!known)
        {
            write.Objects.Add(new StoredObject { Sha256 = staged.Sha256, Size = staged.Size, Kind = ObjectKind.Image, StoredUtc = write.Clock.GetUtcNow() });
        }

        int version = 1 + (await write.Images.Where(i => i.ItemId == parameters.ItemId).MaxAsync(i => (int?)i.Version, CancellationToken.None).ConfigureAwait(false) ?? 0);
        var record = new TapeImageRecord
        {
            ItemId = parameters.ItemId,
            Version = version,
            Sha256 = staged.Sha256,
            ProfileId = image.ProfileId,
            CodeVersion = image.CodeVersion,
            CreatedUtc = image.CreatedUtc,
            CreatedBy = job.CreatedBy,
            CleanBlocks = image.Count(RecoveryStatus.Clean),
            VotedBlocks = image.Count(RecoveryStatus.Voted),
            RepairedBlocks = image.Count(RecoveryStatus.Repaired),
            MissingBlocks = image.Count(RecoveryStatus.Missing),
            Conflicts = image.Blocks.Count(b => b.Conflict),
            OverallConfidence = image.OverallConfidence,
            SourceRunIds = string.Join(",", runs.Select(r => r.Id)),
        };
        write.Images.Add(record);
        staged.Commit();
        try
        {
            await write.SaveChangesAsync(CancellationToken.None).ConfigureAwait(false);
            string summary = $"Image version {version}: {image.Blocks.Length} position(s): {record.CleanBlocks} clean, {record.VotedBlocks} voted, "
                + $"{record.RepairedBlocks} repaired, {record.MissingBlocks} missing, {record.Conflicts} conflict(s), from runs {record.SourceRunIds}.";
            EventLog.Add(write, EventTypes.Merge, job.CreatedBy, "image", record.Id.ToString(), "success", $"{summary} SHA-256 {staged.Sha256}.", parameters.ItemId);
            await write.SaveChangesAsync(CancellationToken.None).ConfigureAwait(false);

            // The image and the job's end are one commit, and only while this firing still holds the job.
            if (!await JobQueue.FinishHeldAsync(write, job, summary, record.Id).ConfigureAwait(false))
            {
                throw new JobTakenOverException(job.Id);
            }

            timeline?.Place();
            await transaction.CommitAsync(CancellationToken.None).ConfigureAwait(false);
            timeline?.Committed();
            return new JobOutcome(record.Id, summary);
        }
        catch
        {
            await StagedObjectUndo.WithdrawUnlessNamedAsync(write, transaction, staged).ConfigureAwait(false);
            throw;
        }
    }
}
