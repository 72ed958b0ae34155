using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Jobs;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;

namespace TapeVault.Archive.Curation;

/// <summary>The curator's changes other than ingest: collections, items, queued decodes. Each is recorded in the event log.</summary>
public sealed class CuratorActions(ArchiveDbContext db, ProfileCatalog profiles)
{
    public const int MaxTextLength = 20_000;

    public async Task<Collection> CreateCollectionAsync(string name, string? description, string agent, CancellationToken cancellation = default)
    {
        name = Required(name, "collection name", 200);
        var collection = new Collection { Name = name, Description = Optional(description, "description"), CreatedUtc = db.Clock.GetUtcNow() };
        db.Collections.Add(collection);
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        EventLog.Add(db, EventTypes.Create, agent, "collection", collection.Id.ToString(), "success", $"Collection '{name}' created.");
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        return collection;
    }

    public async Task<TapeItem> CreateItemAsync(int collectionId, string accession, string title, string? labelText, string? condition, string? side, string agent, CancellationToken cancellation = default)
    {
        if (!await db.Collections.AnyAsync(c => c.Id == collectionId, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveNotFoundException($"There is no collection {collectionId}.");
        }

        accession = Required(accession, "accession number", 64);
        if (accession.Any(char.IsControl))
        {
            throw new ArchiveInputException("The accession number contains control characters.");
        }

        title = Required(title, "title", 300);
        if (await db.Items.AnyAsync(i => i.AccessionNumber == accession, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveConflictException($"Accession number '{accession}' is already used by another item.");
        }

        var item = new TapeItem
        {
            CollectionId = collectionId,
            AccessionNumber = accession,
            Title = title,
            LabelText = Optional(labelText, "label text"),
            ConditionNotes = Optional(condition, "condition notes"),
            Side = string.IsNullOrWhiteSpace(side) ? "A" : Required(side, "side", 16),
            CreatedUtc = db.Clock.GetUtcNow(),
        };
        db.Items.Add(item);
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        EventLog.Add(db, EventTypes.Create, agent, "item", item.Id.ToString(), "success", $"Item {accession} '{title}' created.", item.Id);
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        return item;
    }

    /// <summary>
    /// The curator confirms what the capture file's own metadata (Broadcast WAV bext, iXML, FLAC comments) suggests:
    /// each suggested detail (deck, operator, date, notes) replaces the capture's; details the file does not suggest
    /// stay as they are. Recorded in the event log with the values before and after.
    /// </summary>
    public async Task<Capture> UseEmbeddedDetailsAsync(int captureId, string agent, CancellationToken cancellation = default)
    {
        var capture = await db.Captures.FirstOrDefaultAsync(c => c.Id == captureId, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no capture {captureId}.");
        var suggestion = Ingest.EmbeddedMetadata.Parse(capture.EmbeddedMetadata)?.Suggestion;
        if (suggestion is null || suggestion.IsEmpty)
        {
            throw new ArchiveInputException($"Capture {captureId}'s file carries no deck, operator, date or notes to use.");
        }

        string before = $"deck '{capture.Deck}', operator '{capture.Operator}', date {capture.CapturedOn?.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture) ?? "none"}";
        capture.Deck = suggestion.Deck.Length > 0 ? Limit(suggestion.Deck, 2000) : capture.Deck;
        capture.Operator = suggestion.Operator.Length > 0 ? Limit(suggestion.Operator, 2000) : capture.Operator;
        capture.CapturedOn = suggestion.CapturedOn ?? capture.CapturedOn;
        capture.Notes = suggestion.Notes.Length > 0 ? Limit(suggestion.Notes, MaxTextLength) : capture.Notes;
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        EventLog.Add(db, EventTypes.Create, agent, "capture", capture.Id.ToString(), "details-confirmed",
            $"Capture {capture.Id} takes the details its file suggests ({Ingest.CaptureIngest.Describe(suggestion)}); before: {before}.", capture.ItemId);
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        return capture;
    }

    /// <summary>Queues a decode of a capture with the default bank, or with the named settings of it.</summary>
    public async Task<JobRecord> QueueDecodeAsync(int captureId, string profileId, IReadOnlyList<string>? settingNames, string? channel, string agent, CancellationToken cancellation = default)
    {
        var capture = await db.Captures.AsNoTracking().FirstOrDefaultAsync(c => c.Id == captureId, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no capture {captureId}.");
        if (string.IsNullOrWhiteSpace(profileId) || !profiles.TryGet(profileId, out var profile))
        {
            throw new ArchiveInputException($"There is no format profile '{profileId}'; the profiles are {string.Join(", ", profiles.All.Select(p => p.Id))}.");
        }

        IReadOnlyList<DetectorSetting>? settings = null;
        if (settingNames is { Count: > 0 })
        {
            var byName = DetectorBanks.Default.ToDictionary(s => s.Name, StringComparer.Ordinal);
            var chosen = new List<DetectorSetting>();
            foreach (var name in settingNames.Distinct(StringComparer.Ordinal))
            {
                if (!byName.TryGetValue(name, out var setting))
                {
                    throw new ArchiveInputException($"There is no detector setting '{name}'; the settings are {string.Join(", ", byName.Keys)}.");
                }

                chosen.Add(setting);
            }

            settings = chosen;
        }

        channel = string.IsNullOrWhiteSpace(channel) ? "mix" : channel;
        if (channel is not ("mix" or "left" or "right"))
        {
            throw new ArchiveInputException($"The channel must be mix, left or right, not '{channel}'.");
        }

        var job = JobQueue.Enqueue(db, JobKinds.Decode, new DecodeJobParameters(capture.Id, profile.Id, settings, channel).ToJson(), agent, capture.ItemId, capture.Id);
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        return job;
    }

    /// <summary>Queues a merge of the item's newest decode run of each capture into a new image version.</summary>
    public async Task<JobRecord> QueueMergeAsync(int itemId, string agent, CancellationToken cancellation = default)
    {
        if (!await db.Items.AnyAsync(i => i.Id == itemId, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveNotFoundException($"There is no item {itemId}.");
        }

        if ((await MergeJob.RunsToMergeAsync(db, itemId, cancellation).ConfigureAwait(false)).Count == 0)
        {
            throw new ArchiveInputException("This item has no decode runs yet; decode its captures before merging.");
        }

        var job = JobQueue.Enqueue(db, JobKinds.Merge, new MergeJobParameters(itemId).ToJson(), agent, itemId);
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        return job;
    }

    /// <summary>Queues a fixity audit, a bag or a catalogue (kind from <see cref="JobKinds"/>) for a collection, an item, or (fixity) everything.</summary>
    public async Task<JobRecord> QueueScopedAsync(string kind, int? collectionId, int? itemId, string agent, CancellationToken cancellation = default)
    {
        if (collectionId is { } c && !await db.Collections.AnyAsync(x => x.Id == c, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveNotFoundException($"There is no collection {c}.");
        }

        if (itemId is { } i && !await db.Items.AnyAsync(x => x.Id == i, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveNotFoundException($"There is no item {i}.");
        }

        var job = JobQueue.Enqueue(db, kind, new ScopeParameters(collectionId, itemId).ToJson(), agent, itemId);
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        return job;
    }

    private static string Limit(string text, int length) => text.Length <= length ? text : text[..length];

    private static string Required(string? value, string what, int maxLength)
    {
        if (string.IsNullOrWhiteSpace(value))
        {
            throw new ArchiveInputException($"The {what} is empty.");
        }

        value = value.Trim();
        if (value.Length > maxLength)
        {
            throw new ArchiveInputException($"The {what} is longer than {maxLength} characters.");
        }

        return value;
    }

    private static string Optional(string? value, string what)
    {
        value = value?.Trim() ?? string.Empty;
        if (value.Length > MaxTextLength)
        {
            throw new ArchiveInputException($"The {what} is longer than {MaxTextLength} characters.");
        }

        return value;
    }
}
