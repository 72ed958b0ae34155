using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;

namespace TapeVault.Archive.Events;

/// <summary>The last link of the event chain: the newest event's id and SHA-256.</summary>
public sealed record ChainHead(long EventId, string Sha256)
{
    /// <summary>How the head is written in bags, catalogues and by <c>verify</c>: "event 42 sha256:…".</summary>
    public override string ToString() => string.Create(CultureInfo.InvariantCulture, $"event {EventId} sha256:{Sha256}");
}

/// <summary>The first event whose link does not hold, and why.</summary>
public sealed record ChainBreak(long EventId, string Reason);

/// <summary>What a walk along the chain found: how many events, the head, and the first broken link (null when none).</summary>
/// <param name="From">
/// The verified head the walk started after (a checkpoint, docs/event-chain.md): the events up to it were not walked
/// again. Null when the walk started at the first event.
/// </param>
public sealed record ChainReport(int Events, ChainHead? Head, ChainBreak? FirstBreak, ChainHead? From = null)
{
    public bool Intact => FirstBreak is null;
}

/// <summary>
/// The tamper-evident event log (docs/event-chain.md): every event carries the SHA-256 of its canonical content, and
/// that content includes the SHA-256 of the event before it. Editing, removing, inserting or reordering a row behind
/// the archive's back breaks a link that <see cref="VerifyAsync"/> names; a copy of the head kept elsewhere (in every
/// bag and catalogue) also shows when the newest events were cut off or the whole chain was recomputed.
/// </summary>
public static class EventChain
{
    /// <summary>The canonical form's version, written into it so that a later form cannot be confused with this one.</summary>
    public const int Version = 1;

    /// <summary>The event recorded when a database made before the chain had its existing events sealed.</summary>
    public const string SealedEventType = "chain-sealed";

    /// <summary>What the first event names as the one before it.</summary>
    public static readonly string Genesis = new('0', 64);

    /// <summary>
    /// The canonical content of an event: UTF-8 JSON after RFC 8785 (JSON Canonicalization Scheme) for the values it
    /// holds: members sorted by name, no white space, strings with only <c>"</c>, <c>\</c> and U+0000–U+001F escaped
    /// (the short forms \b \f \n \r \t, otherwise \u00xx in lower-case hex), integers in decimal, null for no item,
    /// and the time as "yyyy-MM-ddTHH:mm:ss.fffffffZ" in UTC.
    /// </summary>
    public static byte[] CanonicalBytes(ArchiveEvent e, string previousSha256)
    {
        ArgumentNullException.ThrowIfNull(e);
        ArgumentNullException.ThrowIfNull(previousSha256);
        var writer = CanonicalWriter.ForThisThread;
        writer.Write(e, previousSha256);
        return writer.Written.ToArray();
    }

    /// <summary>SHA-256 (FIPS 180-4) of the canonical content, lower-case hex.</summary>
    public static string HashOf(ArchiveEvent e, string previousSha256)
    {
        Span<byte> hash = stackalloc byte[SHA256.HashSizeInBytes];
        HashInto(e, previousSha256, hash);
        return Convert.ToHexStringLower(hash);
    }

    /// <summary>
    /// Whether <paramref name="expectedSha256"/> is, character for character, the lower-case hex SHA-256 of the event's
    /// canonical content: <see cref="HashOf"/> compared with it, without a string per event (the chain's walk).
    /// </summary>
    public static bool HashMatches(ArchiveEvent e, string previousSha256, string expectedSha256)
    {
        ArgumentNullException.ThrowIfNull(expectedSha256);
        Span<byte> hash = stackalloc byte[SHA256.HashSizeInBytes];
        HashInto(e, previousSha256, hash);
        Span<char> hex = stackalloc char[2 * SHA256.HashSizeInBytes];
        return Convert.TryToHexStringLower(hash, hex, out int written) && hex[..written].SequenceEqual(expectedSha256);
    }

