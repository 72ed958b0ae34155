using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Storage;

namespace TapeVault.Archive.Export;

/// <summary>Bags and catalogues made in the web app: written into the content store and recorded, so they can be downloaded and audited.</summary>
public sealed class ExportStore(ArchiveDbContext db, ContentStore store, BagExport bags, CataloguePublisher catalogues)
{
    public async Task<ExportRecord> StoreBagAsync(BagScope scope, string agent, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(scope);
        BagResult? result = null;
        string bagName = scope.ItemId is { } itemId
            ? $"bag-{BagExport.PathPart(await db.Items.Where(i => i.Id == itemId).Select(i => i.AccessionNumber).FirstOrDefaultAsync(cancellation).ConfigureAwait(false) ?? throw new ArchiveNotFoundException($"There is no item {itemId}."))}"
            : $"bag-collection-{scope.CollectionId}";
        using var staged = await store.StageAsync(async stream =>
        {
            await using var sink = new ZipBagSink(stream, bagName);
            result = await bags.WriteAsync(scope, sink, cancellation).ConfigureAwait(false);
        }, cancellation).ConfigureAwait(false);
        var bag = result!;
        return await RecordAsync(staged, "bag", scope.CollectionId, scope.ItemId, $"{bag.Name}.zip", agent,
            () => bags.RecordExported(bag, agent, "kept in the archive for download"), cancellation).ConfigureAwait(false);
    }

    public async Task<ExportRecord> StoreCatalogueAsync(int collectionId, string agent, CancellationToken cancellation = default)
    {
        int files = 0;
        using var staged = await store.StageAsync(async stream => files = await catalogues.PublishZipAsync(collectionId, stream, cancellation).ConfigureAwait(false), cancellation).ConfigureAwait(false);
        string fileName = $"catalogue-collection-{collectionId}.zip";
        var itemIds = await catalogues.ItemIdsAsync(collectionId, cancellation).ConfigureAwait(false);
        return await RecordAsync(staged, "catalogue", collectionId, null, fileName, agent,
            () => catalogues.RecordPublished(collectionId, itemIds, $"Catalogue published as '{fileName}', kept in the archive for download ({files} files).", agent), cancellation).ConfigureAwait(false);
    }

    private async Task<ExportRecord> RecordAsync(StagedObject staged, string kind, int? collectionId, int? itemId, string fileName, string agent, Action recordEvents, CancellationToken cancellation)
    {
        bool known = await db.Objects.AnyAsync(o => o.Sha256 == staged.Sha256, cancellation).ConfigureAwait(false);
        if (!known)
        {
            db.Objects.Add(new StoredObject { Sha256 = staged.Sha256, Size = staged.Size, Kind = ObjectKind.Export, StoredUtc = db.Clock.GetUtcNow() });
        }

        var record = new ExportRecord
        {
            Kind = kind,
            CollectionId = collectionId,
            ItemId = itemId,
            Sha256 = staged.Sha256,
            FileName = fileName,
            CreatedUtc = db.Clock.GetUtcNow(),
            CreatedBy = agent,
        };
        db.Exports.Add(record);

        // The export's events go in the same transaction as its row: a crash leaves both or neither.
        recordEvents();
        staged.Commit();
        try
        {
            await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        }
        catch
        {
            if (!known)
            {
                staged.Rollback();
            }

            db.ChangeTracker.Clear();
            throw;
        }

        return record;
    }
}
