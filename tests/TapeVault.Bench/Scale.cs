using System.Diagnostics;
using System.Globalization;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using TapeVault.Archive;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using EventLog = TapeVault.Archive.Events.EventLog;
using TapeVault.Archive.Export;
using TapeVault.Archive.Fixity;
using TapeVault.Archive.Ingest;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Runs;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Archive.Tests.PostgreSql;
using TapeVault.EndToEnd.Tests;

namespace TapeVault.Bench;

/// <summary>
/// The archive at scale: builds an archive of many tapes through the archive's own services (curator actions, capture
/// ingest, the run store, the job queue and its runner with the real merge job), plus one long tape of 400 blocks read
/// in 3 passes by the default bank; then starts the web app on loopback and reads its pages, times a catalogue of every
/// tape and a fixity audit, and runs GNU sha256sum over the same files in the same run as the outside reference.
/// Prints figures; asserts nothing.
/// </summary>
public static partial class Scale
{
    private const string Agent = "bench";

    /// <summary>The profile every tape of the archive is written and decoded with.</summary>
    private const string ProfileId = "orrin-80";

    private sealed record Options(int Tapes, int CapturesPerTape, int CaptureKilobytes, int LongBlocks, int Requests, bool Rebuild, IReadOnlySet<string> Only, DatabaseProvider Provider, int BuildJobs)
    {
        /// <summary>Whether a measurement is asked for (all of them unless --only names some).</summary>
        public bool Measures(string section) => Only.Count == 0 || Only.Contains(section);
    }

    /// <summary>How many ingests and jobs the build runs at once (they overlap their file writes; the database takes one writer at a time).</summary>
    private static int buildJobs = 4;

    /// <summary>The measurements --only may name.</summary>
    private static readonly string[] Sections = ["build", "pages", "long", "drawing", "store", "merge", "publish", "fixity"];

    public static async Task<int> RunAsync(string work, string[] args)
    {
        var options = Parse(args);
        string root = Path.Combine(work, $"scale-{options.Tapes}x{options.CapturesPerTape}-{options.CaptureKilobytes}k-{options.LongBlocks}b{(options.Provider == DatabaseProvider.PostgreSql ? "-pg" : string.Empty)}");
        Console.WriteLine($"== The archive at scale: {options.Tapes} tapes × {options.CapturesPerTape} captures of {options.CaptureKilobytes} KiB, one tape of {options.LongBlocks} blocks × 3 passes, on {options.Provider}");
        Console.WriteLine($"archive folder {root}; load at start: {MachineLoad.Averages()}");
        var built = Path.Combine(root, "built.txt");

        // On PostgreSQL the archive's database (and the job engine's schedule, clustered as several machines would
        // have it) is in a temporary PostgreSQL 15 cluster started for this run and removed after it, so it is built anew.
        PostgreSqlServer? server = null;
        if (options.Provider == DatabaseProvider.PostgreSql)
        {
            server = new PostgreSqlServer();
            await server.InitializeAsync();
            postgres = await server.CreateDatabaseAsync();
            Environment.SetEnvironmentVariable("TapeVault__Archive__Provider", "PostgreSql");
            Environment.SetEnvironmentVariable("TapeVault__Archive__ConnectionString", postgres);
            Environment.SetEnvironmentVariable("TapeVault__Jobs__Store", "PostgreSql");
            Environment.SetEnvironmentVariable("TapeVault__Jobs__ConnectionString", postgres);
            Console.WriteLine($"PostgreSQL 15 on 127.0.0.1:{server.Port} (a temporary cluster, fsync off as in the tests)");
        }

        try
        {
            return await RunOnAsync(work, root, built, options);
        }
        finally
        {
            if (server is not null)
            {
                await server.DisposeAsync();
            }
        }
    }

    /// <summary>The archive's PostgreSQL database for this run; null on SQLite.</summary>
    private static string? postgres;

    private static async Task<int> RunOnAsync(string work, string root, string built, Options options)
    {
        if (options.Rebuild || options.Provider == DatabaseProvider.PostgreSql || !File.Exists(built))
        {
            if (Directory.Exists(root))
            {
                MakeWritable(root);
                Directory.Delete(root, recursive: true);
            }

            Directory.CreateDirectory(root);
            var summary = await BuildAsync(work, root, options);
            await File.WriteAllTextAsync(built, summary);
        }
        else
        {
            Console.WriteLine("reusing the archive built by an earlier run (--rebuild builds it anew):");
        }

        Console.Write(await File.ReadAllTextAsync(built));
        var facts = await FactsAsync(root);
        await CompleteLongTapeAsync(root, facts);
        if (options.Measures("pages") || options.Measures("long") || options.Measures("drawing"))
        {
            await KeepTimelineReadingsAsync(root, facts);
        }

        if (options.Measures("pages") || options.Measures("long"))
        {
            await MeasurePagesAsync(root, facts, options);
        }

        if (options.Measures("drawing"))
        {
            await MeasureDrawingAsync(root, facts, options);
        }

        if (options.Measures("store"))
        {
            await MeasureStoreAsync(root, facts);
        }

        if (options.Measures("merge"))
        {
            await MeasureMergeAsync(root, facts);
        }

        if (options.Measures("publish"))
        {
            await MeasurePublishAsync(root, facts);
        }

        if (options.Measures("fixity"))
        {
            await MeasureFixityAsync(root);
        }

        Console.WriteLine($"load at end: {MachineLoad.Averages()}");
        Console.WriteLine();
        return 0;
    }

