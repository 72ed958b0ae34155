using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Storage;
using TapeVault.Core.Image;

namespace TapeVault.Archive.Export;

/// <summary>Everything the archive holds about one item, gathered once for a bag or a catalogue page.</summary>
public sealed record ItemDossier(
    Collection Collection,
    TapeItem Item,
    IReadOnlyList<Capture> Captures,
    IReadOnlyList<DecodeRun> Runs,
    IReadOnlyList<TapeImageRecord> Images,
    TapeImage? LatestImage,
    IReadOnlyList<ArchiveEvent> Events)
{
    public TapeImageRecord? LatestImageRecord => Images.Count == 0 ? null : Images[^1];

    /// <summary>The item's metadata as a plain object for JSON (no binary payloads).</summary>
    public object ToMetadata() => new
    {
        collection = new { id = Collection.Id, name = Collection.Name, description = Collection.Description },
        item = new
        {
            id = Item.Id,
            accessionNumber = Item.AccessionNumber,
            title = Item.Title,
            labelText = Item.LabelText,
            conditionNotes = Item.ConditionNotes,
            side = Item.Side,
            createdUtc = Item.CreatedUtc,
        },
        captures = Captures.Select(c => new
        {
            id = c.Id,
            fileName = c.OriginalFileName,
            sha256 = c.Sha256,
            size = c.Size,
            sampleRate = c.SampleRate,
            channels = c.Channels,
            bitsPerSample = c.BitsPerSample,
            encoding = c.Encoding,
            container = c.Container,
            durationSeconds = c.DurationSeconds,
            deck = c.Deck,
            @operator = c.Operator,
            capturedOn = c.CapturedOn,
            notes = c.Notes,
            ingestedUtc = c.IngestedUtc,
            ingestedBy = c.IngestedBy,
            embeddedMetadata = Ingest.EmbeddedMetadata.Parse(c.EmbeddedMetadata),
        }),
        decodeRuns = Runs.Select(r => new
        {
            id = r.Id,
            captureId = r.CaptureId,
            profile = r.ProfileId,
            codeVersion = r.CodeVersion,
            startedUtc = r.StartedUtc,
            finishedUtc = r.FinishedUtc,
            outcome = r.Outcome,
        }),
        images = Images.Select(i => new
        {
            id = i.Id,
            version = i.Version,
            sha256 = i.Sha256,
            profile = i.ProfileId,
            codeVersion = i.CodeVersion,
            createdUtc = i.CreatedUtc,
            createdBy = i.CreatedBy,
            clean = i.CleanBlocks,
            voted = i.VotedBlocks,
            repaired = i.RepairedBlocks,
            missing = i.MissingBlocks,
            conflicts = i.Conflicts,
            overallConfidence = i.OverallConfidence,
            sourceRunIds = i.SourceRunIds,
        }),
    };

    public object ToEventHistory() => Events.Select(e => new
    {
        id = e.Id,
        eventType = e.EventType,
        occurredUtc = e.OccurredUtc,
        agent = e.Agent,
        objectType = e.ObjectType,
        objectId = e.ObjectId,
        outcome = e.Outcome,
        detail = e.Detail,
        itemId = e.ItemId,
        sha256 = e.Sha256,
        previousSha256 = e.PreviousSha256,
    });

    public static async Task<ItemDossier> LoadAsync(ArchiveDbContext db, ContentStore store, int itemId, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        ArgumentNullException.ThrowIfNull(store);
        var item = await db.Items.AsNoTracking().Include(i => i.Collection).FirstOrDefaultAsync(i => i.Id == itemId, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no item {itemId}.");
        var captures = await db.Captures.AsNoTracking().Where(c => c.ItemId == itemId).OrderBy(c => c.Id).ToListAsync(cancellation).ConfigureAwait(false);
        var captureIds = captures.Select(c => c.Id).ToList();
        var runs = await db.Runs.AsNoTracking().Where(r => captureIds.Contains(r.CaptureId)).OrderBy(r => r.Id).ToListAsync(cancellation).ConfigureAwait(false);
        var images = await db.Images.AsNoTracking().Where(i => i.ItemId == itemId).OrderBy(i => i.Version).ToListAsync(cancellation).ConfigureAwait(false);
        var events = await db.Events.AsNoTracking().Where(e => e.ItemId == itemId).OrderBy(e => e.Id).ToListAsync(cancellation).ConfigureAwait(false);
        TapeImage? latest = null;
        if (images.Count > 0 && store.Exists(images[^1].Sha256))
        {
            await using var stream = store.OpenRead(images[^1].Sha256);
            try
            {
                latest = TapeImageContainer.Read(stream);
            }
            catch (ImageFormatException e)
            {
                throw new ArchiveConflictException($"Item {item.AccessionNumber}: the stored tape image version {images[^1].Version} is damaged ({e.Message}) Run a fixity audit.");
            }
        }

        return new ItemDossier(item.Collection!, item, captures, runs, images, latest, events);
    }
}
