using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Ingest;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Storage;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;

namespace TapeVault.Archive.Seeding;

/// <summary>
/// Fills an empty archive with the demo scenario: the fictional Brackenfield club's collection, its tapes, and
/// several synthesised passes of each (made with the channel model, each with its own damage), queued for decoding.
/// For demonstrations only.
/// </summary>
public sealed class DemoSeeder(ArchiveDbContext db, ContentStore store, ArchiveOptions options)
{
    public async Task<bool> SeedIfEmptyAsync(CancellationToken cancellation = default)
    {
        if (await db.Collections.AnyAsync(cancellation).ConfigureAwait(false))
        {
            return false;
        }

        var collection = new Collection
        {
            Name = $"{DemoTapes.Club} (demo)",
            Description = "A fictional club's shelf of tapes for its fictional Orrin 80 computer, made up for TapeVault's demonstration. "
                + "The captures are synthesised, each pass with its own damage (noise, wow, dropouts, a head amplifier with inverted wiring).",
            CreatedUtc = db.Clock.GetUtcNow(),
        };
        db.Collections.Add(collection);
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        EventLog.Add(db, EventTypes.Create, EventLog.SystemAgent, "collection", collection.Id.ToString(), "success", "Demo collection created at first start.");

        var folder = Path.Combine(store.TempFolder, $"demo-{Guid.NewGuid():N}");
        Directory.CreateDirectory(folder);
        try
        {
            foreach (var tape in DemoTapes.All)
            {
                var item = new TapeItem
                {
                    CollectionId = collection.Id,
                    AccessionNumber = tape.Accession,
                    Title = tape.Title,
                    LabelText = tape.LabelText,
                    ConditionNotes = tape.Condition,
                    Side = "A",
                    CreatedUtc = db.Clock.GetUtcNow(),
                };
                db.Items.Add(item);
                await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
                var profile = ProfileCatalog.BuiltIn.Get(tape.ProfileId);
                for (int p = 0; p < tape.Passes.Count; p++)
                {
                    var pass = tape.Passes[p];
                    var fileName = $"{tape.Accession.ToLowerInvariant()}-pass{p + 1}.wav";
                    var path = Path.Combine(folder, fileName);
                    CaptureSynthesizer.Write(path, profile, tape.Files, pass.Damage);
                    IngestResult ingested;
                    await using (var source = File.OpenRead(path))
                    {
                        ingested = await new CaptureIngest(db, store, options).IngestAsync(source, new IngestRequest
                        {
                            ItemId = item.Id,
                            FileName = fileName,
                            ContentType = "audio/wav",
                            Deck = pass.Deck,
                            Operator = "demo",
                            CapturedOn = DateOnly.FromDateTime(db.Clock.GetUtcNow().UtcDateTime),
                            Notes = pass.Description,
                            Agent = EventLog.SystemAgent,
                        }, cancellation).ConfigureAwait(false);
                    }

                    JobQueue.Enqueue(db, JobKinds.Decode, new DecodeJobParameters(ingested.Capture.Id, profile.Id, null).ToJson(), EventLog.SystemAgent, item.Id, ingested.Capture.Id);
                    await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
                }

                // A newcomer's first look at a demo tape is a finished image: its merge waits for the decodes above.
                JobQueue.Enqueue(db, JobKinds.Merge, new MergeJobParameters(item.Id).ToJson(), EventLog.SystemAgent, item.Id);
                await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
            }
        }
        finally
        {
            Directory.Delete(folder, recursive: true);
        }

        return true;
    }
}