    private static void HashInto(ArchiveEvent e, string previousSha256, Span<byte> hash)
    {
        ArgumentNullException.ThrowIfNull(e);
        ArgumentNullException.ThrowIfNull(previousSha256);
        var writer = CanonicalWriter.ForThisThread;
        writer.Write(e, previousSha256);
        SHA256.HashData(writer.Written, hash);
    }

    /// <summary>
    /// Writes an event's canonical content (see <see cref="CanonicalBytes"/>) as UTF-8 straight into a buffer it keeps
    /// for the next event, one per thread: walking a long chain makes no string or array per event.
    /// </summary>
    private sealed class CanonicalWriter
    {
        [ThreadStatic]
        private static CanonicalWriter? perThread;

        /// <summary>The characters JSON must escape in a string (RFC 8785 / RFC 8259): the quote, the backslash and U+0000–U+001F.</summary>
        private static readonly System.Buffers.SearchValues<char> Escaped = System.Buffers.SearchValues.Create(
            "\"\\\u0000\u0001\u0002\u0003\u0004\u0005\u0006\u0007\b\t\n\u000b\f\r\u000e\u000f\u0010\u0011\u0012\u0013\u0014\u0015\u0016\u0017\u0018\u0019\u001a\u001b\u001c\u001d\u001e\u001f");

        /// <summary>Strict UTF-8: a lone surrogate throws rather than being written as U+FFFD.</summary>
        private static readonly UTF8Encoding Strict = new(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true);

        private byte[] buffer = new byte[1024];
        private int length;

        public static CanonicalWriter ForThisThread => perThread ??= new CanonicalWriter();

        public ReadOnlySpan<byte> Written => buffer.AsSpan(0, length);

        public void Write(ArchiveEvent e, string previous)
        {
            length = 0;
            Ascii("{\"agent\":"u8);
            String(e.Agent);
            Ascii(",\"detail\":"u8);
            String(e.Detail);
            Ascii(",\"eventType\":"u8);
            String(e.EventType);
            Ascii(",\"id\":"u8);
            Number(e.Id);
            Ascii(",\"itemId\":"u8);
            if (e.ItemId is { } item)
            {
                Number(item);
            }
            else
            {
                Ascii("null"u8);
            }

            Ascii(",\"objectId\":"u8);
            String(e.ObjectId);
            Ascii(",\"objectType\":"u8);
            String(e.ObjectType);
            Ascii(",\"occurredUtc\":\""u8);
            Room(32);
            if (!e.OccurredUtc.UtcDateTime.TryFormat(buffer.AsSpan(length), out int written, "yyyy-MM-dd'T'HH:mm:ss.fffffff'Z'", CultureInfo.InvariantCulture))
            {
                throw new InvalidOperationException("An event time did not fit its canonical form.");
            }

            length += written;
            Ascii("\",\"outcome\":"u8);
            String(e.Outcome);
            Ascii(",\"previous\":"u8);
            String(previous);
            Ascii(",\"version\":"u8);
            Number(Version);
            Ascii("}"u8);
        }

        private void Room(int more)
        {
            if (length + more > buffer.Length)
            {
                Array.Resize(ref buffer, Math.Max(buffer.Length * 2, length + more));
            }
        }

        private void Ascii(ReadOnlySpan<byte> text)
        {
            Room(text.Length);
            text.CopyTo(buffer.AsSpan(length));
            length += text.Length;
        }

        private void Number(long value)
        {
            Room(24);
            value.TryFormat(buffer.AsSpan(length), out int written, default, CultureInfo.InvariantCulture);
            length += written;
        }

        private void Utf8(ReadOnlySpan<char> text)
        {
            Room(Strict.GetMaxByteCount(text.Length));
            length += Strict.GetBytes(text, buffer.AsSpan(length));
        }

