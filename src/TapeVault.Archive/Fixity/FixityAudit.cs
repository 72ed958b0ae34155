using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Storage;

namespace TapeVault.Archive.Fixity;

/// <summary>One place a damaged or missing object is used: which collection, item and file it is.</summary>
public sealed record FixityFinding(string Sha256, string Problem, string Kind, string? Collection, string? Item, string File, string Detail);

public sealed record FixityReport(int Checked, int Good, IReadOnlyList<FixityFinding> Problems, DateTimeOffset StartedUtc, DateTimeOffset FinishedUtc)
{
    public bool AllGood => Problems.Count == 0;
}

/// <summary>How far an audit has got, for progress bars.</summary>
public readonly record struct FixityProgress(int Done, int Total);

/// <summary>
/// Re-hashes every stored object (originals, images, exports) against the SHA-256 the archive recorded, records one
/// fixity-check event per object, and reports each mismatch or missing file by collection, item and file. It only
/// reads: nothing is repaired, replaced or removed.
/// </summary>
public sealed class FixityAudit(ArchiveDbContext db, ContentStore store)
{
    public const string Ok = "ok";
    public const string Mismatch = "mismatch";
    public const string Missing = "missing";

    public async Task<FixityReport> RunAsync(int? collectionId, string agent, IProgress<FixityProgress>? progress = null, CancellationToken cancellation = default)
    {
        var started = DateTimeOffset.UtcNow;
        if (collectionId is { } id && !await db.Collections.AnyAsync(c => c.Id == id, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveNotFoundException($"There is no collection {id}.");
        }

        var places = await PlacesAsync(collectionId, cancellation).ConfigureAwait(false);
        var objects = await db.Objects.AsNoTracking().OrderBy(o => o.Sha256).ToListAsync(cancellation).ConfigureAwait(false);
        if (collectionId is not null)
        {
            objects = [.. objects.Where(o => places.ContainsKey(o.Sha256))];
        }

        var problems = new List<FixityFinding>();
        int good = 0;
        for (int i = 0; i < objects.Count; i++)
        {
            var stored = objects[i];
            string outcome;
            string detail;
            var path = store.PathOf(stored.Sha256);
            if (!File.Exists(path))
            {
                outcome = Missing;
                detail = $"The file {path} is gone.";
            }
            else
            {
                string? actual = await store.HashStoredAsync(stored.Sha256, cancellation).ConfigureAwait(false);
                long size = new FileInfo(path).Length;
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

            var uses = places.GetValueOrDefault(stored.Sha256) ?? [new Place(stored.Kind.ToString().ToLowerInvariant(), null, null, null, "(not referenced)")];
            if (outcome == Ok)
            {
                good++;
            }
            else
            {
                problems.AddRange(uses.Select(u => new FixityFinding(stored.Sha256, outcome, u.Kind, u.Collection, u.Item, u.File, detail)));
            }

            EventLog.Add(db, EventTypes.FixityCheck, agent, "object", stored.Sha256, outcome,
                $"{uses[0].Kind} {uses[0].File}{(uses.Count > 1 ? $" (and {uses.Count - 1} more use(s))" : string.Empty)}: {detail}", uses[0].ItemId);
            if (i % 100 == 99)
            {
                await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
            }

            progress?.Report(new FixityProgress(i + 1, objects.Count));
        }

        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        return new FixityReport(objects.Count, good, problems, started, DateTimeOffset.UtcNow);
    }

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

        var captures = await db.Captures.AsNoTracking()
            .Where(c => collectionId == null || c.Item!.CollectionId == collectionId)
            .Select(c => new { c.Sha256, c.Id, c.OriginalFileName, c.ItemId, c.Item!.AccessionNumber, Collection = c.Item.Collection!.Name })
            .ToListAsync(cancellation).ConfigureAwait(false);
        foreach (var c in captures)
        {
            Add(c.Sha256, new Place("original", c.Collection, c.AccessionNumber, c.ItemId, $"capture {c.Id} '{c.OriginalFileName}'"));
        }

        var images = await db.Images.AsNoTracking()
            .Where(i => collectionId == null || i.Item!.CollectionId == collectionId)
            .Select(i => new { i.Sha256, i.Version, i.ItemId, i.Item!.AccessionNumber, Collection = i.Item.Collection!.Name })
            .ToListAsync(cancellation).ConfigureAwait(false);
        foreach (var i in images)
        {
            Add(i.Sha256, new Place("image", i.Collection, i.AccessionNumber, i.ItemId, $"tape image version {i.Version}"));
        }

        var exports = await db.Exports.AsNoTracking().ToListAsync(cancellation).ConfigureAwait(false);
        var itemCollections = await db.Items.AsNoTracking().Select(i => new { i.Id, i.CollectionId, i.AccessionNumber, Collection = i.Collection!.Name })
            .ToDictionaryAsync(i => i.Id, cancellation).ConfigureAwait(false);
        var collections = await db.Collections.AsNoTracking().ToDictionaryAsync(c => c.Id, c => c.Name, cancellation).ConfigureAwait(false);
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
