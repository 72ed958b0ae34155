using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Storage;
using TapeVault.Core.Audio;

namespace TapeVault.Archive.Ingest;

/// <summary>What the uploader says about a capture, besides its bytes.</summary>
public sealed record IngestRequest
{
    public required int ItemId { get; init; }

    public required string FileName { get; init; }

    /// <summary>The content type the client sent; null when it sent none.</summary>
    public string? ContentType { get; init; }

    public string Deck { get; init; } = string.Empty;

    public string Operator { get; init; } = string.Empty;

    public DateOnly? CapturedOn { get; init; }

    public string Notes { get; init; } = string.Empty;

    public required string Agent { get; init; }
}

/// <param name="Duplicate">The item already had a capture with these bytes; nothing new was stored.</param>
/// <param name="LinkedExistingObject">The store already held these bytes (for another item); the capture links them.</param>
public sealed record IngestResult(Capture Capture, bool Duplicate, bool LinkedExistingObject, string Message);

/// <summary>
/// Takes a capture in: streams it into the store's temporary folder while hashing, checks that it is a WAV, RF64, BW64
/// or FLAC file TapeVault can decode (a FLAC file is decoded whole, its CRCs and MD5 checked), keeps the metadata it
/// carries, then moves it into place and records it. Anything refused leaves no row, no object and no temporary file.
/// </summary>
public sealed class CaptureIngest(ArchiveDbContext db, ContentStore store, ArchiveOptions options)
{
    public async Task<IngestResult> IngestAsync(Stream body, IngestRequest request, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(body);
        ArgumentNullException.ThrowIfNull(request);
        CheckRequest(request);
        var item = await db.Items.AsNoTracking().FirstOrDefaultAsync(i => i.Id == request.ItemId, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no item {request.ItemId}.");

        using var staged = await StageAsync(body, cancellation).ConfigureAwait(false);
        var audio = Inspect(staged.TempPath);

        var sameItem = await db.Captures.AsNoTracking()
            .FirstOrDefaultAsync(c => c.ItemId == item.Id && c.Sha256 == staged.Sha256, cancellation).ConfigureAwait(false);
        if (sameItem is not null)
        {
            EventLog.Add(db, EventTypes.Ingest, request.Agent, "capture", sameItem.Id.ToString(), "duplicate",
                $"'{request.FileName}' has the same bytes as capture {sameItem.Id} ('{sameItem.OriginalFileName}'); nothing was stored again.", item.Id);
            await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
            return new IngestResult(sameItem, Duplicate: true, LinkedExistingObject: true,
                $"This item already has these exact bytes as capture {sameItem.Id} ('{sameItem.OriginalFileName}'); the existing capture was kept and nothing new was stored.");
        }

        bool objectKnown = await db.Objects.AnyAsync(o => o.Sha256 == staged.Sha256, cancellation).ConfigureAwait(false);
        var capture = new Capture
        {
            ItemId = item.Id,
            Sha256 = staged.Sha256,
            OriginalFileName = request.FileName,
            Size = staged.Size,
            SampleRate = audio.SampleRate,
            Channels = audio.Channels,
            BitsPerSample = audio.BitsPerSample,
            Encoding = audio.Encoding,
            Container = audio.Container,
            EmbeddedMetadata = Ingest.EmbeddedMetadata.ToJson(audio.Metadata),
            DurationSeconds = audio.DurationSeconds,
            Deck = request.Deck,
            Operator = request.Operator,
            CapturedOn = request.CapturedOn,
            Notes = request.Notes,
            IngestedUtc = db.Clock.GetUtcNow(),
            IngestedBy = request.Agent,
        };

        await using var transaction = await db.Database.BeginTransactionAsync(cancellation).ConfigureAwait(false);
        if (!objectKnown)
        {
            db.Objects.Add(new StoredObject { Sha256 = staged.Sha256, Size = staged.Size, Kind = ObjectKind.Original, StoredUtc = db.Clock.GetUtcNow() });
        }

        db.Captures.Add(capture);
        staged.Commit();
        try
        {
            await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
            EventLog.Add(db, EventTypes.Ingest, request.Agent, "capture", capture.Id.ToString(), objectKnown ? "linked" : "success",
                $"'{request.FileName}', {staged.Size} bytes, SHA-256 {staged.Sha256}, {audio.SampleRate} Hz, {audio.Channels} channel(s), {audio.DurationSeconds:0.0} s.", item.Id);
            await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
            await transaction.CommitAsync(cancellation).ConfigureAwait(false);
        }
        catch
        {
            await StagedObjectUndo.WithdrawUnlessNamedAsync(db, transaction, staged).ConfigureAwait(false);
            throw;
        }

        string message = objectKnown
            ? $"These bytes were already in the archive; capture {capture.Id} links the stored original instead of storing it again."
            : $"Stored as capture {capture.Id} ({ByteSizes.Format(staged.Size)}, SHA-256 {staged.Sha256[..12]}…).";
        if (audio.Metadata is { Suggestion.IsEmpty: false } embedded)
        {
            message += $" The file's own metadata suggests {Describe(embedded.Suggestion)}; confirm it on the capture's page.";
        }
        return new IngestResult(capture, Duplicate: false, LinkedExistingObject: objectKnown, message);
    }

    private void CheckRequest(IngestRequest request)
    {
        if (SafeNames.FileNameProblem(request.FileName) is { } problem)
        {
            throw new ArchiveInputException(problem);
        }

        var extension = Path.GetExtension(request.FileName);
        var extensions = options.AcceptedExtensions;
        if (!extensions.Contains(extension, StringComparer.OrdinalIgnoreCase))
        {
            throw new ArchiveInputException(
                $"Files ending in '{(extension.Length == 0 ? "(nothing)" : extension)}' are not accepted; captures must be {OneOf(extensions)} files.");
        }

        if (request.ContentType is { } type)
        {
            var bare = type.Split(';', 2)[0].Trim();
            var types = options.AcceptedContentTypes;
            if (!types.Contains(bare, StringComparer.OrdinalIgnoreCase))
            {
                throw new ArchiveInputException($"The content type '{bare}' is not accepted for captures; send the capture as {OneOf(types)}.");
            }
        }
    }

    /// <summary>"a", "a or b", "a, b or c".</summary>
    private static string OneOf(IReadOnlyList<string> choices) =>
        choices.Count <= 1 ? string.Join(string.Empty, choices) : $"{string.Join(", ", choices.Take(choices.Count - 1))} or {choices[^1]}";

    private async Task<StagedObject> StageAsync(Stream body, CancellationToken cancellation)
    {
        // A body that does not even start like a WAV file is refused at its first bytes, not after gigabytes.
        var head = new byte[WavSignature.Length];
        int got = await body.ReadAtLeastAsync(head, head.Length, throwOnEndOfStream: false, cancellation).ConfigureAwait(false);
        if (WavSignature.Problem(head.AsSpan(0, got), got) is { } problem)
        {
            throw new ArchiveInputException(problem);
        }

        try
        {
            return await store.StageAsync(body, options.MaxUploadBytes, head.AsMemory(0, got), cancellation).ConfigureAwait(false);
        }
        catch (ObjectTooLargeException e)
        {
            throw new ArchiveTooLargeException(e.Message);
        }
    }

    /// <summary>The suggestion in words, for the ingest message: "deck 'X', operator 'Y', date 2026-11-30".</summary>
    public static string Describe(TapeVault.Core.Audio.CaptureDetailsSuggestion suggestion)
    {
        ArgumentNullException.ThrowIfNull(suggestion);
        var parts = new List<string>();
        if (suggestion.Deck.Length > 0)
        {
            parts.Add($"deck '{suggestion.Deck}'");
        }

        if (suggestion.Operator.Length > 0)
        {
            parts.Add($"operator '{suggestion.Operator}'");
        }

        if (suggestion.CapturedOn is { } date)
        {
            parts.Add($"date {date:yyyy-MM-dd}");
        }

        if (suggestion.Notes.Length > 0)
        {
            parts.Add("notes");
        }

        return string.Join(", ", parts);
    }

    private static CaptureInfoSummary Inspect(string path)
    {
        try
        {
            using var reader = CaptureReader.Open(path);
            if (reader.Truncated)
            {
                throw new ArchiveInputException(
                    "The WAV header claims more audio than the file holds; the file was probably cut off while copying, so copy it again.");
            }

            if (reader.Container == "flac")
            {
                // A FLAC file's damage shows only in its frames: decode it all now (CRCs, STREAMINFO, MD5), so a
                // damaged one is refused before anything is stored.
                var info = reader.Complete();
                if (info.FixityFinding is { } finding)
                {
                    throw new ArchiveInputException(finding);
                }
            }

            return new CaptureInfoSummary(reader.SampleRate, reader.Channels, reader.BitsPerSample, reader.Encoding, reader.DurationSeconds, reader.Container,
                EmbeddedMetadata.From(reader.Metadata));
        }
        catch (CaptureFormatException e)
        {
            throw new ArchiveInputException(e.Message);
        }
    }

    private sealed record CaptureInfoSummary(int SampleRate, int Channels, int BitsPerSample, string Encoding, double DurationSeconds, string Container, EmbeddedMetadata? Metadata);
}