        /// <summary>A JSON string: the short escapes \b \f \n \r \t, other controls as \u00xx in lower-case hex.</summary>
        private void String(string value)
        {
            Ascii("\""u8);
            ReadOnlySpan<char> rest = value;
            int next;
            while ((next = rest.IndexOfAny(Escaped)) >= 0)
            {
                Utf8(rest[..next]);
                char c = rest[next];
                switch (c)
                {
                    case '"': Ascii("\\\""u8); break;
                    case '\\': Ascii("\\\\"u8); break;
                    case '\b': Ascii("\\b"u8); break;
                    case '\f': Ascii("\\f"u8); break;
                    case '\n': Ascii("\\n"u8); break;
                    case '\r': Ascii("\\r"u8); break;
                    case '\t': Ascii("\\t"u8); break;
                    default:
                        Ascii("\\u00"u8);
                        Room(2);
                        buffer[length++] = (byte)"0123456789abcdef"[c >> 4];
                        buffer[length++] = (byte)"0123456789abcdef"[c & 0xF];
                        break;
                }

                rest = rest[(next + 1)..];
            }

            Utf8(rest);
            Ascii("\""u8);
        }
    }

    /// <summary>The newest event's id and hash; null for an empty log.</summary>
    public static async Task<ChainHead?> HeadAsync(ArchiveDbContext db, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        var last = await db.Events.AsNoTracking().OrderByDescending(e => e.Id).Select(e => new { e.Id, e.Sha256 })
            .FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
        return last is null ? null : new ChainHead(last.Id, last.Sha256 ?? string.Empty);
    }

    /// <summary>Walks the whole log in id order, recomputing every link; stops at the first that does not hold.</summary>
    public static Task<ChainReport> VerifyAsync(ArchiveDbContext db, CancellationToken cancellation = default) =>
        VerifyAsync(db, throughEventId: null, cancellation);

    /// <summary>
    /// Walks the log in id order up to event <paramref name="throughEventId"/> (a head read earlier: what was chained
    /// then, whatever was added since), recomputing every link; stops at the first that does not hold.
    /// </summary>
    public static Task<ChainReport> VerifyAsync(ArchiveDbContext db, long? throughEventId, CancellationToken cancellation = default) =>
        VerifyAsync(db, from: null, throughEventId, cancellation);

    /// <summary>
    /// Walks the log in id order after the verified head <paramref name="from"/> (null: from the first event) up to event
    /// <paramref name="throughEventId"/>, recomputing every link; stops at the first that does not hold. From a head,
    /// the event it names must still be there with its hash, and the first event after it must name that hash: an
    /// edit at or after the head is found, one before it is left to a walk of the whole chain (docs/event-chain.md).
    /// </summary>
    public static async Task<ChainReport> VerifyAsync(ArchiveDbContext db, ChainHead? from, long? throughEventId, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        var events = db.Events.AsNoTracking();
        if (throughEventId is { } through)
        {
            events = events.Where(e => e.Id <= through);
        }

        var walk = new Walk();
        if (from is not null)
        {
            if (await CheckKeptHeadAsync(db, from, cancellation).ConfigureAwait(false) is { } moved)
            {
                return new ChainReport(0, null, new ChainBreak(from.EventId, $"The head an earlier audit verified no longer holds. {moved}"), from);
            }

            walk.StartAfter(from);
            long after = from.EventId;
            events = events.Where(e => e.Id > after);
        }

        // Read in order on this thread, a chunk at a time; each chunk's hashes are recomputed on every core while the
        // next chunk is read. Every link is still checked, in id order, against the event before it.
        Task<ChainBreak?>? checking = null;
        var chunk = new List<ArchiveEvent>(WalkChunk);
        try
        {
            await foreach (var e in ArchiveDatabase.RowsAsync(db, events.OrderBy(e => e.Id), cancellation).ConfigureAwait(false))
            {
                chunk.Add(e);
                if (chunk.Count < WalkChunk)
                {
                    continue;
                }

                if (checking is not null && await checking.ConfigureAwait(false) is { } broken)
                {
                    return new ChainReport(walk.Count, walk.Head, broken, from);
                }

                var full = chunk;
                chunk = new List<ArchiveEvent>(WalkChunk);
                checking = Task.Run(() => walk.Check(full, cancellation), cancellation);
            }
        }
        catch
        {
            // Reading the log failed or was cancelled part way: the check already handed out is waited for, and its own
            // outcome observed, so no hashing outlives the walk; the read's error is the one reported.
            if (checking is not null)
            {
                await Task.WhenAny(checking).ConfigureAwait(false);
                _ = checking.Exception;
            }

            throw;
        }

        if (checking is not null && await checking.ConfigureAwait(false) is { } late)
        {
            return new ChainReport(walk.Count, walk.Head, late, from);
        }

        var last = walk.Check(chunk, cancellation);
        return new ChainReport(walk.Count, walk.Head, last, from);
    }

