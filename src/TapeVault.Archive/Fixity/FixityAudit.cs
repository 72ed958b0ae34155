using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Storage;

namespace TapeVault.Archive.Fixity;

/// <summary>One place a damaged, missing or contradicted object is used (which collection, item and file), or a broken link of the event chain.</summary>
public sealed record FixityFinding(string Sha256, string Problem, string Kind, string? Collection, string? Item, string File, string Detail);

/// <param name="Chain">The walk along the event chain, made before the audit added events of its own.</param>
/// <param name="HeadAfter">The chain's head once the audit's own fixity-check events were recorded.</param>
public sealed record FixityReport(int Checked, int Good, IReadOnlyList<FixityFinding> Problems, DateTimeOffset StartedUtc, DateTimeOffset FinishedUtc, ChainReport Chain, ChainHead? HeadAfter)
{
    public bool AllGood => Problems.Count == 0;
}

/// <summary>How much of the event chain an audit walks.</summary>
public enum ChainWalk
{
    /// <summary>
    /// From the head the last audit verified (its checkpoint) on, unless the last walk of the whole chain is older than
    /// <see cref="ArchiveOptions.WholeChainWalkDays"/> or there is none: then the whole chain (the scheduled audit's walk).
    /// </summary>
    WhenDue,

    /// <summary>The whole chain from its first event (<c>tapevault verify</c>'s walk).</summary>
    Whole,
}

/// <summary>How far an audit has got, for progress bars.</summary>
public readonly record struct FixityProgress(int Done, int Total);

/// <summary>
/// Walks the event chain and names its first broken link; re-hashes every stored object (originals, images, exports)
/// against the SHA-256 the archive recorded; cross-checks every capture (its row, its object row and its ingest event
/// must agree on SHA-256 and size); and reports files in the store that no row names, and object rows nothing uses.
/// Records one fixity-check event per object. It only reads: nothing is repaired, replaced, moved or removed.
/// </summary>
public sealed partial class FixityAudit(ArchiveDbContext db, IDbContextFactory<ArchiveDbContext> contexts, ContentStore store, ArchiveOptions options)
{
    public const string Ok = "ok";
    public const string Mismatch = "mismatch";
    public const string Missing = "missing";

    /// <summary>A capture's row, object row and ingest event disagree.</summary>
    public const string Contradiction = "contradiction";

    /// <summary>A file in the store that no object row names.</summary>
    public const string Unrecorded = "unrecorded";

    /// <summary>An object row that no capture, image or export uses.</summary>
    public const string Unreferenced = "unreferenced";

    /// <summary>A link of the event chain that does not hold.</summary>
    public const string ChainBroken = "chain-broken";

    /// <summary>The event that records a walk of the whole chain (its object id; older audits recorded only this kind).</summary>
    public const string WholeChain = "chain";

    /// <summary>The event that records a walk from the last audit's checkpoint on (its object id).</summary>
    public const string ChainSinceCheckpoint = "chain-since-checkpoint";

    /// <summary>Audits with the scheduled audit's walk along the chain (<see cref="ChainWalk.WhenDue"/>).</summary>
    public Task<FixityReport> RunAsync(int? collectionId, string agent, IProgress<FixityProgress>? progress = null, CancellationToken cancellation = default) =>
        RunAsync(collectionId, agent, ChainWalk.WhenDue, progress, cancellation);