    private static Options Parse(string[] args)
    {
        int tapes = 10_000, captures = 3, kilobytes = 32, blocks = 400, requests = 40, jobs = 4;
        bool rebuild = false;
        var provider = DatabaseProvider.Sqlite;
        var only = new HashSet<string>(StringComparer.Ordinal);
        for (int i = 0; i < args.Length; i++)
        {
            int Next() => int.Parse(args[++i], CultureInfo.InvariantCulture);
            switch (args[i])
            {
                case "--tapes": tapes = Next(); break;
                case "--captures": captures = Next(); break;
                case "--capture-kb": kilobytes = Next(); break;
                case "--blocks": blocks = Next(); break;
                case "--requests": requests = Next(); break;
                case "--build-jobs": jobs = Next(); break;
                case "--rebuild": rebuild = true; break;
                case "--provider": provider = Enum.Parse<DatabaseProvider>(args[++i], ignoreCase: true); break;
                case "--only":
                    foreach (var name in args[++i].Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries))
                    {
                        only.Add(Array.IndexOf(Sections, name) >= 0 ? name : throw new ArgumentException($"scale: --only takes {string.Join(", ", Sections)}, not '{name}'"));
                    }

                    break;
                default: throw new ArgumentException($"scale: unknown option '{args[i]}' (--tapes N, --captures N, --capture-kb N, --blocks N, --requests N, --build-jobs N, --rebuild, --only {string.Join(',', Sections)}, --provider Sqlite|PostgreSql)");
            }
        }

        if (tapes < 1 || captures < 1 || kilobytes < 1 || blocks < 1 || requests < 5 || jobs < 1)
        {
            throw new ArgumentException("scale: --tapes, --captures, --capture-kb, --blocks and --build-jobs are at least 1, --requests at least 5.");
        }