    /// <summary>How many events the chain's walk reads before handing them to be checked.</summary>
    private const int WalkChunk = 4096;

    /// <summary>Where a walk along the chain stands: the last event whose link held, and how many events it has looked at.</summary>
    private sealed class Walk
    {
        private string previous = Genesis;
        private long previousId;

        public int Count { get; private set; }

        public ChainHead? Head { get; private set; }

        /// <summary>Starts the walk after a verified head instead of at the first event.</summary>
        public void StartAfter(ChainHead head)
        {
            previous = head.Sha256;
            previousId = head.EventId;
            Head = head;
        }

        /// <summary>Checks the next events in id order; returns the first broken link among them, or null.</summary>
        public ChainBreak? Check(List<ArchiveEvent> events, CancellationToken cancellation)
        {
            // Each event's hash over the content and the "previous" it names, on every core; a link holds only when
            // that "previous" is also the hash of the event before it, checked in order below.
            var holds = new bool[events.Count];
            Parallel.For(0, events.Count, new ParallelOptions { CancellationToken = cancellation }, i =>
            {
                var e = events[i];
                holds[i] = e.Sha256 is not null && e.PreviousSha256 is not null && HashMatches(e, e.PreviousSha256, e.Sha256);
            });
            for (int i = 0; i < events.Count; i++)
            {
                var e = events[i];
                Count++;
                string? problem = null;
                if (e.Sha256 is null || e.PreviousSha256 is null)
                {
                    problem = $"Event {e.Id} carries no place in the chain: it was added outside the archive.";
                }
                else if (!string.Equals(e.PreviousSha256, previous, StringComparison.Ordinal))
                {
                    problem = $"Event {e.Id} names {e.PreviousSha256} as the event before it, but {(previousId == 0 ? "the start of the log" : $"event {previousId}")} has {previous}: an event was removed, inserted or reordered here.";
                }
                else if (!holds[i])
                {
                    problem = $"Event {e.Id} ({e.EventType} {e.ObjectType} {e.ObjectId}, {e.OccurredUtc.UtcDateTime:yyyy-MM-dd HH:mm:ss} UTC) does not match its SHA-256 {e.Sha256}: it was edited after it was recorded.";
                }

                if (problem is not null)
                {
                    return new ChainBreak(e.Id, problem);
                }

                previous = e.Sha256!;
                previousId = e.Id;
                Head = new ChainHead(e.Id, e.Sha256!);
            }

            return null;
        }
    }

    /// <summary>Reads a head as bags, catalogues and <c>verify</c> write it ("event 42 sha256:…"); null when it is not one.</summary>
    public static ChainHead? ParseHead(string? text)
    {
        var parts = (text ?? string.Empty).Trim().Split(' ', StringSplitOptions.RemoveEmptyEntries);
        return parts is ["event", var id, var hash]
            && long.TryParse(id, NumberStyles.None, CultureInfo.InvariantCulture, out long eventId) && eventId > 0
            && hash.StartsWith("sha256:", StringComparison.Ordinal) && hash[7..] is { Length: 64 } sha && sha.All(char.IsAsciiHexDigitLower)
            ? new ChainHead(eventId, sha)
            : null;
    }

