using TapeVault.Core.Blocks;
using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Ingest;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Runs;
using TapeVault.Archive.Storage;
using TapeVault.Archive.Timeline;
using TapeVault.Core.Image;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;
using TapeVault.Core.Text;
using TapeVault.Core.Timeline;

namespace TapeVault.Web.Api;

/// <summary>The reads behind both the pages and the API, so both show the same thing.</summary>
public sealed partial class ArchiveQueries(ArchiveDbContext db, ProfileCatalog profiles, UserManager<IdentityUser> users, ContentStore store)
{
    private readonly Dictionary<string, TapeImage> imagesRead = new(StringComparer.Ordinal);

    public async Task<IReadOnlyList<CollectionSummary>> CollectionsAsync(CancellationToken cancellation = default) =>
        await db.Collections.AsNoTracking().OrderBy(c => c.Name)
            .Select(c => new CollectionSummary(c.Id, c.Name, c.Description, c.Items.Count, c.CreatedUtc))
            .ToListAsync(cancellation).ConfigureAwait(false);

    public async Task<CollectionDetail> CollectionAsync(int id, CancellationToken cancellation = default)
    {
        var c = await db.Collections.AsNoTracking().FirstOrDefaultAsync(c => c.Id == id, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no collection {id}.");
        var items = await db.Items.AsNoTracking().Where(i => i.CollectionId == id).OrderBy(i => i.AccessionNumber)
            .Select(i => new ItemSummary(i.Id, i.AccessionNumber, i.Title, i.Side, i.Captures.Count, i.Captures.SelectMany(x => x.Runs).Count()))
            .ToListAsync(cancellation).ConfigureAwait(false);
        return new CollectionDetail(c.Id, c.Name, c.Description, c.CreatedUtc, items);
    }

    /// <summary>A collection with one page of its tapes (in accession order, from the 0-based <paramref name="from"/>) and how many it holds in all.</summary>
    public async Task<(CollectionDetail Collection, int TotalItems)> CollectionPageAsync(int id, int from, int take, CancellationToken cancellation = default)
    {
        var c = await db.Collections.AsNoTracking().FirstOrDefaultAsync(c => c.Id == id, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no collection {id}.");
        int total = await db.Items.CountAsync(i => i.CollectionId == id, cancellation).ConfigureAwait(false);

        // The page's tapes first, then the counts of those tapes alone: counted in the same query, the database works
        // them out for every tape of the collection before it sorts and cuts the page (about 230 ms for 10 000 tapes).
        var page = await db.Items.AsNoTracking().Where(i => i.CollectionId == id).OrderBy(i => i.AccessionNumber)
            .Skip(Math.Max(0, from)).Take(Math.Max(1, take))
            .Select(i => new { i.Id, i.AccessionNumber, i.Title, i.Side })
            .ToListAsync(cancellation).ConfigureAwait(false);
        var ids = page.Select(i => i.Id).ToList();
        var captures = await db.Captures.AsNoTracking().Where(x => ids.Contains(x.ItemId)).GroupBy(x => x.ItemId)
            .Select(g => new { g.Key, Count = g.Count() }).ToDictionaryAsync(g => g.Key, g => g.Count, cancellation).ConfigureAwait(false);
        var runs = await db.Runs.AsNoTracking().Where(r => ids.Contains(r.Capture!.ItemId)).GroupBy(r => r.Capture!.ItemId)
            .Select(g => new { g.Key, Count = g.Count() }).ToDictionaryAsync(g => g.Key, g => g.Count, cancellation).ConfigureAwait(false);
        var items = page.Select(i => new ItemSummary(i.Id, i.AccessionNumber, i.Title, i.Side, captures.GetValueOrDefault(i.Id), runs.GetValueOrDefault(i.Id))).ToList();
        return (new CollectionDetail(c.Id, c.Name, c.Description, c.CreatedUtc, items), total);
    }

    public async Task<ItemDetail> ItemAsync(int id, CancellationToken cancellation = default)
    {
        var item = await db.Items.AsNoTracking().Include(i => i.Collection).FirstOrDefaultAsync(i => i.Id == id, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no item {id}.");
        var captures = await db.Captures.AsNoTracking().Where(c => c.ItemId == id).Include(c => c.Runs).OrderBy(c => c.Id)
            .ToListAsync(cancellation).ConfigureAwait(false);
        var jobs = await db.Jobs.AsNoTracking().Where(j => j.ItemId == id && (j.State == JobState.Queued || j.State == JobState.Running))
            .OrderBy(j => j.Id).ToListAsync(cancellation).ConfigureAwait(false);
        return new ItemDetail(
            item.Id,
            item.CollectionId,
            item.Collection!.Name,
            item.AccessionNumber,
            item.Title,
            item.LabelText,
            item.ConditionNotes,
            item.Side,
            [.. captures.Select(ToSummary)],
            [.. jobs.Select(ToView)]);
    }

    public async Task<CaptureSummary> CaptureAsync(int id, CancellationToken cancellation = default)
    {
        var capture = await db.Captures.AsNoTracking().Include(c => c.Runs).FirstOrDefaultAsync(c => c.Id == id, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no capture {id}.");
        return ToSummary(capture);
    }

    public async Task<RunDetail> RunAsync(int id, CancellationToken cancellation = default)
    {
        var run = await db.Runs.AsNoTracking().Include(r => r.Capture).ThenInclude(c => c!.Item).ThenInclude(i => i!.Collection).FirstOrDefaultAsync(r => r.Id == id, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no decode run {id}.");
        var candidates = await db.Candidates.AsNoTracking().Where(c => c.RunId == id)
            .OrderBy(c => c.Position).ThenBy(c => c.SettingIndex).ThenBy(c => c.StartSeconds)
            .ToListAsync(cancellation).ConfigureAwait(false);
        var positions = candidates.GroupBy(c => c.Position).Select(g =>
        {
            var readings = g.Select(ToView).ToList();
            var best = g.OrderByDescending(c => c.Status == BlockStatus.Clean).ThenByDescending(c => c.Confidence).First();
            return new PositionView(g.Key, best.IdentityKey, ToView(best), readings);
        }).ToList();
        var item = run.Capture!.Item!;
        return new RunDetail(ToSummary(run), run.Capture.OriginalFileName, run.Capture.ItemId, item.AccessionNumber, positions, item.CollectionId, item.Collection!.Name, item.Title);
    }

    public async Task<IReadOnlyList<JobView>> JobsAsync(int take = 100, CancellationToken cancellation = default) =>
        await NamedAsync(await db.Jobs.AsNoTracking().OrderByDescending(j => j.Id).Take(Math.Clamp(take, 1, 1000)).ToListAsync(cancellation).ConfigureAwait(false), cancellation).ConfigureAwait(false);

    public async Task<JobView> JobAsync(int id, CancellationToken cancellation = default) =>
        (await NamedAsync([await db.Jobs.AsNoTracking().FirstOrDefaultAsync(j => j.Id == id, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no job {id}.")], cancellation).ConfigureAwait(false))[0];

    /// <summary>The 200 newest fixity audits of the whole archive, newest first (read by the index on kind and id).</summary>
    public static IQueryable<JobRecord> NewestFixityAudits(ArchiveDbContext db) =>
        db.Jobs.AsNoTracking().Where(j => j.Kind == JobKinds.Fixity).OrderByDescending(j => j.Id).Take(200);

    /// <summary>The newest fixity audits of a collection (or of the whole store, which covers it too), newest first.</summary>
    public async Task<IReadOnlyList<JobView>> FixityAuditsAsync(int collectionId, int take = 3, CancellationToken cancellation = default)
    {
        var audits = await NewestFixityAudits(db).ToListAsync(cancellation).ConfigureAwait(false);
        var ofCollection = audits.Where(j => ScopeOf(j) is var scope && (scope.CollectionId == collectionId || scope is { CollectionId: null, ItemId: null }))
            .Take(Math.Clamp(take, 1, 50)).ToList();
        return await NamedAsync(ofCollection, cancellation).ConfigureAwait(false);
    }

    /// <summary>Job views with what each is for by name: the tape's accession number, the collection's name.</summary>
    private async Task<IReadOnlyList<JobView>> NamedAsync(IReadOnlyList<JobRecord> jobs, CancellationToken cancellation)
    {
        var collectionOf = jobs.ToDictionary(j => j.Id, j => ScopeOf(j).CollectionId);
        var itemIds = jobs.Where(j => j.ItemId is not null).Select(j => j.ItemId!.Value).Distinct().ToList();
        var collectionIds = collectionOf.Values.OfType<int>().Distinct().ToList();
        var items = await db.Items.AsNoTracking().Where(i => itemIds.Contains(i.Id)).Select(i => new { i.Id, i.AccessionNumber })
            .ToDictionaryAsync(i => i.Id, i => i.AccessionNumber, cancellation).ConfigureAwait(false);
        var collections = await db.Collections.AsNoTracking().Where(c => collectionIds.Contains(c.Id)).Select(c => new { c.Id, c.Name })
            .ToDictionaryAsync(c => c.Id, c => c.Name, cancellation).ConfigureAwait(false);
        return [.. jobs.Select(j =>
        {
            int? collection = collectionOf[j.Id];
            return ToView(j) with
            {
                CollectionId = collection,
                CollectionName = collection is { } c ? collections.GetValueOrDefault(c) : null,
                AccessionNumber = j.ItemId is { } i ? items.GetValueOrDefault(i) : null,
            };
        })];
    }

    /// <summary>The collection or item a fixity, bag or catalogue job works on; none for the other kinds.</summary>
    private static ScopeParameters ScopeOf(JobRecord job)
    {
        if (job.Kind is not (JobKinds.Fixity or JobKinds.Bag or JobKinds.Publish))
        {
            return new ScopeParameters(null, job.ItemId);
        }

        try
        {
            return ScopeParameters.FromJson(job.Parameters);
        }
        catch (Exception e) when (e is System.Text.Json.JsonException or JobFailedException)
        {
            return new ScopeParameters(null, job.ItemId);
        }
    }

    public async Task<IReadOnlyList<EventView>> ItemEventsAsync(int itemId, CancellationToken cancellation = default)
    {
        if (!await db.Items.AnyAsync(i => i.Id == itemId, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveNotFoundException($"There is no item {itemId}.");
        }

        var events = await db.Events.AsNoTracking().Where(e => e.ItemId == itemId).OrderBy(e => e.Id)
            .Select(e => new EventView(e.Id, e.EventType, e.OccurredUtc, e.Agent, e.ObjectType, e.ObjectId, e.Outcome, e.Detail))
            .ToListAsync(cancellation).ConfigureAwait(false);
        return [.. events.Select(e => e with { Detail = HideServerPaths(e.Detail) })];
    }

    /// <summary>
    /// Events written by older releases named folders on the server (a published catalogue's, a missing file's);
    /// the web shows none: an absolute path becomes "(a folder on the server)". The stored event is unchanged.
    /// </summary>
    public static string HideServerPaths(string detail) => AbsolutePath().Replace(detail, "(a folder on the server)");

    [System.Text.RegularExpressions.GeneratedRegex(@"(?<![\w.~])(?:[A-Za-z]:\\|/)(?:[^\s'""/\\]+[/\\])+[^\s'""()]*", System.Text.RegularExpressions.RegexOptions.CultureInvariant)]
    private static partial System.Text.RegularExpressions.Regex AbsolutePath();

    public async Task<IReadOnlyList<ImageSummary>> ImagesAsync(int itemId, CancellationToken cancellation = default)
    {
        if (!await db.Items.AnyAsync(i => i.Id == itemId, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveNotFoundException($"There is no item {itemId}.");
        }

        var images = await db.Images.AsNoTracking().Include(i => i.StoredFile).Where(i => i.ItemId == itemId).OrderByDescending(i => i.Version)
            .ToListAsync(cancellation).ConfigureAwait(false);
        return [.. images.Select(ToSummary)];
    }

    public async Task<ImageDetail> ImageAsync(int id, CancellationToken cancellation = default)
    {
        var record = await db.Images.AsNoTracking().Include(i => i.StoredFile).FirstOrDefaultAsync(i => i.Id == id, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no tape image {id}.");
        var image = await ReadImageAsync(record.Sha256, cancellation).ConfigureAwait(false);
        var files = image.Captures.ToDictionary(c => c.CaptureSha256, c => c.FileName, StringComparer.Ordinal);
        var blocks = image.Blocks.Select(b =>
        {
            var winner = b.Sources.IsDefaultOrEmpty ? null : b.Sources[0];
            return new ImageBlockView(
                b.Position,
                b.Key,
                Vocabulary.Of(b.Status).Name,
                b.Confidence,
                b.AgreeingCaptures,
                b.Conflict,
                b.Payload.Length,
                Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(b.Payload.AsSpan())),
                winner?.CaptureSha256,
                winner is null ? null : files.GetValueOrDefault(winner.CaptureSha256),
                winner?.SettingName,
                [.. b.ConflictingPayloads.Select(c => new ConflictView(
                    c.Source.CaptureSha256, c.Source.SettingName, c.AgreeingCaptures, Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(c.Payload.AsSpan()))))]);
        }).ToList();
        return new ImageDetail(
            ToSummary(record),
            blocks,
            [.. image.Files.Select(f => new ImageFileView(f.Name, f.Length, f.FirstPosition, f.BlockCount, f.Complete))],
            [.. image.Captures.Select(c => new ImageCaptureView(c.CaptureSha256, c.FileName, c.SampleRate, c.Channels, c.DurationSeconds))]);
    }

    /// <summary>
    /// The files the headers of a stored tape image name, with names safe to save under (as the command line's
    /// extract gives them). Derived from the image, so anyone who may download the image may have them.
    /// </summary>
    public async Task<RecoveredFiles> RecoveredFilesAsync(int imageId, CancellationToken cancellation = default)
    {
        var record = await db.Images.AsNoTracking().Include(i => i.Item).FirstOrDefaultAsync(i => i.Id == imageId, cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no tape image {imageId}.");
        if (!store.Exists(record.Sha256))
        {
            throw new ArchiveConflictException("The tape image's file is missing from the content store; run a fixity audit.");
        }

        var image = await ReadImageAsync(record.Sha256, cancellation).ConfigureAwait(false);
        var files = ImageFiles.Extract(image);
        var names = SafeFileNames.Assign(files.Select(f => f.File.Name));
        return new RecoveredFiles(record.Id, record.Item!.AccessionNumber, record.Version, record.CreatedUtc, [.. files.Select((f, i) => new RecoveredFile(i, names[i], f))]);
    }

    /// <summary>Each capture × setting's best reading of each position of the newest image (or of every block seen, before a merge).</summary>
    public async Task<BlockMap> BlockMapAsync(int itemId, CancellationToken cancellation = default)
    {
        if (!await db.Items.AnyAsync(i => i.Id == itemId, cancellation).ConfigureAwait(false))
        {
            throw new ArchiveNotFoundException($"There is no item {itemId}.");
        }

        var runs = await MergeJob.RunsToMergeAsync(db, itemId, cancellation).ConfigureAwait(false);
        var runIds = runs.Select(r => r.Id).ToList();
        var candidates = await db.Candidates.AsNoTracking().Where(c => runIds.Contains(c.RunId))
            .Select(c => new { c.RunId, c.SettingIndex, c.SettingName, c.IdentityKey, c.Status, c.Confidence, c.StartSeconds })
            .ToListAsync(cancellation).ConfigureAwait(false);

        var newest = await db.Images.AsNoTracking().Where(i => i.ItemId == itemId).OrderByDescending(i => i.Version).FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
        List<BlockMapColumn> columns;
        Dictionary<string, (string Capture, string Setting)> chosen = new(StringComparer.Ordinal);
        if (newest is not null && store.Exists(newest.Sha256))
        {
            var image = await ReadImageAsync(newest.Sha256, cancellation).ConfigureAwait(false);
            columns = [.. image.Blocks.Select(b => new BlockMapColumn(b.Position, b.Key, Vocabulary.Of(b.Status).Name, b.Confidence))];
            foreach (var b in image.Blocks.Where(b => !b.Sources.IsDefaultOrEmpty))
            {
                chosen.TryAdd(b.Key, (b.Sources[0].CaptureSha256, b.Sources[0].SettingName));
            }
        }
        else
        {
            columns = [.. candidates.GroupBy(c => c.IdentityKey).OrderBy(g => g.Min(c => c.StartSeconds))
                .Select((g, i) => new BlockMapColumn(i, g.Key, "unmerged", 0))];
        }

        var rows = new List<BlockMapRow>();
        foreach (var run in runs)
        {
            // Every setting of the run has its row, also one that read nothing: that it found no block is worth seeing.
            var ofRun = candidates.Where(c => c.RunId == run.Id).ToList();
            foreach (var settingName in SettingsJson.Read(run.SettingsJson).Select(s => s.Name))
            {
                var byKey = ofRun.Where(c => c.SettingName == settingName).GroupBy(c => c.IdentityKey, StringComparer.Ordinal)
                    .ToDictionary(g => g.Key, g => g.OrderByDescending(c => c.Status == BlockStatus.Clean).ThenByDescending(c => c.Confidence).First(), StringComparer.Ordinal);
                var cells = columns.Select(col => byKey.TryGetValue(col.Key, out var best)
                    ? new BlockMapCell(Vocabulary.Of(best.Status).Name, best.Confidence,
                        chosen.TryGetValue(col.Key, out var win) && win.Capture == run.Capture!.Sha256 && win.Setting == settingName)
                    : new BlockMapCell("none", 0, false)).ToList();
                rows.Add(new BlockMapRow(run.CaptureId, run.Capture!.OriginalFileName, run.Id, settingName, cells));
            }
        }

        return new BlockMap(newest?.Id, columns, rows);
    }

    /// <summary>
    /// The tape timeline of an item: the newest decode of each capture (as the merge takes them), one lane per
    /// setting, and the newest image on top when there is one.
    /// </summary>
    public Task<TapeTimeline> TimelineAsync(int itemId, CancellationToken cancellation = default) =>
        TimelineDrawings.TimelineAsync(db, store, itemId, ReadImageAsync, cancellation);

    /// <summary>Every reading of one position of the newest image, side by side: which capture and setting, what it read, how sure.</summary>
    public async Task<PositionReadings> PositionAsync(int itemId, int position, CancellationToken cancellation = default)
    {
        var newest = await db.Images.AsNoTracking().Where(i => i.ItemId == itemId).OrderByDescending(i => i.Version).FirstOrDefaultAsync(cancellation).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"Item {itemId} has no tape image yet; merge its captures first.");
        var image = await ReadImageAsync(newest.Sha256, cancellation).ConfigureAwait(false);
        if (position < 0 || position >= image.Blocks.Length)
        {
            throw new ArchiveNotFoundException($"The image of item {itemId} has no position {position}.");
        }

        var block = image.Blocks[position];
        var runs = await MergeJob.RunsToMergeAsync(db, itemId, cancellation).ConfigureAwait(false);
        var runIds = runs.Select(r => r.Id).ToList();
        var records = await db.Candidates.AsNoTracking().Where(c => runIds.Contains(c.RunId) && c.IdentityKey == block.Key)
            .OrderBy(c => c.RunId).ThenBy(c => c.SettingIndex).ThenBy(c => c.StartSeconds)
            .ToListAsync(cancellation).ConfigureAwait(false);
        var runById = runs.ToDictionary(r => r.Id);
        var readings = records.Select(c =>
        {
            var run = runById[c.RunId];
            bool same = block.Status != RecoveryStatus.Missing && c.Payload.AsSpan().SequenceEqual(block.Payload.AsSpan());
            return new PositionReading(run.CaptureId, run.Capture!.OriginalFileName, run.Id, c.SettingName, Vocabulary.Of(c.Status).Name, c.Confidence, c.StartSeconds,
                c.PayloadLength, Convert.ToHexStringLower(c.Payload.AsSpan(0, Math.Min(c.Payload.Length, 16))), c.MinimumMargin, c.MeanMargin,
                c.AmbiguousDecisions, same);
        }).ToList();
        return new PositionReadings(itemId, newest.Version, block.Position, image.Blocks.Length, block.Key, Vocabulary.Of(block.Status).Name, block.Confidence,
            block.Payload.Length, Convert.ToHexStringLower(block.Payload.AsSpan(0, Math.Min(block.Payload.Length, 16))), readings);
    }

    /// <summary>Reads a stored container once per request: the item page asks for the newest image and its block map.</summary>
    private async Task<TapeImage> ReadImageAsync(string sha256, CancellationToken cancellation)
    {
        if (imagesRead.TryGetValue(sha256, out var known))
        {
            return known;
        }

        var image = await ReadStoredImageAsync(sha256, cancellation).ConfigureAwait(false);
        imagesRead[sha256] = image;
        return image;
    }

    private Task<TapeImage> ReadStoredImageAsync(string sha256, CancellationToken cancellation) =>
        TimelineDrawings.ReadStoredImageAsync(store, sha256, cancellation);

    public static ImageSummary ToSummary(TapeImageRecord i)
    {
        ArgumentNullException.ThrowIfNull(i);
        return new(i.Id, i.ItemId, i.Version, i.Sha256, i.StoredFile?.Size ?? 0, i.ProfileId, i.CodeVersion, i.CreatedUtc, i.CreatedBy,
            i.CleanBlocks, i.VotedBlocks, i.RepairedBlocks, i.MissingBlocks, i.Conflicts, i.OverallConfidence,
            [.. i.SourceRunIds.Split(',', StringSplitOptions.RemoveEmptyEntries).Select(int.Parse)]);
    }

    public async Task<IReadOnlyList<ExportView>> ExportsAsync(int? collectionId, int? itemId, CancellationToken cancellation = default) =>
        await db.Exports.AsNoTracking()
            .Where(e => (collectionId == null || e.CollectionId == collectionId) && (itemId == null || e.ItemId == itemId))
            .OrderByDescending(e => e.Id).Take(100)
            .Select(e => new ExportView(e.Id, e.Kind, e.CollectionId, e.ItemId, e.FileName, e.Sha256, e.StoredFile!.Size, e.CreatedUtc, e.CreatedBy))
            .ToListAsync(cancellation).ConfigureAwait(false);

    public IReadOnlyList<ProfileView> Profiles() =>
        [.. profiles.All.Select(p => new ProfileView(p.Id, p.Name, p.Description, p.Family.ToString().ToLowerInvariant()))];

    public static IReadOnlyList<SettingView> DefaultSettings() => [.. DetectorBanks.Default.Select(ToView)];

    public async Task<IReadOnlyList<UserView>> UsersAsync()
    {
        var list = new List<UserView>();
        foreach (var user in await users.Users.AsNoTracking().OrderBy(u => u.UserName).ToListAsync().ConfigureAwait(false))
        {
            var roles = await users.GetRolesAsync(user).ConfigureAwait(false);
            var claims = await users.GetClaimsAsync(user).ConfigureAwait(false);
            list.Add(new UserView(
                user.UserName ?? string.Empty,
                [.. roles],
                user.LockoutEnd is { } end && end > db.Clock.GetUtcNow(),
                claims.Any(c => c.Type == Archive.Accounts.UserAdmin.MustChangePasswordClaim)));
        }

        return list;
    }

    public static JobView ToView(JobRecord j)
    {
        ArgumentNullException.ThrowIfNull(j);
        return new(j.Id, j.Kind, j.State.ToString().ToLowerInvariant(), j.Progress, j.ProgressText, j.Error, j.ItemId, j.CaptureId, j.ResultId,
            j.CreatedBy, j.CreatedUtc, j.StartedUtc, j.FinishedUtc, j.Attempts);
    }

    public static CaptureSummary ToSummary(Capture c)
    {
        ArgumentNullException.ThrowIfNull(c);
        return new(c.Id, c.ItemId, c.OriginalFileName, c.Sha256, c.Size, c.SampleRate, c.Channels, c.BitsPerSample, c.Encoding,
            c.DurationSeconds, c.Deck, c.Operator, c.CapturedOn, c.Notes, c.IngestedUtc, c.IngestedBy,
            [.. c.Runs.OrderBy(r => r.Id).Select(ToSummary)])
        {
            Container = c.Container,
            Embedded = EmbeddedMetadata.Parse(c.EmbeddedMetadata),
        };
    }

    public static RunSummary ToSummary(DecodeRun r)
    {
        ArgumentNullException.ThrowIfNull(r);
        return new(r.Id, r.CaptureId, r.ProfileId, [.. SettingsJson.Read(r.SettingsJson).Select(s => s.Name)], r.CodeVersion,
            r.StartedUtc, r.FinishedUtc, r.Outcome, r.Positions, r.CleanPositions);
    }

    public static CandidateView ToView(CandidateRecord c)
    {
        ArgumentNullException.ThrowIfNull(c);
        return new(c.SettingName, Vocabulary.Of(c.Status).Name, c.Confidence, c.MinimumMargin, c.MeanMargin, c.AmbiguousDecisions, c.Decisions, c.SnrDb,
            c.Speed, c.StartSeconds, c.EndSeconds, c.Truncated, c.PayloadLength, c.PayloadSha256);
    }

    public static SettingView ToView(DetectorSetting s)
    {
        ArgumentNullException.ThrowIfNull(s);
        return new(s.Name, s.HighPassHz, s.LowPassHz, s.Differentiate, s.Invert, s.ThresholdMode.ToString().ToLowerInvariant(), s.Hysteresis,
            s.Edges.ToString().ToLowerInvariant(), Explain(s));
    }

    /// <summary>What the whole setting assumes about the capture, then what sets it apart in its group, as one text.</summary>
    public static string Explain(DetectorSetting s)
    {
        ArgumentNullException.ThrowIfNull(s);
        var group = DetectorBanks.Default.Where(x => x.Differentiate == s.Differentiate).ToList();
        return $"{SourceSentence(s.Differentiate)} This setting {Difference(s, group.Count > 0 && group.Contains(s) ? group : [s])}.";
    }

    /// <summary>
    /// The default bank grouped by where each setting assumes the signal comes from (a deck's line output or a head
    /// amplifier), each group introduced once, each setting by what sets it apart from the rest of its group.
    /// </summary>
    public static IReadOnlyList<SettingGroupView> SettingGroups() => SettingGroups(DetectorBanks.Default);

    public static IReadOnlyList<SettingGroupView> SettingGroups(IReadOnlyList<DetectorSetting> bank)
    {
        ArgumentNullException.ThrowIfNull(bank);
        return [.. bank.GroupBy(s => s.Differentiate).OrderBy(g => g.Key).Select(g =>
        {
            var members = g.ToList();
            return new SettingGroupView(
                g.Key ? "Taken straight off the tape head" : "Taken from a deck's line or earphone output",
                SourceSentence(g.Key),
                [.. members.Select(s => new SettingChoiceView(s.Name, Difference(s, members)))]);
        })];
    }

    private static string SourceSentence(bool differentiate) => differentiate
        ? "These settings assume the capture came from the playback head through a plain amplifier, with no deck electronics to square the signal up: the head answers to changes in the tape's magnetisation, so the settings take the slope of the signal first and time the swings of that."
        : "These settings assume the capture came from a deck's line or earphone socket, whose own playback amplifier has already shaped the signal into the swings the computer wrote: the settings time those swings as they are, after taking out rumble and hiss.";

    /// <summary>What one setting counts and where it departs from what most of its group does.</summary>
    private static string Difference(DetectorSetting s, IReadOnlyList<DetectorSetting> group)
    {
        static T Usual<T>(IEnumerable<T> values) => values.GroupBy(v => v).OrderByDescending(g => g.Count()).First().Key;
        var parts = new List<string>
        {
            s.Edges switch
            {
                EdgeSelection.Both => "counts every swing, upward and downward",
                EdgeSelection.Falling => "counts only the downward swings",
                _ when s.Invert => "counts only the downward swings (it turns the signal over, for a chain wired the other way round)",
                _ => "counts only the upward swings",
            },
        };
        if (s.HighPassHz > Usual(group.Select(x => x.HighPassHz)))
        {
            parts.Add(s.LowPassHz is { } lp
                ? $"listens only between {s.HighPassHz:0} and {lp:0} Hz, for a capture with hum or hiss around the signal"
                : $"listens only above {s.HighPassHz:0} Hz, for a capture with hum under the signal");
        }
        else if (s.LowPassHz != Usual(group.Select(x => x.LowPassHz)))
        {
            parts.Add(s.LowPassHz is { } cut ? $"cuts off above {cut:0} Hz" : "keeps the highest frequencies too");
        }

        if (s.ThresholdMode != Usual(group.Select(x => x.ThresholdMode)) || s.Hysteresis != Usual(group.Where(x => x.ThresholdMode == s.ThresholdMode).Select(x => x.Hysteresis)))
        {
            parts.Add(s.ThresholdMode == ThresholdMode.Fixed
                ? $"switches at a fixed level (±{s.Hysteresis:0.###} of full scale), for a capture whose loudness does not wander"
                : $"needs a wider swing to switch (±{s.Hysteresis:P0} of the recent level), so that noise does not flip it");
        }

        return string.Join("; ", parts);
    }
}
