using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Storage;

namespace TapeVault.Archive.Export;

/// <summary>Bags and catalogues made in the web app: written into the content store and recorded, so they can be downloaded and audited.</summary>
public sealed class ExportStore(ArchiveDbContext db, ContentStore store, BagExport bags, CataloguePublisher catalogues)
{
    public Task<ExportRecord> StoreBagAsync(BagScope scope, string agent, CancellationToken cancellation = default) =>
        StoreBagAsync(scope, agent, heldJob: null, cancellation);

    /// <summary>
    /// Makes and records a bag; with <paramref name="heldJob"/>, the export and the job's end are one commit, made only
    /// while this firing still holds the job (else <see cref="JobTakenOverException"/>, and nothing is recorded).
    /// </summary>
    public async Task<ExportRecord> StoreBagAsync(BagScope scope, string agent, JobRecord? heldJob, CancellationToken cancellation = default)
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
            () => bags.RecordExported(bag, agent, "kept in the archive for download"), heldJob, BagSummary, cancellation).ConfigureAwait(false);
    }

    public Task<ExportRecord> StoreCatalogueAsync(int collectionId, string agent, CancellationToken cancellation = default) =>
        StoreCatalogueAsync(collectionId, agent, heldJob: null, cancellation);

    /// <summary>
    /// Publishes and records a collection's catalogue; with <paramref name="heldJob"/>, the export and the job's end are
    /// one commit, made only while this firing still holds the job (else <see cref="JobTakenOverException"/>).
    /// </summary>
    public async Task<ExportRecord> StoreCatalogueAsync(int collectionId, string agent, JobRecord? heldJob, CancellationToken cancellation = default)
    {
        (int Files, string ManifestSha256) written = (0, string.Empty);
        using var staged = await store.StageAsync(async stream => written = await catalogues.PublishZipAsync(collectionId, stream, cancellation).ConfigureAwait(false), cancellation).ConfigureAwait(false);
        string fileName = $"catalogue-collection-{collectionId}.zip";
        return await RecordAsync(staged, "catalogue", collectionId, null, fileName, agent,
            () => catalogues.RecordPublished(collectionId, $"Catalogue published as '{fileName}', kept in the archive for download ({written.Files} files).", written.ManifestSha256, agent),
            heldJob, CatalogueSummary, cancellation).ConfigureAwait(false);
    }

    /// <summary>The bag job's summary of what it made.</summary>
    public static string BagSummary(ExportRecord record)
    {
        ArgumentNullException.ThrowIfNull(record);
        return $"Bag {record.FileName} ready ({record.Sha256[..12]}…).";
    }

    /// <summary>The publish job's summary of what it made.</summary>
    public static string CatalogueSummary(ExportRecord record)
    {
        ArgumentNullException.ThrowIfNull(record);
        return $"Catalogue {record.FileName} ready ({record.Sha256[..12]}…).";
    }

    private async Task<ExportRecord> RecordAsync(
        StagedObject staged, string kind, int? collectionId, int? itemId, string fileName, string agent, Action recordEvents,
        JobRecord? heldJob, Func<ExportRecord, string> summary, CancellationToken cancellation)
    {
        // A job's export and the job's end are one commit (the events with them), and only while its firing still holds
        // the job: an export is recorded once, even when a node taken for dead wakes up after another finished its job.
        await using var transaction = heldJob is null ? null : await ArchiveDatabase.BeginWriteAsync(db, CancellationToken.None).ConfigureAwait(false);
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
            await db.SaveChangesAsync(heldJob is null ? cancellation : CancellationToken.None).ConfigureAwait(false);
            if (heldJob is not null)
            {
                if (!await JobQueue.FinishHeldAsync(db, heldJob, summary(record), record.Id).ConfigureAwait(false))
                {
                    throw new JobTakenOverException(heldJob.Id);
                }

                await transaction!.CommitAsync(CancellationToken.None).ConfigureAwait(false);
            }
        }
        catch
        {
            await StagedObjectUndo.WithdrawUnlessNamedAsync(db, transaction, staged).ConfigureAwait(false);
            throw;
        }

        return record;
    }
}
