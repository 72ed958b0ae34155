namespace TapeVault.Archive.Entities;

/// <summary>
/// One line of the append-only event log (after the PREMIS event model: type, date, agent, object, outcome).
/// Rows are only ever added: the context refuses changes, and database triggers refuse UPDATE and DELETE.
/// </summary>
public sealed class ArchiveEvent
{
    public long Id { get; set; }

    /// <summary>ingest, decode, merge, export, fixity-check, account.</summary>
    public required string EventType { get; set; }

    public DateTimeOffset OccurredUtc { get; set; }

    /// <summary>Who or what acted: a user name, or "system".</summary>
    public required string Agent { get; set; }

    /// <summary>collection, item, capture, run, image, user, object.</summary>
    public required string ObjectType { get; set; }

    public required string ObjectId { get; set; }

    /// <summary>The item the event concerns, when there is one, so that an item's history is one query.</summary>
    public int? ItemId { get; set; }

    /// <summary>success, failure, linked, …</summary>
    public required string Outcome { get; set; }

    public string Detail { get; set; } = string.Empty;
}
