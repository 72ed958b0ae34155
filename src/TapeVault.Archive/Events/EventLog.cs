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
        var entry = new ArchiveEvent
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
        db.Events.Add(entry);
        return entry;
    }
}
