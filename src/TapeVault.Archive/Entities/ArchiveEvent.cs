namespace TapeVault.Archive.Entities;

/// <summary>
/// One line of the append-only event log (after the PREMIS event model: type, date, agent, object, outcome).
/// Rows are only ever added: the context refuses changes, and database triggers refuse UPDATE and DELETE. Each row
/// carries its place in a hash chain (docs/event-chain.md), so an edit made behind the archive's back is found.
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

    /// <summary>SHA-256 (lower-case hex) of the event's canonical content, which includes <see cref="PreviousSha256"/>.</summary>
    public string? Sha256 { get; set; }

    /// <summary>The <see cref="Sha256"/> of the event before this one, or 64 zeros for the first event.</summary>
    public string? PreviousSha256 { get; set; }

    /// <summary>The order events were added in within one unit of work (not stored): their order in the chain.</summary>
    internal long Sequence { get; } = Interlocked.Increment(ref nextSequence);

    private static long nextSequence;
}
