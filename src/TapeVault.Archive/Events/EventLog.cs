using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;

namespace TapeVault.Archive.Events;

/// <summary>The event types the archive records (after PREMIS's event types, in our own words).</summary>
public static class EventTypes
{
    public const string Ingest = "ingest";
    public const string Decode = "decode";
    public const string Merge = "merge";
    public const string Export = "export";
    public const string FixityCheck = "fixity-check";
    public const string Account = "account";
    public const string Create = "create";
    public const string Settings = "settings";
}

/// <summary>Adds events to the context; they are written with the change they describe, in the same transaction.</summary>
public static class EventLog
{
    public const string SystemAgent = "system";

    public static ArchiveEvent Add(
        ArchiveDbContext db,
        string eventType,
        string agent,
        string objectType,
        string objectId,
        string outcome,
        string detail = "",
        int? itemId = null)
    {
        ArgumentNullException.ThrowIfNull(db);
        var entry = New(db, eventType, agent, objectType, objectId, outcome, detail, itemId);
        db.Events.Add(entry);
        return entry;
    }

    /// <summary>An event stamped with the context's clock, not yet added (for <see cref="AppendAsync"/>).</summary>
    public static ArchiveEvent New(
        ArchiveDbContext db,
        string eventType,
        string agent,
        string objectType,
        string objectId,
        string outcome,
        string detail = "",
        int? itemId = null)
    {
        ArgumentNullException.ThrowIfNull(db);
        return new ArchiveEvent
        {
            EventType = eventType,
            OccurredUtc = db.Clock.GetUtcNow(),
            Agent = string.IsNullOrWhiteSpace(agent) ? SystemAgent : agent,
            ObjectType = objectType,
            ObjectId = objectId,
            Outcome = outcome,
            Detail = detail,
            ItemId = itemId,
        };
    }

    /// <summary>
    /// Appends many events at once (a fixity audit's one per stored object) and commits them, chained by the same code
    /// as <see cref="ArchiveDbContext.SaveChangesAsync(bool, CancellationToken)"/> chains them (<see cref="ChainAsync"/>):
    /// under the write lock, after the head read then, each linked to the one before. They are inserted with one
    /// parameterised statement (<see cref="ArchiveDatabase.InsertRowsAsync"/>) instead of EF Core's change tracking.
    /// </summary>
    public static async Task AppendAsync(ArchiveDbContext db, IReadOnlyList<ArchiveEvent> events, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        ArgumentNullException.ThrowIfNull(events);
        if (events.Count == 0)
        {
            return;
        }

        await ChainAsync(db, events, synchronously: false, async token => await ArchiveDatabase.InsertRowsAsync(db, events, withKey: true, token).ConfigureAwait(false), cancellation)
            .ConfigureAwait(false);
    }

    /// <summary>
    /// The one way events join the chain, for the context's saves and for <see cref="AppendAsync"/> alike: inside a
    /// transaction (the caller's, or one of its own committed at the end) it takes the write lock on the log, reads
    /// the head, links <paramref name="added"/> after it in order (<see cref="EventChain.Link"/>), and calls
    /// <paramref name="insert"/> to write them. Run <paramref name="synchronously"/> (for
    /// <see cref="ArchiveDbContext.SaveChanges(bool)"/>, whose insert is synchronous too), every step completes before
    /// it returns.
    /// </summary>
    internal static async ValueTask<T> ChainAsync<T>(
        ArchiveDbContext db,
        IReadOnlyList<ArchiveEvent> added,
        bool synchronously,
        Func<CancellationToken, ValueTask<T>> insert,
        CancellationToken cancellation)
    {
        var own = db.Database.CurrentTransaction is not null ? null
            : synchronously ? db.Database.BeginTransaction()
            : await ArchiveDatabase.BeginWriteAsync(db, cancellation).ConfigureAwait(false);
        try
        {
            // The head is read and the new events inserted under one write lock, so the chain cannot fork.
            var newest = db.Events.AsNoTracking().OrderByDescending(e => e.Id).Select(e => new { e.Id, e.Sha256 });
            if (synchronously)
            {
                ArchiveDatabase.LockEventsForAppend(db);
            }
            else
            {
                await ArchiveDatabase.LockEventsForAppendAsync(db, cancellation).ConfigureAwait(false);
            }

            var head = synchronously ? newest.FirstOrDefault() : await newest.FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
            EventChain.Link(added, head?.Id ?? 0, head?.Sha256);
            var result = await insert(cancellation).ConfigureAwait(false);
            if (own is not null)
            {
                if (synchronously)
                {
                    own.Commit();
                }
                else
                {
                    await own.CommitAsync(cancellation).ConfigureAwait(false);
                }
            }

            return result;
        }
        finally
        {
            if (own is not null)
            {
                if (synchronously)
                {
                    own.Dispose();
                }
                else
                {
                    await own.DisposeAsync().ConfigureAwait(false);
                }
            }
        }
    }
}