        buildJobs = jobs;
        return new Options(tapes, captures, kilobytes, blocks, requests, rebuild, only, provider, jobs);
    }

    private static ArchiveOptions Archive(string root) => postgres is null
        ? new() { BaseFolder = root, DatabasePath = "archive.db", StorePath = "store", Workers = buildJobs }
        : new() { BaseFolder = root, Provider = DatabaseProvider.PostgreSql, ConnectionString = postgres, StorePath = "store", Workers = buildJobs };

    private static ServiceProvider Services(string root)
    {
        var services = new ServiceCollection();
        services.AddLogging();
        services.AddTapeVaultArchive(Archive(root), ProfileCatalog.BuiltIn);
        return services.BuildServiceProvider();
    }

    private static async Task<string> BuildAsync(string work, string root, Options options)
    {
        var log = new System.Text.StringBuilder();
        void Say(string line)
        {
            Console.WriteLine(line);
            log.AppendLine(line);
        }

        await using var services = Services(root);
        await using (var first = services.CreateAsyncScope())
        {
            await ArchiveDatabase.MigrateAsync(first.ServiceProvider.GetRequiredService<ArchiveDbContext>());
        }

        var profile = ProfileCatalog.BuiltIn.Get(ProfileId);
        var clock = Stopwatch.StartNew();
        int collectionId;
        var itemIds = new List<int>(options.Tapes + 1);
        await using (var scope = services.CreateAsyncScope())
        {
            var actions = scope.ServiceProvider.GetRequiredService<CuratorActions>();
            collectionId = (await actions.CreateCollectionAsync("Scale shelf", "Synthetic tapes for the scale benchmark.", Agent)).Id;
        }

        // Tapes are added as CuratorActions.CreateItemAsync adds them (the row, then its "create" event), 500 to a save.
        for (int start = 0; start < options.Tapes; start += 500)
        {
            await using var scope = services.CreateAsyncScope();
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            var batch = new List<TapeItem>();
            for (int t = start; t < Math.Min(options.Tapes, start + 500); t++)
            {
                batch.Add(new TapeItem
                {
                    CollectionId = collectionId, AccessionNumber = $"SC-{t + 1:00000}", Title = $"Club tape {t + 1}", LabelText = $"Side A, tape {t + 1}",
                    ConditionNotes = "Shell intact.", Side = "A", CreatedUtc = DateTimeOffset.UtcNow,
                });
            }

            db.Items.AddRange(batch);
            await db.SaveChangesAsync();
            foreach (var item in batch)
            {
                EventLog.Add(db, EventTypes.Create, Agent, "item", item.Id.ToString(CultureInfo.InvariantCulture), "success", $"Item {item.AccessionNumber} '{item.Title}' created.", item.Id);
                itemIds.Add(item.Id);
            }

            await db.SaveChangesAsync();
        }

        Say($"built: {options.Tapes} tapes in {clock.Elapsed.TotalSeconds:0.0} s (as CuratorActions.CreateItemAsync adds them, 500 to a save)");

        // Every short capture is a distinct small WAV (noise from its own seed), ingested by the upload's own service.
        clock.Restart();
        // Several ingests at once, each in its own scope as concurrent uploads are: their hashing, fsync and placing
        // overlap while the database takes their rows one writer at a time.
        var perTape = new int[itemIds.Count][];
        long bytesIn = 0;
        int ingested = 0;
        await Parallel.ForAsync(0, (itemIds.Count + 49) / 50, new ParallelOptions { MaxDegreeOfParallelism = options.BuildJobs }, async (chunk, token) =>
        {
            await using var scope = services.CreateAsyncScope();
            var ingest = scope.ServiceProvider.GetRequiredService<CaptureIngest>();
            for (int t = chunk * 50; t < Math.Min(itemIds.Count, (chunk + 1) * 50); t++)
            {
                var ids = new int[options.CapturesPerTape];
                for (int p = 0; p < options.CapturesPerTape; p++)
                {
                    var wav = NoiseWav(options.CaptureKilobytes * 1024, (t * options.CapturesPerTape) + p);
                    Interlocked.Add(ref bytesIn, wav.Length);
                    using var body = new MemoryStream(wav);
                    var result = await ingest.IngestAsync(body, new IngestRequest
                    {
                        ItemId = itemIds[t], FileName = $"pass-{p + 1}.wav", ContentType = "audio/wav", Deck = $"deck {(p % 3) + 1}", Operator = Agent, Agent = Agent,
                    }, token);
                    ids[p] = result.Capture.Id;
                }

                perTape[t] = ids;
                if (Interlocked.Increment(ref ingested) % 1000 == 0)
                {
                    Console.WriteLine($"   … {ingested} tapes' captures in {clock.Elapsed.TotalSeconds:0} s (load {MachineLoad.Averages()})");
                }
            }
        });
        var captureIds = perTape.SelectMany(ids => ids).ToList();

        Say($"built: {captureIds.Count} captures ({bytesIn / 1e6:0} MB) in {clock.Elapsed.TotalSeconds:0.0} s (CaptureIngest.IngestAsync, each hashed, fsynced and placed, {options.BuildJobs} at once)");

        // One real decode of a short tape gives the readings every short capture's run records (the runs are rows
        // made by the run store, as a decode job makes them; decoding 30 000 captures is the read path's benchmark).
        clock.Restart();
        var templatePath = Path.Combine(work, "scale-template.wav");
        CaptureSynthesizer.Write(templatePath, profile, [new TapeFile("SCALE", new byte[32])], new ChannelDamage { SnrDb = 24, Seed = 5 });
        var template = CaptureDecoder.Decode(templatePath, profile);
        int runs = 0;
        for (int start = 0; start < captureIds.Count; start += 300)
        {
            await using var scope = services.CreateAsyncScope();
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            var batch = captureIds.Skip(start).Take(300).ToList();
            var items = await db.Captures.AsNoTracking().Where(c => batch.Contains(c.Id)).ToDictionaryAsync(c => c.Id, c => c.ItemId);
            var made = new List<(DecodeRun Run, int ItemId)>();
            foreach (var id in batch)
            {
                var now = DateTimeOffset.UtcNow;
                var run = RunStore.ToRun(id, template, now, now);
                db.Runs.Add(run);
                made.Add((run, items[id]));
            }

            await db.SaveChangesAsync();
            foreach (var (run, itemId) in made)
            {
                EventLog.Add(db, EventTypes.Decode, Agent, "run", run.Id.ToString(CultureInfo.InvariantCulture), "success",
                    $"Capture {run.CaptureId} with profile {profile.Id} and {template.Settings.Count} detector setting(s), code {template.CodeVersion}: {run.Outcome}", itemId);
            }

            await db.SaveChangesAsync();
            runs += batch.Count;
        }

        Say($"built: {runs} decode runs of {template.Candidates.Count} readings each in {clock.Elapsed.TotalSeconds:0.0} s (RunStore.ToRun, batched)");

        // The long tape: three passes synthesised with their own damage, uploaded and decoded by real decode jobs.
        clock.Restart();
        int longItem;
        var longCaptures = new List<int>();
        await using (var scope = services.CreateAsyncScope())
        {
            var actions = scope.ServiceProvider.GetRequiredService<CuratorActions>();
            longItem = (await actions.CreateItemAsync(collectionId, "SC-LONG", $"Long tape of {options.LongBlocks} blocks", "Both sides full", "Played often.", "A", Agent)).Id;
            var ingest = scope.ServiceProvider.GetRequiredService<CaptureIngest>();
            var content = new byte[options.LongBlocks * 255];
            new Random(400).NextBytes(content);
            for (int p = 0; p < 3; p++)
            {
                var path = Path.Combine(work, $"scale-long-{options.LongBlocks}-{p + 1}.wav");
                if (!File.Exists(path))
                {
                    CaptureSynthesizer.Write(path, profile, [new TapeFile("LONGTAPE", content)],
                        new ChannelDamage { SnrDb = 20, Seed = 4000 + p, WowPercent = 0.2, RandomDropoutsPerMinute = 20, Speed = 1 + ((p - 1) * 0.01) });
                }

                await using var file = File.OpenRead(path);
                var result = await ingest.IngestAsync(file, new IngestRequest { ItemId = longItem, FileName = $"long-pass-{p + 1}.wav", ContentType = "audio/wav", Deck = $"deck {p + 1}", Agent = Agent });
                longCaptures.Add(result.Capture.Id);
                await actions.QueueDecodeAsync(result.Capture.Id, profile.Id, null, "mix", Agent);
            }
        }

        await RunQueueAsync(services);
        await DecodeAgainAsync(services, longCaptures, profile.Id);
        Say($"built: the long tape's 3 passes synthesised, ingested and decoded by decode jobs in {clock.Elapsed.TotalSeconds:0.0} s");

        // Every tape's image is made by a merge job, worked by the job runner as the app works them.
        // A scope (and so a database context) per 200 tapes, as each request of the app has its own: one context for
        // all of them would track every queued job and look through them all again at each save.
        clock.Restart();
        var toMerge = itemIds.Append(longItem).ToList();
        for (int start = 0; start < toMerge.Count; start += 200)
        {
            await using var scope = services.CreateAsyncScope();
            var actions = scope.ServiceProvider.GetRequiredService<CuratorActions>();
            foreach (var id in toMerge.Skip(start).Take(200))
            {
                await actions.QueueMergeAsync(id, Agent);
            }
        }

        Say($"built: {toMerge.Count} merge jobs queued in {clock.Elapsed.TotalSeconds:0.0} s (CuratorActions.QueueMergeAsync)");

        await RunQueueAsync(services);
        await using (var scope = services.CreateAsyncScope())
        {
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            int images = await db.Images.CountAsync();
            int failed = await db.Jobs.CountAsync(j => j.State != JobState.Done);
            Say($"built: {images} tape images by merge jobs in {clock.Elapsed.TotalSeconds:0.0} s ({failed} job(s) not done)");
        }

        return log.ToString();
    }

    /// <summary>
    /// Queues again the decode of every given capture that has no decode run (its decode job failed: on a machine
    /// shared by many, a job can find the database busy for longer than it waits), up to three times, and runs them;
    /// returns how many were decoded again.
    /// </summary>
    private static async Task<int> DecodeAgainAsync(ServiceProvider services, IReadOnlyList<int> captures, string profileId)
    {
        int again = 0;
        for (int attempt = 0; attempt < 3; attempt++)
        {
            List<int> undecoded;
            await using (var scope = services.CreateAsyncScope())
            {
                var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
                var decoded = await db.Runs.Where(r => captures.Contains(r.CaptureId)).Select(r => r.CaptureId).Distinct().ToListAsync();
                undecoded = [.. captures.Except(decoded)];
                var actions = scope.ServiceProvider.GetRequiredService<CuratorActions>();
                foreach (int capture in undecoded)
                {
                    await actions.QueueDecodeAsync(capture, profileId, null, "mix", Agent);
                }
            }

            if (undecoded.Count == 0)
            {
                break;
            }

            Console.WriteLine($"   … {undecoded.Count} of the long tape's passes have no decode run (a decode job failed): decoded again");
            again += undecoded.Count;
            await RunQueueAsync(services);
        }

        return again;
    }

    /// <summary>
    /// An archive built by an earlier run whose long tape lacks a pass's decode (its job failed) gets it now, and the
    /// long tape is merged again, so every measurement sees the 3 passes.
    /// </summary>
    private static async Task CompleteLongTapeAsync(string root, Facts facts)
    {
        await using var services = Services(root);
        if (await DecodeAgainAsync(services, facts.LongCaptures, ProfileId) == 0)
        {
            return;
        }

        await using (var scope = services.CreateAsyncScope())
        {
            await scope.ServiceProvider.GetRequiredService<CuratorActions>().QueueMergeAsync(facts.LongItem, Agent);
        }

        await RunQueueAsync(services);
    }

    /// <summary>Runs the archive's jobs as a worker does (the job engine, two workers as the app has) until the queue is empty.</summary>
    private static async Task RunQueueAsync(ServiceProvider services)
    {
        var archive = services.GetRequiredService<ArchiveOptions>();
        // The worker's own lines (warnings and errors) are printed; not every database command it runs.
        var settings = new ConfigurationBuilder().AddInMemoryCollection(new Dictionary<string, string?> { ["Logging:LogLevel:Default"] = "Warning" });
        if (postgres is not null)
        {
            settings.AddInMemoryCollection(new Dictionary<string, string?> { ["TapeVault:Jobs:Store"] = "PostgreSql", ["TapeVault:Jobs:ConnectionString"] = postgres });
        }

        using var worker = JobWorker.Build(settings.Build(), archive, JobWorker.StopWhenIdle);
        await worker.RunAsync();
    }

    private sealed record Facts(int CollectionId, int[] ItemIds, int[] CaptureIds, int LongItem, int[] LongCaptures, int Tapes, int Objects, long ObjectBytes);

    private static async Task<Facts> FactsAsync(string root)
    {
        await using var services = Services(root);
        await using var scope = services.CreateAsyncScope();
        var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
        var items = await db.Items.AsNoTracking().Select(i => new { i.Id, i.AccessionNumber, i.CollectionId }).ToListAsync();
        var longItem = items.Single(i => i.AccessionNumber == "SC-LONG");
        var captures = await db.Captures.AsNoTracking().Select(c => new { c.Id, c.ItemId }).ToListAsync();
        long bytes = await db.Objects.SumAsync(o => o.Size);
        int objects = await db.Objects.CountAsync();
        return new Facts(longItem.CollectionId, [.. items.Where(i => i.Id != longItem.Id).Select(i => i.Id)], [.. captures.Where(c => c.ItemId != longItem.Id).Select(c => c.Id)],
            longItem.Id, [.. captures.Where(c => c.ItemId == longItem.Id).Select(c => c.Id)], items.Count, objects, bytes);
    }

    /// <summary>
    /// The long tape's runs as a decode stores them now, with their readings kept as the timeline draws them
    /// (<see cref="RunStore.ToRun"/> writes them): an archive built by an earlier build of the bench has runs stored
    /// before they were kept, and gets them here, once, from the runs' rows.
    /// </summary>
    private static async Task KeepTimelineReadingsAsync(string root, Facts facts)
    {
        await using var services = Services(root);
        await using var scope = services.CreateAsyncScope();
        var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
        var missing = await db.Runs.Where(r => r.Capture!.ItemId == facts.LongItem && r.Timeline == null).Select(r => r.Id).ToListAsync();
        foreach (int run in missing)
        {
            var rows = await db.Candidates.AsNoTracking().Where(c => c.RunId == run).ToListAsync();
            db.RunTimelines.Add(new RunTimeline { RunId = run, Readings = TapeVault.Archive.Timeline.TimelineReadingsValue.Write(rows) });
        }

        await db.SaveChangesAsync();
        if (missing.Count > 0)
        {
            Console.WriteLine($"the long tape's {missing.Count} runs were stored before their timeline readings were kept: kept now, from their rows, as a decode keeps them");
        }
    }

    private static async Task MeasurePagesAsync(string root, Facts facts, Options options)
    {
        // The app makes the first curator at its first start on the archive; the password chosen then is kept beside
        // the archive for the runs that reuse it.
        await using var app = await AppProcess.StartAsync(root);
        var saved = Path.Combine(root, "curator-password.txt");
        if (app.CuratorPassword.Length > 0)
        {
            await File.WriteAllTextAsync(saved, app.CuratorPassword);
        }

        using var api = await ApiSession.SignInAsync(app.Address, "curator", await File.ReadAllTextAsync(saved));
        var random = new Random(14);
        Console.WriteLine($"pages over loopback ({options.Requests} requests each after 3 warm-up, one client, signed in as a curator):");
        Console.WriteLine("| page | p50 ms | p95 ms | HTML KB |");
        Console.WriteLine("|---|---|---|---|");
        if (options.Measures("pages"))
        {
            await PageAsync(api, "collection (all tapes)", _ => $"/collections/{facts.CollectionId}", options.Requests);
            await PageAsync(api, "tape (3 captures, 1 image)", _ => $"/items/{facts.ItemIds[random.Next(facts.ItemIds.Length)]}", options.Requests);
            await PageAsync(api, "capture", _ => $"/captures/{facts.CaptureIds[random.Next(facts.CaptureIds.Length)]}", options.Requests);
            await PageAsync(api, "jobs", _ => "/jobs", options.Requests);
            await PageAsync(api, "collections (home)", _ => "/", options.Requests);
        }

        if (options.Measures("long"))
        {
            // The curator's first view after a merge: the merge job (run by the app's own worker, not timed) draws the
            // page's timeline when it stores the image, so the page reads a finished drawing.
            var kept = Path.Combine(root, "store", "derived", "timelines");
            await PageAsync(api, $"tape of {options.LongBlocks} blocks, 3 passes × 8 settings, first view after a merge", _ => $"/items/{facts.LongItem}", Math.Max(5, options.Requests / 4),
                before: async () =>
                {
                    await api.PostJsonAsync($"/api/items/{facts.LongItem}/merge");
                    await api.WaitForJobsAsync(TimeSpan.FromMinutes(10));
                });

            // Drawn by the page: the kept drawings are removed before each view (as when they are lost or the app's
            // build changed since the jobs drew them).
            await PageAsync(api, $"tape of {options.LongBlocks} blocks, 3 passes × 8 settings, first view, nothing kept", _ => Forget(kept, $"/items/{facts.LongItem}"), Math.Max(5, options.Requests / 4));
            await PageAsync(api, $"tape of {options.LongBlocks} blocks, 3 passes × 8 settings, later views", _ => $"/items/{facts.LongItem}", options.Requests);
        }

        Console.WriteLine("(page times are whole requests on loopback; the tape page tells its timeline's own server time in a Server-Timing header)");
    }

    private static async Task PageAsync(ApiSession api, string name, Func<int, string> path, int requests, bool optional = false, Func<Task>? before = null)
    {
        var times = new List<double>(requests);
        long size = 0;
        int refused = 0;
        var serverTimes = new List<double>();
        var drawnTimes = new List<double>();
        for (int r = -3; r < requests; r++)
        {
            if (before is not null)
            {
                await before();
            }

            string url = path(r);
            var started = Stopwatch.GetTimestamp();
            var response = await api.Http.GetAsync(url);
            var body = await response.Content.ReadAsByteArrayAsync();
            double ms = Stopwatch.GetElapsedTime(started).TotalMilliseconds;

            // A page that plots from the original is rate-limited per account: wait as told, then ask again (the wait
            // is not counted; the refusal is).
            while (response.StatusCode == System.Net.HttpStatusCode.TooManyRequests)
            {
                refused++;
                await Task.Delay(response.Headers.RetryAfter?.Delta ?? TimeSpan.FromSeconds(1));
                response.Dispose();
                started = Stopwatch.GetTimestamp();
                response = await api.Http.GetAsync(url);
                body = await response.Content.ReadAsByteArrayAsync();
                ms = Stopwatch.GetElapsedTime(started).TotalMilliseconds;
            }

            using var disposing = response;
            if (!response.IsSuccessStatusCode)
            {
                if (optional && response.StatusCode == System.Net.HttpStatusCode.NotFound)
                {
                    return;
                }

                throw new InvalidOperationException($"GET {url}: {(int)response.StatusCode}");
            }

            if (r >= 0)
            {
                times.Add(ms);
                size = Math.Max(size, body.Length);
                if (response.Headers.TryGetValues("Server-Timing", out var timings)
                    && ServerTimingDuration().Match(string.Join(",", timings)) is { Success: true } timing)
                {
                    (timing.Groups[1].Value.Contains("earlier", StringComparison.Ordinal) ? serverTimes : drawnTimes).Add(double.Parse(timing.Groups[2].Value, CultureInfo.InvariantCulture));
                }
            }
        }

        times.Sort();
        serverTimes.Sort();
        drawnTimes.Sort();
        string timeline = drawnTimes.Count > 0 ? $" timeline read and drawn anew on the server (Server-Timing): p50 {Percentile(drawnTimes, 0.50):0.0} ms, p95 {Percentile(drawnTimes, 0.95):0.0} ms ({drawnTimes.Count} views);" : string.Empty;
        timeline += serverTimes.Count > 0 ? $" timeline drawn earlier, read: p50 {Percentile(serverTimes, 0.50):0.0} ms, p95 {Percentile(serverTimes, 0.95):0.0} ms ({serverTimes.Count} views)" : string.Empty;
        Console.WriteLine($"| {name} | {Percentile(times, 0.50):0.0} | {Percentile(times, 0.95):0.0} | {size / 1024.0:0.0} |{timeline}{(refused > 0 ? $" ({refused} refused by the plot rate limit, asked again after the wait)" : string.Empty)}");
    }

    /// <summary>
    /// The long tape's page timeline drawn anew in this process (as the page draws it when no drawing is kept), each
    /// view on a context of its own after the kept drawings are removed: wall and processor time, and the drawing's size.
    /// </summary>
    private static async Task MeasureDrawingAsync(string root, Facts facts, Options options)
    {
        await using var services = Services(root);
        var kept = Path.Combine(root, "store", "derived", "timelines");
        var store = services.GetRequiredService<TapeVault.Archive.Storage.ContentStore>();
        var walls = new List<double>();
        var cpus = new List<double>();
        int size = 0;
        string digest = string.Empty;
        for (int r = -3; r < options.Requests; r++)
        {
            Forget(kept, string.Empty);
            await using var scope = services.CreateAsyncScope();
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            string accession = await db.Items.Where(i => i.Id == facts.LongItem).Select(i => i.AccessionNumber).SingleAsync();
            double cpu = Process.GetCurrentProcess().TotalProcessorTime.TotalMilliseconds;
            long started = Stopwatch.GetTimestamp();
            var (drawing, wasKept) = await TapeVault.Archive.Timeline.TimelineDrawings.DrawingAsync(
                db, store, facts.LongItem, TapeVault.Archive.Timeline.TimelineDrawings.PageTitle(accession), TapeVault.Archive.Timeline.TimelineDrawings.PagePositionLinks(facts.LongItem),
                (sha, c) => TapeVault.Archive.Timeline.TimelineDrawings.ReadStoredImageAsync(store, sha, c));
            double wall = Stopwatch.GetElapsedTime(started).TotalMilliseconds;
            cpu = Process.GetCurrentProcess().TotalProcessorTime.TotalMilliseconds - cpu;
            if (wasKept)
            {
                throw new InvalidOperationException("the long tape's drawing was read from a kept one after they were removed");
            }

            if (r >= 0)
            {
                walls.Add(wall);
                cpus.Add(cpu);
                size = System.Text.Encoding.UTF8.GetByteCount(drawing.Drawing) + (drawing.FoldedDrawing is null ? 0 : System.Text.Encoding.UTF8.GetByteCount(drawing.FoldedDrawing));
                digest = Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(System.Text.Encoding.UTF8.GetBytes(drawing.Drawing + "\n" + drawing.FoldedDrawing)));
            }
        }

        walls.Sort();
        cpus.Sort();
        Console.WriteLine($"the long tape's timeline drawn anew in this process ({options.Requests} views after 3 warm-up, kept drawings removed before each): " +
            $"wall p50 {Percentile(walls, 0.50):0.0} ms, p95 {Percentile(walls, 0.95):0.0} ms; processor p50 {Percentile(cpus, 0.50):0.0} ms, p95 {Percentile(cpus, 0.95):0.0} ms; SVG {size / 1024.0:0.0} KB, SHA-256 of the drawing and its folded lanes {digest[..16]}…");
    }

    /// <summary>
    /// The long tape's first run stored again as a decode job stores it, inside a write transaction that is rolled back
    /// (the archive is left as it was): how long the write lock is held from its begin to the last row written, by
    /// EF Core's change tracking of every reading (as the decode job stored it before) and by
    /// <see cref="RunStore.SaveAsync"/> (the run's row through EF Core, its readings with one statement), alternating,
    /// three rounds each. Every other writer of the archive waits that long.
    /// </summary>
    private static async Task MeasureStoreAsync(string root, Facts facts)
    {
        await using var services = Services(root);
        var contexts = services.GetRequiredService<IDbContextFactory<ArchiveDbContext>>();
        int runId;
        await using (var db = await contexts.CreateDbContextAsync())
        {
            runId = await db.Runs.Where(r => facts.LongCaptures.Contains(r.CaptureId)).OrderBy(r => r.Id).Select(r => r.Id).FirstAsync();
        }

        // A fresh copy of the run and its readings, as the run store makes them (no ids yet).
        async Task<DecodeRun> CopyAsync()
        {
            await using var db = await contexts.CreateDbContextAsync();
            var run = await db.Runs.AsNoTracking().SingleAsync(r => r.Id == runId);
            var rows = await db.Candidates.AsNoTracking().Where(c => c.RunId == runId).OrderBy(c => c.Id).ToListAsync();
            foreach (var row in rows)
            {
                row.Id = 0;
                row.RunId = 0;
            }

            run.Id = 0;
            run.Candidates = rows;
            run.Timeline = new RunTimeline { Readings = TapeVault.Archive.Timeline.TimelineReadingsValue.Write(rows) };
            return run;
        }

        static double Cpu() => Process.GetCurrentProcess().TotalProcessorTime.TotalMilliseconds;
        var rounds = new Dictionary<string, List<(double Wall, double Cpu)>> { ["EF Core change tracking of every reading (before)"] = [], ["RunStore.SaveAsync (after)"] = [] };
        int readings = 0;
        for (int round = 0; round < 3; round++)
        {
            foreach (var (name, times) in rounds)
            {
                var run = await CopyAsync();
                readings = run.Candidates.Count;
                await using var write = await contexts.CreateDbContextAsync();
                await using var transaction = await ArchiveDatabase.BeginWriteAsync(write);
                double cpu = Cpu();
                var clock = Stopwatch.StartNew();
                if (name.StartsWith("EF", StringComparison.Ordinal))
                {
                    write.Runs.Add(run);
                    await write.SaveChangesAsync();
                }
                else
                {
                    await RunStore.SaveAsync(write, run);
                }

                times.Add((clock.Elapsed.TotalMilliseconds, Cpu() - cpu));
                await transaction.RollbackAsync();
            }
        }

        Console.WriteLine($"the long tape's first run ({readings} readings) stored as a decode job stores it, rolled back; the write lock held from its begin to the last row (3 rounds each, alternating; load {MachineLoad.Averages()}):");
        foreach (var (name, times) in rounds)
        {
            Console.WriteLine($"  {name}: wall {string.Join(", ", times.Select(t => t.Wall.ToString("0", CultureInfo.InvariantCulture)))} ms; processor {string.Join(", ", times.Select(t => t.Cpu.ToString("0", CultureInfo.InvariantCulture)))} ms");
        }
    }

    private static async Task MeasureMergeAsync(string root, Facts facts)
    {
        await using var services = Services(root);
        int jobId;
        await using (var scope = services.CreateAsyncScope())
        {
            jobId = (await scope.ServiceProvider.GetRequiredService<CuratorActions>().QueueMergeAsync(facts.LongItem, Agent)).Id;
        }

        var clock = Stopwatch.StartNew();
        await RunQueueAsync(services);
        clock.Stop();
        await using (var scope = services.CreateAsyncScope())
        {
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            var job = await db.Jobs.AsNoTracking().FirstAsync(j => j.Id == jobId);
            double seconds = job.FinishedUtc is { } f && job.StartedUtc is { } s ? (f - s).TotalSeconds : double.NaN;
            int readings = await db.Candidates.CountAsync(c => c.Run!.Capture!.ItemId == facts.LongItem);
            Console.WriteLine($"merge of the long tape's 3 passes ({readings} readings): merge job {seconds:0.00} s from start to finish ({job.State}: {job.ProgressText})");
        }
    }

    private static async Task MeasurePublishAsync(string root, Facts facts)
    {
        await using var services = Services(root);
        await using var scope = services.CreateAsyncScope();
        var publisher = scope.ServiceProvider.GetRequiredService<CataloguePublisher>();
        var zip = Path.Combine(root, "catalogue.zip");

        // The first publication surveys every tape's capture for its histogram (none kept: the kept surveys are removed
        // first); the second finds them kept, as a club publishing again after more tapes were decoded would.
        var surveys = Path.Combine(root, "store", "derived", "surveys");
        if (Directory.Exists(surveys))
        {
            Directory.Delete(surveys, recursive: true);
        }

        var clock = Stopwatch.StartNew();
        await using (var file = File.Create(zip))
        {
            await publisher.PublishZipAsync(facts.CollectionId, file);
        }

        double first = clock.Elapsed.TotalSeconds;
        clock.Restart();
        var site = await publisher.SiteAsync(facts.CollectionId);
        double gather = clock.Elapsed.TotalSeconds;
        clock.Restart();
        await using (var file = File.Create(zip))
        {
            await publisher.PublishZipAsync(facts.CollectionId, file);
        }

        double again = clock.Elapsed.TotalSeconds;

        // Where the rest of a publication goes: the site's files written (CatalogueWriter.Write, as PublishZipAsync
        // writes them before zipping), the remainder being the zip.
        var folder = Path.Combine(root, "catalogue-written");
        if (Directory.Exists(folder))
        {
            Directory.Delete(folder, recursive: true);
        }

        clock.Restart();
        var written = TapeVault.Core.Catalogue.CatalogueWriter.Write(site, folder);
        double write = clock.Elapsed.TotalSeconds;
        long writtenBytes = written.Sum(f => new FileInfo(Path.Combine(folder, f)).Length);
        Directory.Delete(folder, recursive: true);
        Console.WriteLine($"catalogue of {facts.Tapes} tapes (CataloguePublisher.PublishZipAsync, {new FileInfo(zip).Length / 1e6:0.0} MB zip of {written.Count} files, {writtenBytes / 1e6:0.0} MB): first publication {first:0.0} s (every histogram surveyed); "
            + $"published again {again:0.0} s (surveys kept); of a publication: gathering its {site.Items.Count} tapes from the archive {gather:0.0} s (CataloguePublisher.SiteAsync), "
            + $"writing the site's files {write:0.0} s (CatalogueWriter.Write), the zip the rest");
        File.Delete(zip);

        // The publication as a curator asks for it: a publish job, run by the job runner, which stores the zip and
        // records the export and an event on the collection and on every tape in the commit that ends the job.
        int jobId;
        await using (var queueing = services.CreateAsyncScope())
        {
            jobId = (await queueing.ServiceProvider.GetRequiredService<CuratorActions>().QueueScopedAsync(JobKinds.Publish, facts.CollectionId, null, Agent)).Id;
        }

        clock.Restart();
        await RunQueueAsync(services);
        double runner = clock.Elapsed.TotalSeconds;
        await using var reading = services.CreateAsyncScope();
        var job = await reading.ServiceProvider.GetRequiredService<ArchiveDbContext>().Jobs.AsNoTracking().FirstAsync(j => j.Id == jobId);
        double seconds = job.FinishedUtc is { } f && job.StartedUtc is { } s ? (f - s).TotalSeconds : double.NaN;
        Console.WriteLine($"catalogue published by a publish job (stored, recorded with one event on the collection): {seconds:0.0} s from start to finish ({job.State}: {job.ProgressText}); the job runner's whole run {runner:0.0} s");
    }

    private static async Task MeasureFixityAsync(string root)
    {
        var objects = Path.Combine(root, "store", "objects");
        var files = Directory.EnumerateFiles(objects, "*", SearchOption.AllDirectories).ToList();
        long bytes = files.Sum(f => new FileInfo(f).Length);

        // GNU sha256sum over the same files: once to warm the page cache for both, then timed: its wall-clock time, and
        // its processor time (user + system, from the shell's `times`) beside it, since the machine is shared.
        var cpus = new List<double>();
        double Sha256sum()
        {
            var list = Path.Combine(root, "objects.list");
            File.WriteAllLines(list, files);
            var start = new ProcessStartInfo("sh", ["-c", $"xargs -a '{list}' -d '\\n' sha256sum > /dev/null; times"]) { UseShellExecute = false, RedirectStandardOutput = true };
            var clock = Stopwatch.StartNew();
            using var process = Process.Start(start)!;
            string times = process.StandardOutput.ReadToEnd();
            process.WaitForExit();
            if (process.ExitCode != 0)
            {
                throw new InvalidOperationException("sha256sum failed.");
            }

            // `times` prints the shell's user and system time, then its children's: "0m1.234s 0m0.567s".
            var children = ShellTimes().Matches(times).Skip(2).Select(m => (60 * double.Parse(m.Groups[1].Value, CultureInfo.InvariantCulture)) + double.Parse(m.Groups[2].Value, CultureInfo.InvariantCulture)).ToList();
            cpus.Add(children.Sum());
            return clock.Elapsed.TotalSeconds;
        }

        static double Cpu() => Process.GetCurrentProcess().TotalProcessorTime.TotalSeconds;
        Sha256sum();
        cpus.Clear();
        double outside = Sha256sum();
        await using var services = Services(root);

        // The audit as `tapevault verify` runs it (the whole event chain walked), then as the scheduled audit runs it
        // (the chain walked from the checkpoint the one before recorded), each with sha256sum run again after it.
        async Task<(double Seconds, double Cpu, FixityReport Report)> AuditAsync(ChainWalk walk)
        {
            await using var scope = services.CreateAsyncScope();
            var audit = scope.ServiceProvider.GetRequiredService<FixityAudit>();
            double cpu = Cpu();
            var clock = Stopwatch.StartNew();
            var report = await audit.RunAsync(null, Agent, walk);
            return (clock.Elapsed.TotalSeconds, Cpu() - cpu, report);
        }

        // The walk along the whole chain alone (EventChain.VerifyAsync, as the audit calls it, on a context of its own).
        double walkCpu = Cpu();
        var walkClock = Stopwatch.StartNew();
        ChainReport walked;
        await using (var walkScope = services.CreateAsyncScope())
        {
            walked = await EventChain.VerifyAsync(walkScope.ServiceProvider.GetRequiredService<ArchiveDbContext>());
        }

        double walkSeconds = walkClock.Elapsed.TotalSeconds;
        walkCpu = Cpu() - walkCpu;
        var (whole, wholeCpu, wholeReport) = await AuditAsync(ChainWalk.Whole);
        double outside2 = Sha256sum();
        var (due, dueCpu, dueReport) = await AuditAsync(ChainWalk.WhenDue);
        double outside3 = Sha256sum();

        // The audit's own hashing of the same files alone (ContentStore.HashStored on every core, as the audit
        // calls it), without the event chain's check and the event it records per file.
        await using var hashScope = services.CreateAsyncScope();
        var store = hashScope.ServiceProvider.GetRequiredService<TapeVault.Archive.Storage.ContentStore>();
        var names = files.Select(Path.GetFileName).ToList();
        double hashCpu = Cpu();
        var hashClock = Stopwatch.StartNew();
        Parallel.ForEach(names, new ParallelOptions { MaxDegreeOfParallelism = Environment.ProcessorCount }, name => store.HashStored(name!));
        double hashing = hashClock.Elapsed.TotalSeconds;
        hashCpu = Cpu() - hashCpu;
        double outside4 = Sha256sum();
        double[] references = [outside, outside2, outside3, outside4];
        double reference = references.Min();
        double cpuReference = cpus.Min();
        string Audit(string name, double seconds, double cpu, FixityReport report) =>
            $"{name}: {seconds:0.00} s ({bytes / 1e6 / seconds:0} MB/s, {files.Count / seconds:0} files/s; {report.Good}/{report.Checked} good, {report.Problems.Count} problem(s); "
            + $"{report.Chain.Events} events walked{(report.Chain.From is { } from ? $" after the checkpoint, {from.EventId}" : " (whole chain)")}); ratio to sha256sum {seconds / reference:0.00} (to its slowest run {seconds / references.Max():0.00}); "
            + $"processor time {cpu:0.00} s, ratio {cpu / cpuReference:0.00}";
        Console.WriteLine($"fixity over {files.Count} files, {bytes / 1e6:0} MB; GNU sha256sum {string.Join(", ", references.Select(r => r.ToString("0.00", CultureInfo.InvariantCulture)))} s ({bytes / 1e6 / reference:0} MB/s at best), "
            + $"processor time {string.Join(", ", cpus.Select(r => r.ToString("0.00", CultureInfo.InvariantCulture)))} s; load {MachineLoad.Averages()}");
        Console.WriteLine("  " + Audit("audit walking the whole chain (verify)", whole, wholeCpu, wholeReport));
        Console.WriteLine("  " + Audit("audit walking from the last checkpoint (scheduled)", due, dueCpu, dueReport));
        Console.WriteLine($"  its hashing alone {hashing:0.00} s, ratio to sha256sum {hashing / reference:0.00}; processor time {hashCpu:0.00} s");
        Console.WriteLine($"  the walk along the whole chain alone (EventChain.VerifyAsync, before the audits): {walked.Events} events in {walkSeconds:0.00} s, processor time {walkCpu:0.00} s ({(walked.Intact ? "intact" : "broken")})");
    }

    /// <summary>One time as the shell's <c>times</c> prints it: "1m2.345s".</summary>
    [System.Text.RegularExpressions.GeneratedRegex(@"(\d+)m([0-9.]+)s")]
    private static partial System.Text.RegularExpressions.Regex ShellTimes();

    [System.Text.RegularExpressions.GeneratedRegex(@"timeline;desc=""([^""]*)"";dur=([0-9.]+)")]
    private static partial System.Text.RegularExpressions.Regex ServerTimingDuration();

    private static string Forget(string folder, string url)
    {
        if (Directory.Exists(folder))
        {
            Directory.Delete(folder, recursive: true);
        }

        return url;
    }

    private static double Percentile(List<double> sorted, double q) => sorted[Math.Min(sorted.Count - 1, (int)Math.Ceiling(q * sorted.Count) - 1)];

    /// <summary>A 16-bit mono 8 kHz PCM WAV of the given size holding noise from its own seed, so every file is distinct.</summary>
    private static byte[] NoiseWav(int size, int seed)
    {
        var noise = new byte[Math.Max(0, size - 44) & ~1];
        new Random(seed).NextBytes(noise);
        using var bytes = new MemoryStream();
        using (var writer = new NAudio.Wave.WaveFileWriter(bytes, new NAudio.Wave.WaveFormat(8000, 16, 1)))
        {
            writer.Write(noise, 0, noise.Length);
        }

        return bytes.ToArray();
    }

    private static void MakeWritable(string folder)
    {
        foreach (var file in Directory.EnumerateFiles(folder, "*", SearchOption.AllDirectories))
        {
            File.SetAttributes(file, FileAttributes.Normal);
        }
    }
}