    /// <summary>
    /// Checks a head kept elsewhere (a bag's, a catalogue's, a noted one) against the log: the event must still be
    /// there with that hash. Returns why not, or null when it is. Finds what the chain alone cannot: the newest events
    /// cut off, or the chain recomputed after an edit.
    /// </summary>
    public static async Task<string?> CheckKeptHeadAsync(ArchiveDbContext db, ChainHead kept, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        ArgumentNullException.ThrowIfNull(kept);
        var stored = await db.Events.AsNoTracking().Where(e => e.Id == kept.EventId).Select(e => new { e.Sha256 }).FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
        if (stored is null)
        {
            return $"The kept head {kept} names an event the log no longer holds: the history was cut off after it or rewritten.";
        }

        return stored.Sha256 == kept.Sha256
            ? null
            : $"Event {kept.EventId} now has SHA-256 {stored.Sha256}, not {kept.Sha256} as the kept head says: the history up to it was rewritten.";
    }

    /// <summary>
    /// Gives the events of a database made before the chain their hashes (once: only when no event has one yet), then
    /// records that it did so as an event of its own. Returns how many events were sealed.
    /// </summary>
    public static async Task<int> SealLegacyAsync(ArchiveDbContext db, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        if (await db.Events.AnyAsync(e => e.Sha256 != null, cancellation).ConfigureAwait(false)
            || !await db.Events.AnyAsync(cancellation).ConfigureAwait(false))
        {
            return 0;
        }

        await using var transaction = await db.Database.BeginTransactionAsync(cancellation).ConfigureAwait(false);
        var events = await db.Events.AsNoTracking().OrderBy(e => e.Id).ToListAsync(cancellation).ConfigureAwait(false);
        if (events.Any(e => e.Sha256 is not null))
        {
            return 0;
        }

        string previous = Genesis;
        foreach (var e in events)
        {
            string sha = HashOf(e, previous);
            await db.Database.ExecuteSqlAsync(
                $"UPDATE \"Events\" SET \"Sha256\" = {sha}, \"PreviousSha256\" = {previous} WHERE \"Id\" = {e.Id} AND \"Sha256\" IS NULL",
                cancellation).ConfigureAwait(false);
            previous = sha;
        }

        EventLog.Add(db, SealedEventType, EventLog.SystemAgent, "event-log", "chain", "success",
            string.Create(CultureInfo.InvariantCulture,
                $"The {events.Count} event(s) recorded before the log was chained (ids {events[0].Id} to {events[^1].Id}) were given their hashes; the chain's head was then event {events[^1].Id} sha256:{previous}."));
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        await transaction.CommitAsync(cancellation).ConfigureAwait(false);
        return events.Count;
    }

    /// <summary>
    /// Gives the events about to be inserted their ids and links, after the newest stored event. The caller holds the
    /// database's write lock (a transaction begun IMMEDIATE, as every EF Core transaction on SQLite is), so no other
    /// writer can add an event between reading the head and inserting.
    /// </summary>
    internal static void Link(IReadOnlyList<ArchiveEvent> added, long headId, string? headSha256)
    {
        string previous = headSha256 ?? Genesis;
        long id = headId;
        foreach (var e in added)
        {
            e.Id = ++id;
            e.Agent = Scrub(e.Agent);
            e.EventType = Scrub(e.EventType);
            e.ObjectType = Scrub(e.ObjectType);
            e.ObjectId = Scrub(e.ObjectId);
            e.Outcome = Scrub(e.Outcome);
            e.Detail = Scrub(e.Detail);
            e.OccurredUtc = StoredInstant(e.OccurredUtc);
            e.PreviousSha256 = previous;
            e.Sha256 = HashOf(e, previous);
            previous = e.Sha256;
        }
    }

    /// <summary>
    /// The instant as the database gives it back: the column keeps UTC ticks to 1000-tick (0.1 ms) steps (EF Core's
    /// DateTimeOffsetToBinaryConverter), so the hash is computed over what is read back, not over finer ticks.
    /// </summary>
    internal static DateTimeOffset StoredInstant(DateTimeOffset value) =>
        new(value.UtcTicks - (value.UtcTicks % 1000), TimeSpan.Zero);

    /// <summary>A string as SQLite gives it back: UTF-8 cannot hold a lone surrogate, which becomes U+FFFD on the way in.</summary>
    private static string Scrub(string value) => Encoding.UTF8.GetString(Encoding.UTF8.GetBytes(value));
}