    public async Task<FixityReport> RunAsync(int? collectionId, string agent, ChainWalk walk, IProgress<FixityProgress>? progress = null, CancellationToken cancellation = default)
    {
        var started = db.Clock.GetUtcNow();
        if (collectionId is { } id && !await db.Collections.AnyAsync(c => c.Id == id, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveNotFoundException($"There is no collection {id}.");
        }

        var places = await PlacesAsync(collectionId, cancellation).ConfigureAwait(false);
        var objects = await ArchiveDatabase.ListAsync(db, db.Objects.AsNoTracking().OrderBy(o => o.Sha256), cancellation).ConfigureAwait(false);
        var recorded = objects.ToDictionary(o => o.Sha256, StringComparer.Ordinal);
        if (collectionId is not null)
        {
            objects = [.. objects.Where(o => places.ContainsKey(o.Sha256))];
        }

        // The files are hashed from here on, a batch at a time on every core, while the event chain is checked and
        // each batch's outcome is judged and recorded in order: reading and hashing overlap the database's work
        // instead of waiting for it.
        var found = new FileFacts[objects.Count];
        var hashed = new TaskCompletionSource[(objects.Count + HashBatchSize - 1) / HashBatchSize];
        for (int k = 0; k < hashed.Length; k++)
        {
            hashed[k] = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        }

        using var stopHashing = CancellationTokenSource.CreateLinkedTokenSource(cancellation);
        var hashing = Task.Run(() => HashAll(objects, found, hashed, stopHashing.Token), CancellationToken.None);
        try
        {
            var run = new AuditRun(collectionId, agent, walk, started, places, objects, recorded, found, hashed, progress);
            return await AuditAsync(run, cancellation).ConfigureAwait(false);
        }
        finally
        {
            await stopHashing.CancelAsync().ConfigureAwait(false);
            await hashing.ConfigureAwait(false);
        }
    }

    /// <summary>
    /// One audit's fixed facts, handed from stage to stage: its scope and agent, how much of the chain it walks, when it
    /// started, where each object is used, the objects it checks (and every object row, by hash), and the hashing
    /// running ahead of it (each file's facts, and each batch's end).
    /// </summary>
    private sealed record AuditRun(
        int? CollectionId,
        string Agent,
        ChainWalk Walk,
        DateTimeOffset Started,
        Dictionary<string, List<Place>> Places,
        List<Entities.StoredObject> Objects,
        Dictionary<string, Entities.StoredObject> Recorded,
        FileFacts[] Found,
        TaskCompletionSource[] Hashed,
        IProgress<FixityProgress>? Progress);

    private async Task<FixityReport> AuditAsync(AuditRun run, CancellationToken cancellation)
    {
        // The chain as it stood before this audit added events of its own (up to the head now), walked on a
        // connection of its own while the objects' outcomes are recorded on this one: each link is recomputed, and the
        // walk overlaps the audit's writes instead of coming before them. From the last audit's checkpoint on, unless a
        // walk of the whole chain is asked for or due.
        var headBefore = await EventChain.HeadAsync(db, cancellation).ConfigureAwait(false);
        var from = await CheckpointAsync(run.Walk, headBefore, cancellation).ConfigureAwait(false);
        using var stopWalking = CancellationTokenSource.CreateLinkedTokenSource(cancellation);
        var walking = Task.Run(
            async () =>
            {
                await using var reader = await contexts.CreateDbContextAsync(stopWalking.Token).ConfigureAwait(false);
                return await EventChain.VerifyAsync(reader, from, headBefore?.EventId ?? 0, stopWalking.Token).ConfigureAwait(false);
            },
            CancellationToken.None);
        try
        {
            return await RecordAsync(run, walking, cancellation).ConfigureAwait(false);
        }
        finally
        {
            await stopWalking.CancelAsync().ConfigureAwait(false);
            await Task.WhenAny(walking).ConfigureAwait(false);
        }
    }

    /// <summary>
    /// Where this audit's walk starts: after the head the newest intact walk verified (recorded in its chain event), or
    /// null for the whole chain: when asked, when there is no such walk, or when the newest walk of the whole chain is
    /// older than <see cref="ArchiveOptions.WholeChainWalkDays"/>. The checkpoint's own event lies after the head it
    /// names, so the walk from that head re-hashes it: a checkpoint edited to skip events breaks its own link.
    /// </summary>
    private async Task<ChainHead?> CheckpointAsync(ChainWalk walk, ChainHead? headBefore, CancellationToken cancellation)
    {
        if (walk == ChainWalk.Whole || options.WholeChainWalkDays == 0 || headBefore is null)
        {
            return null;
        }

        var walks = db.Events.AsNoTracking()
            .Where(e => e.EventType == EventTypes.FixityCheck && e.ObjectType == ChainObjectType && e.Outcome == Ok && e.Id <= headBefore.EventId);
        var whole = await walks.Where(e => e.ObjectId == WholeChain).OrderByDescending(e => e.Id)
            .Select(e => new { e.Id, e.OccurredUtc }).FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
        if (whole is null || db.Clock.GetUtcNow() - whole.OccurredUtc > TimeSpan.FromDays(options.WholeChainWalkDays))
        {
            return null;
        }

        var newest = await walks.Where(e => e.ObjectId == WholeChain || e.ObjectId == ChainSinceCheckpoint).OrderByDescending(e => e.Id)
            .Select(e => new { e.Id, e.Detail }).FirstAsync(cancellation).ConfigureAwait(false);
        return WalkedHead().Match(newest.Detail) is { Success: true } said && EventChain.ParseHead(said.Groups["head"].Value) is { } head && head.EventId < newest.Id
            ? head
            : null;
    }

    /// <summary>The object type of the events that record a walk along the chain.</summary>
    private const string ChainObjectType = "event-log";

    /// <summary>The head a walk verified, as its event's detail ends: "…; head event N sha256:H.".</summary>
    [System.Text.RegularExpressions.GeneratedRegex(@"; head (?<head>event [0-9]+ sha256:[0-9a-f]{64})\.$", System.Text.RegularExpressions.RegexOptions.CultureInvariant)]
    private static partial System.Text.RegularExpressions.Regex WalkedHead();

    private async Task<FixityReport> RecordAsync(AuditRun run, Task<ChainReport> walking, CancellationToken cancellation)
    {
        var (collectionId, agent, _, started, places, objects, recorded, found, hashed, progress) = run;
        var problems = new List<FixityFinding>();
        int good = 0;
        var checks = new List<Entities.ArchiveEvent>(EventsPerSave);
        for (int i = 0; i < objects.Count; i++)
        {
            if (i % HashBatchSize == 0)
            {
                await hashed[i / HashBatchSize].Task.WaitAsync(cancellation).ConfigureAwait(false);
            }

            var stored = objects[i];
            string outcome;
            string detail;
            var facts = found[i];
            if (!facts.Exists)
            {
                outcome = Missing;
                detail = $"The file {store.RelativePath(stored.Sha256)} is gone from the store.";
            }
            else
            {
                string? actual = facts.Sha256;
                long size = facts.Size;
                if (actual == stored.Sha256 && size == stored.Size)
                {
                    outcome = Ok;
                    detail = $"{size} bytes, SHA-256 as recorded.";
                }
                else
                {
                    outcome = Mismatch;
                    detail = $"Recorded {stored.Size} bytes with SHA-256 {stored.Sha256}; found {size} bytes with SHA-256 {actual}.";
                }
            }

            var uses = places.GetValueOrDefault(stored.Sha256);
            if (uses is null)
            {
                uses = [new Place(stored.Kind.ToString().ToLowerInvariant(), null, null, null, "(not referenced)")];
                problems.Add(new FixityFinding(stored.Sha256, Unreferenced, uses[0].Kind, null, null, uses[0].File,
                    $"The object row {stored.Sha256} ({stored.Size} bytes) is used by no capture, image or export: what used it was changed or removed behind the archive's back."));
            }

            if (outcome == Ok)
            {
                good++;
            }
            else
            {
                problems.AddRange(uses.Select(u => new FixityFinding(stored.Sha256, outcome, u.Kind, u.Collection, u.Item, u.File, detail)));
            }

            checks.Add(EventLog.New(db, EventTypes.FixityCheck, agent, "object", stored.Sha256, outcome,
                $"{uses[0].Kind} {uses[0].File}{(uses.Count > 1 ? $" (and {uses.Count - 1} more use(s))" : string.Empty)}: {detail}", uses[0].ItemId));
            if (checks.Count == EventsPerSave)
            {
                await EventLog.AppendAsync(db, checks, cancellation).ConfigureAwait(false);
                checks.Clear();
            }

            progress?.Report(new FixityProgress(i + 1, objects.Count));
        }

        await EventLog.AppendAsync(db, checks, cancellation).ConfigureAwait(false);
        var chain = await walking.WaitAsync(cancellation).ConfigureAwait(false);
        if (chain.FirstBreak is { } broken)
        {
            var stored = await db.Events.AsNoTracking().Where(e => e.Id == broken.EventId).Select(e => e.Sha256).FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
            problems.Insert(0, new FixityFinding(stored ?? string.Empty, ChainBroken, "event", null, null, $"event {broken.EventId}", broken.Reason));
        }

        string walked = chain.From is { } checkpoint ? $"from the last audit's checkpoint, {checkpoint}, on" : "the whole chain";
        EventLog.Add(db, EventTypes.FixityCheck, agent, ChainObjectType, chain.From is null ? WholeChain : ChainSinceCheckpoint, chain.Intact ? Ok : ChainBroken,
            chain.FirstBreak is { } b ? $"Walked {walked}. First broken link: {b.Reason}" : $"Walked {walked}: {chain.Events} event(s) chained; head {chain.Head?.ToString() ?? "none"}.");

        problems.AddRange(await CrossCheckCapturesAsync(collectionId, recorded, cancellation).ConfigureAwait(false));
        problems.AddRange(await UnrecordedFilesAsync(collectionId, recorded, places, cancellation).ConfigureAwait(false));
        foreach (var finding in problems.Where(p => p.Problem is Contradiction or Unrecorded or Unreferenced))
        {
            EventLog.Add(db, EventTypes.FixityCheck, agent, finding.Problem == Unrecorded ? "file" : "object", finding.Sha256, finding.Problem, $"{finding.Kind} {finding.File}: {finding.Detail}");
        }

        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        var headAfter = await EventChain.HeadAsync(db, cancellation).ConfigureAwait(false);
        return new FixityReport(objects.Count, good, problems, started, db.Clock.GetUtcNow(), chain, headAfter);
    }

    /// <summary>How many of the audit's per-object events are appended (and committed) at a time.</summary>
    private const int EventsPerSave = 500;

    /// <summary>How many stored files are hashed ahead at a time.</summary>
    private const int HashBatchSize = 64;

    /// <summary>What the store holds under an object's name: whether the file is there, its SHA-256 and its size.</summary>
    private readonly record struct FileFacts(bool Exists, string? Sha256, long Size);

    /// <summary>Hashes every object's file, batch after batch, telling each batch's end; a failure is told to the batches left.</summary>
    private void HashAll(List<Entities.StoredObject> objects, FileFacts[] found, TaskCompletionSource[] hashed, CancellationToken cancellation)
    {
        for (int k = 0; k < hashed.Length; k++)
        {
            try
            {
                HashBatch(objects, k * HashBatchSize, found, cancellation);
                hashed[k].SetResult();
            }
            catch (Exception caught)
            {
                // A file that cannot be read fails the audit with its own error, not the parallel loop's wrapper.
                var e = caught is AggregateException { InnerExceptions.Count: > 0 } all ? all.InnerExceptions[0] : caught;
                for (int rest = k; rest < hashed.Length; rest++)
                {
                    if (e is OperationCanceledException)
                    {
                        hashed[rest].TrySetCanceled(cancellation);
                    }
                    else
                    {
                        hashed[rest].TrySetException(e);
                    }
                }

                return;
            }
        }
    }

    /// <summary>Hashes the next batch of objects' files from <paramref name="first"/>, as many at once as there are cores.</summary>
    private void HashBatch(List<Entities.StoredObject> objects, int first, FileFacts[] found, CancellationToken cancellation)
    {
        int end = Math.Min(objects.Count, first + HashBatchSize);
        var options = new ParallelOptions { MaxDegreeOfParallelism = Environment.ProcessorCount, CancellationToken = cancellation };
        Parallel.For(first, end, options, k =>
        {
            var facts = store.MeasureStored(objects[k].Sha256, cancellation);
            found[k] = facts is null ? new FileFacts(false, null, 0) : new FileFacts(true, facts.Sha256, facts.Length);
        });
    }

    /// <summary>Files in the store named like objects that no object row names (found at start and by the audit; never moved).</summary>
    public static async Task<IReadOnlyList<string>> UnrecordedNamesAsync(ArchiveDbContext db, ContentStore store, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        ArgumentNullException.ThrowIfNull(store);
        var known = (await db.Objects.AsNoTracking().Select(o => o.Sha256).ToListAsync(cancellation).ConfigureAwait(false)).ToHashSet(StringComparer.Ordinal);
        return [.. store.EnumerateHashes().Where(h => !known.Contains(h)).Order(StringComparer.Ordinal)];
    }

    /// <summary>
    /// Every capture's row, its object row and its ingest event (the last "N bytes, SHA-256 H" in its detail, after
    /// the file name) must say the same SHA-256 and size (the file itself is
    /// checked against the object row above); any disagreement names the capture.
    /// </summary>
    private async Task<List<FixityFinding>> CrossCheckCapturesAsync(int? collectionId, Dictionary<string, Entities.StoredObject> recorded, CancellationToken cancellation)
    {
        var findings = new List<FixityFinding>();
        var captures = await ArchiveDatabase.ListAsync(db, db.Captures.AsNoTracking()
            .Where(c => collectionId == null || c.Item!.CollectionId == collectionId)
            .OrderBy(c => c.Id)
            .Select(c => new { c.Id, c.Sha256, c.Size, c.OriginalFileName, c.Item!.AccessionNumber, Collection = c.Item.Collection!.Name }), cancellation).ConfigureAwait(false);
        var ingests = await ArchiveDatabase.ListAsync(db, db.Events.AsNoTracking()
            .Where(e => e.EventType == EventTypes.Ingest && e.ObjectType == "capture" && (e.Outcome == "success" || e.Outcome == "linked"))
            .OrderBy(e => e.Id)
            .Select(e => new { e.ObjectId, e.Detail }), cancellation).ConfigureAwait(false);
        var firstIngest = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (var e in ingests)
        {
            firstIngest.TryAdd(e.ObjectId, e.Detail);
        }

        foreach (var c in captures)
        {
            var said = new List<string>();
            string id = c.Id.ToString(System.Globalization.CultureInfo.InvariantCulture);
            if (!recorded.TryGetValue(c.Sha256, out var stored))
            {
                said.Add($"no object row names its SHA-256 {c.Sha256}");
            }
            else if (stored.Size != c.Size)
            {
                said.Add($"its row says {c.Size} bytes, its object row {stored.Size}");
            }

            if (!firstIngest.TryGetValue(id, out var detail))
            {
                said.Add("the event log holds no ingest event for it");
            }
            else if (IngestFacts().Match(detail) is not { Success: true } facts)
            {
                said.Add("its ingest event does not state a size and SHA-256");
            }
            else
            {
                if (facts.Groups["sha"].Value != c.Sha256)
                {
                    said.Add($"it was ingested with SHA-256 {facts.Groups["sha"].Value}, but its row now says {c.Sha256}");
                }

                if (facts.Groups["size"].Value != c.Size.ToString(System.Globalization.CultureInfo.InvariantCulture))
                {
                    said.Add($"it was ingested with {facts.Groups["size"].Value} bytes, but its row now says {c.Size}");
                }
            }

            if (said.Count > 0)
            {
                findings.Add(new FixityFinding(c.Sha256, Contradiction, "original", c.Collection, c.AccessionNumber, $"capture {id} '{c.OriginalFileName}'",
                    $"Capture {id}: {string.Join("; ", said)}."));
            }
        }

        return findings;
    }

    private async Task<List<FixityFinding>> UnrecordedFilesAsync(int? collectionId, Dictionary<string, Entities.StoredObject> recorded, Dictionary<string, List<Place>> places, CancellationToken cancellation)
    {
        var findings = new List<FixityFinding>();
        foreach (var name in store.EnumerateHashes().Where(h => !recorded.ContainsKey(h)).Order(StringComparer.Ordinal).ToList())
        {
            var uses = places.GetValueOrDefault(name);
            if (collectionId is not null && uses is null)
            {
                continue;
            }

            var facts = store.MeasureStored(name, cancellation);
            string actual = facts?.Sha256 ?? "(gone)";
            long size = facts?.Length ?? 0;
            string detail = $"The file {store.RelativePath(name)} ({size} bytes, SHA-256 {actual}{(actual == name ? ", as its name says" : ", not what its name says")}) is in the store, but no object row names it; it was left where it is.";
            if (uses is null)
            {
                findings.Add(new FixityFinding(actual, Unrecorded, "file", null, null, store.RelativePath(name), detail));
            }
            else
            {
                findings.AddRange(uses.Select(u => new FixityFinding(actual, Unrecorded, u.Kind, u.Collection, u.Item, u.File, detail)));
            }
        }

        return findings;
    }

    [System.Text.RegularExpressions.GeneratedRegex(@"(?<size>\d+) bytes, SHA-256 (?<sha>[0-9a-f]{64})", System.Text.RegularExpressions.RegexOptions.CultureInvariant | System.Text.RegularExpressions.RegexOptions.RightToLeft)]
    private static partial System.Text.RegularExpressions.Regex IngestFacts();

    private sealed record Place(string Kind, string? Collection, string? Item, int? ItemId, string File);

    private async Task<Dictionary<string, List<Place>>> PlacesAsync(int? collectionId, CancellationToken cancellation)
    {
        var places = new Dictionary<string, List<Place>>(StringComparer.Ordinal);
        void Add(string sha, Place place)
        {
            if (!places.TryGetValue(sha, out var list))
            {
                list = [];
                places.Add(sha, list);
            }

            list.Add(place);
        }

        var captures = await ArchiveDatabase.ListAsync(db, db.Captures.AsNoTracking()
            .Where(c => collectionId == null || c.Item!.CollectionId == collectionId)
            .Select(c => new { c.Sha256, c.Id, c.OriginalFileName, c.ItemId, c.Item!.AccessionNumber, Collection = c.Item.Collection!.Name }), cancellation).ConfigureAwait(false);
        foreach (var c in captures)
        {
            Add(c.Sha256, new Place("original", c.Collection, c.AccessionNumber, c.ItemId, $"capture {c.Id} '{c.OriginalFileName}'"));
        }

        var images = await ArchiveDatabase.ListAsync(db, db.Images.AsNoTracking()
            .Where(i => collectionId == null || i.Item!.CollectionId == collectionId)
            .Select(i => new { i.Sha256, i.Version, i.ItemId, i.Item!.AccessionNumber, Collection = i.Item.Collection!.Name }), cancellation).ConfigureAwait(false);
        foreach (var i in images)
        {
            Add(i.Sha256, new Place("image", i.Collection, i.AccessionNumber, i.ItemId, $"tape image version {i.Version}"));
        }

        var exports = await ArchiveDatabase.ListAsync(db, db.Exports.AsNoTracking(), cancellation).ConfigureAwait(false);
        var itemCollections = (await ArchiveDatabase.ListAsync(db, db.Items.AsNoTracking().Select(i => new { i.Id, i.CollectionId, i.AccessionNumber, Collection = i.Collection!.Name }), cancellation)
            .ConfigureAwait(false)).ToDictionary(i => i.Id);
        var collections = (await ArchiveDatabase.ListAsync(db, db.Collections.AsNoTracking().Select(c => new { c.Id, c.Name }), cancellation).ConfigureAwait(false)).ToDictionary(c => c.Id, c => c.Name);
        foreach (var e in exports)
        {
            int? owner = e.CollectionId ?? (e.ItemId is { } itemId && itemCollections.TryGetValue(itemId, out var ic) ? ic.CollectionId : null);
            if (collectionId is not null && owner != collectionId)
            {
                continue;
            }

            var item = e.ItemId is { } eid ? itemCollections.GetValueOrDefault(eid) : null;
            Add(e.Sha256, new Place(e.Kind, owner is { } o ? collections.GetValueOrDefault(o) : null, item?.AccessionNumber, e.ItemId, $"export {e.Id} '{e.FileName}'"));
        }

        return places;
    }
}
