using System.Globalization;
using System.Text;
using System.Text.Json;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Events;
using TapeVault.Archive.Ingest;
using TapeVault.Archive.Storage;
using TapeVault.Core.Image;

namespace TapeVault.Archive.Export;

/// <summary>What a bag holds: one item, or every item of a collection.</summary>
public sealed record BagScope(int? ItemId, int? CollectionId)
{
    public static BagScope Item(int id) => new(id, null);

    public static BagScope OfCollection(int id) => new(null, id);
}

/// <param name="ChainHead">The event chain's head when the bag was made (before the bag's own export events).</param>
public sealed record BagResult(string Name, int PayloadFiles, long PayloadBytes, IReadOnlyList<string> ExternalIdentifiers, IReadOnlyList<int> ItemIds, ChainHead? ChainHead);

/// <summary>
/// Writes a bag after RFC 8493 (BagIt 1.0): bagit.txt, bag-info.txt, the payload under data/ (per item: the originals,
/// the tape images, the item's metadata and event history as JSON), manifest-sha256.txt and tagmanifest-sha256.txt.
/// Manifest lines are "hash, two spaces, path", which RFC 8493 allows and GNU sha256sum -c reads as they are. The head
/// of the event chain is written as bag-info's Event-Chain-Head and as the tag file event-chain-head.txt. Writing a bag
/// records nothing: whoever keeps the finished bag records its export events (<see cref="RecordExported"/>) with it.
/// </summary>
public sealed class BagExport(ArchiveDbContext db, ContentStore store, ArchiveOptions options)
{
    /// <summary>The tag file that holds the event chain's head (listed in tagmanifest-sha256.txt).</summary>
    public const string ChainHeadTagFile = "event-chain-head.txt";

    private static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web) { WriteIndented = true };

    public async Task<BagResult> WriteAsync(BagScope scope, BagSink sink, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(scope);
        ArgumentNullException.ThrowIfNull(sink);
        var itemIds = await ItemIdsAsync(scope, cancellation).ConfigureAwait(false);
        var head = await EventChain.HeadAsync(db, cancellation).ConfigureAwait(false);
        string headText = head?.ToString() ?? "none (the event log is empty)";
        var manifest = new List<(string Hash, string Path)>();
        long bytes = 0;
        var identifiers = new List<string>();
        var folders = new HashSet<string>(StringComparer.Ordinal);
        foreach (var itemId in itemIds)
        {
            var dossier = await ItemDossier.LoadAsync(db, store, itemId, cancellation).ConfigureAwait(false);
            string folder = $"data/{PathPart(dossier.Item.AccessionNumber)}";
            if (!folders.Add(folder))
            {
                // Two accession numbers that differ only in characters a path cannot hold.
                folder = $"{folder}-item{dossier.Item.Id}";
                folders.Add(folder);
            }

            identifiers.Add(dossier.Item.AccessionNumber);
            var stored = dossier.Captures
                .Select(c => (c.Sha256, Path: $"{folder}/originals/capture-{c.Id}-{PathPart(c.OriginalFileName)}", What: $"the original of capture {c.Id}"))
                .Concat(dossier.Images.Select(i => (i.Sha256, Path: $"{folder}/images/{PathPart(dossier.Item.AccessionNumber)}-v{i.Version}{TapeImageContainer.Extension}", What: $"tape image version {i.Version}")));
            foreach (var (sha256, path, what) in stored)
            {
                manifest.Add((sha256, path));
                bytes += await CopyStoredAsync(sink, sha256, path, $"Item {dossier.Item.AccessionNumber}: {what}", cancellation).ConfigureAwait(false);
            }

            foreach (var (fileName, value) in new[] { ("item.json", dossier.ToMetadata()), ("events.json", dossier.ToEventHistory()) })
            {
                var path = $"{folder}/{fileName}";
                var (hash, length) = await sink.WriteAsync(path, s => JsonSerializer.SerializeAsync(s, value, Json, cancellation), cancellation).ConfigureAwait(false);
                manifest.Add((hash, path));
                bytes += length;
            }
        }

        var tags = new List<(string Hash, string Path)>();
        tags.Add((await WriteTextAsync(sink, "bagit.txt", "BagIt-Version: 1.0\nTag-File-Character-Encoding: UTF-8\n", cancellation).ConfigureAwait(false), "bagit.txt"));
        var info = new StringBuilder();
        var organisation = await OrganisationSettings.CurrentAsync(db, options, cancellation).ConfigureAwait(false);
        foreach (var (label, value) in organisation.BagInfo())
        {
            info.Append(CultureInfo.InvariantCulture, $"{label}: {value}\n");
        }

        info
            .Append(CultureInfo.InvariantCulture, $"Bagging-Date: {db.Clock.GetUtcNow():yyyy-MM-dd}\n")
            .Append(CultureInfo.InvariantCulture, $"Payload-Oxum: {bytes}.{manifest.Count}\n")
            .Append(CultureInfo.InvariantCulture, $"Bag-Software-Agent: TapeVault {Core.Decoding.CaptureDecoder.CodeVersion}\n")
            .Append(CultureInfo.InvariantCulture, $"Event-Chain-Head: {headText}\n");
        foreach (var id in identifiers)
        {
            info.Append(CultureInfo.InvariantCulture, $"External-Identifier: {OneLine(id)}\n");
        }

        tags.Add((await WriteTextAsync(sink, "bag-info.txt", info.ToString(), cancellation).ConfigureAwait(false), "bag-info.txt"));
        tags.Add((await WriteTextAsync(sink, ChainHeadTagFile, $"{headText}\n", cancellation).ConfigureAwait(false), ChainHeadTagFile));
        var manifestText = string.Concat(manifest.OrderBy(m => m.Path, StringComparer.Ordinal).Select(m => $"{m.Hash}  {m.Path}\n"));
        tags.Add((await WriteTextAsync(sink, "manifest-sha256.txt", manifestText, cancellation).ConfigureAwait(false), "manifest-sha256.txt"));
        await WriteTextAsync(sink, "tagmanifest-sha256.txt", string.Concat(tags.Select(t => $"{t.Hash}  {t.Path}\n")), cancellation).ConfigureAwait(false);

        string name = scope.ItemId is not null ? $"bag-{PathPart(identifiers[0])}" : $"bag-collection-{scope.CollectionId}";
        return new BagResult(name, manifest.Count, bytes, identifiers, itemIds, head);
    }

    /// <summary>
    /// Adds the export events of a finished bag to the context, unsaved, so they are committed in the same transaction
    /// as whatever records the bag as kept (an export row, or nothing but the events once the bag is in its folder).
    /// </summary>
    public void RecordExported(BagResult bag, string agent, string where)
    {
        ArgumentNullException.ThrowIfNull(bag);
        foreach (var itemId in bag.ItemIds)
        {
            EventLog.Add(db, EventTypes.Export, agent, "item", itemId.ToString(CultureInfo.InvariantCulture), "success",
                $"Exported in bag '{bag.Name}' ({where}): {bag.PayloadFiles} payload file(s), {bag.PayloadBytes} bytes; event chain head {bag.ChainHead?.ToString() ?? "none"}.", itemId);
        }
    }

    /// <summary>A file or folder name made safe for a bag path and for manifest lines (no separators, no control characters, no %, no hidden characters).</summary>
    public static string PathPart(string name)
    {
        ArgumentNullException.ThrowIfNull(name);
        var chars = name.Select(c => char.IsControl(c) || c is '/' or '\\' or '%' or ':' or '*' or '?' or '"' or '<' or '>' or '|' ? '_' : c).ToArray();
        // Hidden and direction-changing characters are written out ("[U+202E]"), so a path reads as what it is.
        var cleaned = Core.Text.VisibleNames.MakeVisible(new string(chars)).Trim().Trim('.');
        cleaned = cleaned.Replace("..", "_", StringComparison.Ordinal);
        return cleaned.Length == 0 ? "_" : cleaned.Length > 120 ? cleaned[..120] : cleaned;
    }

    /// <summary>Copies a stored object into the bag, checking on the way that it still has its SHA-256; returns its length.</summary>
    private async Task<long> CopyStoredAsync(BagSink sink, string sha256, string path, string what, CancellationToken cancellation)
    {
        if (!store.Exists(sha256))
        {
            throw new ArchiveConflictException($"{what} is missing from the store; run a fixity audit before exporting.");
        }

        var (hash, length) = await sink.WriteAsync(path, async s =>
        {
            await using var source = store.OpenRead(sha256);
            await source.CopyToAsync(s, cancellation).ConfigureAwait(false);
        }, cancellation).ConfigureAwait(false);
        return hash == sha256
            ? length
            : throw new ArchiveConflictException($"{what} no longer matches its SHA-256; run a fixity audit before exporting.");
    }

    private async Task<List<int>> ItemIdsAsync(BagScope scope, CancellationToken cancellation)
    {
        if (scope.ItemId is { } itemId)
        {
            if (!await db.Items.AnyAsync(i => i.Id == itemId, cancellation).ConfigureAwait(false))
            {
                throw new ArchiveNotFoundException($"There is no item {itemId}.");
            }

            return [itemId];
        }

        if (scope.CollectionId is not { } collectionId || !await db.Collections.AnyAsync(c => c.Id == collectionId, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveNotFoundException($"There is no collection {scope.CollectionId}.");
        }

        var ids = await db.Items.AsNoTracking().Where(i => i.CollectionId == collectionId).OrderBy(i => i.AccessionNumber).Select(i => i.Id).ToListAsync(cancellation).ConfigureAwait(false);
        return ids.Count == 0 ? throw new ArchiveInputException("The collection has no items to export.") : ids;
    }

    private static async Task<string> WriteTextAsync(BagSink sink, string path, string text, CancellationToken cancellation)
    {
        var bytes = new UTF8Encoding(encoderShouldEmitUTF8Identifier: false).GetBytes(text);
        var (hash, _) = await sink.WriteAsync(path, s => s.WriteAsync(bytes, cancellation).AsTask(), cancellation).ConfigureAwait(false);
        return hash;
    }

    private static string OneLine(string value) => string.Join(' ', value.Split(['\r', '\n'], StringSplitOptions.RemoveEmptyEntries)).Trim();
}
