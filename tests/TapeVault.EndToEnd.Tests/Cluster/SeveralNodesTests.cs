using System.Diagnostics;
using System.Globalization;
using System.Text;
using System.Text.Json;
using Npgsql;
using TapeVault.Archive.Tests.PostgreSql;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Tests.Shared;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.EndToEnd.Tests.Cluster;

/// <summary>
/// The deployment for several machines, on loopback with real parts: the web app as two processes serving pages only
/// (<c>TapeVault:Web:Role = Pages</c>, their sign-in keys in one shared folder) and two <c>tapevault worker</c>
/// processes, the archive and the clustered job schedule on one temporary PostgreSQL 15 cluster, one content store
/// folder shared by all. Twelve decodes, then the four merges of their tapes, are queued through the JSON API as a
/// curator would; one worker is SIGKILLed in the middle of a decode. Every job must end done exactly once, the runs and
/// images must be those that one machine (the web app alone on SQLite) makes of the same captures, no row may point
/// at a missing parent, and the event chain must verify.
/// </summary>
[Collection(PostgreSqlGroup.Name)]
public sealed class SeveralNodesTests(PostgreSqlServer server, ITestOutputHelper log)
{
    private const int Tapes = 4;
    private const int PassesPerTape = 3;

    /// <summary>Quartz.NET's scheduler name for every node of one archive (JobEngine.SchedulerName).</summary>
    private const string SchedulerName = "TapeVault";

    // A cap on every wait, never a timing claim: the test fails with the state it saw if a condition never holds.
    private static readonly TimeSpan Cap = TimeSpan.FromMinutes(15);

    [Fact]
    public async Task WebAppAndTwoWorkersOnPostgreSql_AWorkerKilledMidDecode_EveryJobDoneOnce_SameAsOneMachine()
    {
        var folder = Directory.CreateTempSubdirectory("tapevault-cluster-").FullName;
        try
        {
            var captures = WriteCaptures(Path.Combine(folder, "captures"));

            // One machine: the web app alone on SQLite runs the same decodes and merges in its own process.
            Outcome alone;
            await using (var app = await AppProcess.StartAsync())
            {
                using var api = await ApiSession.SignInAsync(app.Address, "curator", app.CuratorPassword);
                var queued = await QueueDecodesAsync(api, captures);
                await api.WaitForJobsAsync(Cap);
                await QueueMergesAsync(api, queued);
                alone = await CollectAsync(api, queued, await api.WaitForJobsAsync(Cap));
            }

            var several = await RunOnSeveralNodesAsync(folder, captures);

            // The same runs (every setting's reading of every position, with its margins, confidence and payload hash)
            // and the same images (every block's status, confidence, payload hash and winning reading) as on one
            // machine. The images' own SHA-256 differ: the container records the moment it was made.
            Assert.Equal(Tapes * PassesPerTape, alone.Runs.Count);
            Assert.Equal(Tapes, alone.Images.Count);
            Assert.Equal(alone.Runs.Keys.Order(), several.Runs.Keys.Order());
            foreach (var (capture, run) in alone.Runs)
            {
                Assert.True(run == several.Runs[capture], $"The run of capture {capture} differs from one machine's:\n{run}\n---\n{several.Runs[capture]}");
            }

            foreach (var (tape, image) in alone.Images)
            {
                Assert.True(image == several.Images[tape], $"The image of {tape} differs from one machine's:\n{image}\n---\n{several.Images[tape]}");
            }

        }
        finally
        {
            NpgsqlConnection.ClearAllPools();
            Directory.Delete(folder, recursive: true);
        }
    }

    private async Task<Outcome> RunOnSeveralNodesAsync(string folder, IReadOnlyList<CaptureFile> captures)
    {
        string archive = await server.CreateDatabaseAsync();
        string schedule = await server.CreateDatabaseAsync();
        string root = Path.Combine(folder, "web");
        string store = Path.Combine(folder, "shared-store");
        Directory.CreateDirectory(root);
        var settings = new Dictionary<string, string>
        {
            ["TapeVault__Archive__Provider"] = "PostgreSql",
            ["TapeVault__Archive__ConnectionString"] = archive,
            ["TapeVault__Archive__StorePath"] = store,
            ["TapeVault__Jobs__Store"] = "PostgreSql",
            ["TapeVault__Jobs__ConnectionString"] = schedule,
            ["TapeVault__Jobs__CheckinSeconds"] = "2",
        };

        // Two web nodes serving pages, as behind one address: their sign-in keys in one shared folder, so that a
        // session begun on one is honoured by the other.
        var pages = new Dictionary<string, string>(settings)
        {
            ["TapeVault__Web__Role"] = "Pages",
            ["TapeVault__Web__KeysFolder"] = Path.Combine(folder, "shared-keys"),
        };
        await using var web = await AppProcess.StartAsync(root, pages);
        using var api = await ApiSession.SignInAsync(web.Address, "curator", web.CuratorPassword);
        var queued = await QueueDecodesAsync(api, captures);
        var otherRoot = Directory.CreateDirectory(Path.Combine(folder, "web2")).FullName;
        await using var otherWeb = await AppProcess.StartAsync(otherRoot, pages);
        using (var seen = await api.Http.GetAsync(new Uri(otherWeb.Address, "/api/jobs?take=1000")))
        {
            Assert.True(seen.IsSuccessStatusCode, $"The second web node refused the first one's session: {(int)seen.StatusCode}");
            var listed = JsonDocument.Parse(await seen.Content.ReadAsStringAsync()).RootElement.EnumerateArray().Select(j => j.GetProperty("id").GetInt32());
            Assert.Equal(queued.DecodeJobs.Values.Order(), listed.Order());
        }

        // The doomed worker starts first and alone, so that the one node in the schedule's state table is it.
        var worker = new Dictionary<string, string>(settings);
        using var doomed = CliProcess.StartWorker(Path.Combine(folder, "web"), ["--store", store], worker);
        using var doomedEnds = CliProcess.EndedWithTest(doomed);
        _ = doomed.StandardOutput.ReadToEndAsync();
        _ = doomed.StandardError.ReadToEndAsync();
        string doomedNode = await WaitForValueAsync(
            () => ScalarAsync<string>(schedule, "SELECT instance_name FROM qrtz_scheduler_state WHERE sched_name = @s", ("s", SchedulerName)),
            "the first worker to check in to the clustered schedule");
        using var survivor = CliProcess.StartWorker(Path.Combine(folder, "web"), ["--store", store], worker);
        using var survivorEnds = CliProcess.EndedWithTest(survivor);
        var survivorOutput = survivor.StandardOutput.ReadToEndAsync();
        var survivorError = survivor.StandardError.ReadToEndAsync();

        // Kill the doomed worker in the middle of one of its decodes. Its firing is found in Quartz's table of fired
        // triggers under its instance; the worker is stopped (SIGSTOP) and the job looked at again, so that the kill
        // (SIGKILL) lands on a decode that had not finished when the process stopped running.
        int victim = 0;
        var decodes = queued.DecodeJobs.Values.ToHashSet();
        var deadline = DateTime.UtcNow + Cap;
        while (victim == 0)
        {
            if (DateTime.UtcNow > deadline || doomed.HasExited)
            {
                throw new TimeoutException($"The first worker never held a running decode (exited: {doomed.HasExited}).");
            }

            var states = (await api.GetJsonAsync("/api/jobs?take=1000")).EnumerateArray()
                .Where(j => decodes.Contains(j.GetProperty("id").GetInt32())).Select(j => j.GetProperty("state").GetString()).ToList();
            Assert.True(states.Any(s => s is "queued" or "running"), "Every decode finished before the first worker was seen holding one: make the captures longer.");

            // Best in the thick of a decode (the decoder has reported progress); a decode too short to report any is
            // taken at its start only when no other decode is left for this worker to take.
            bool lastChance = !states.Contains("queued");
            foreach (int held in await HeldJobsAsync(schedule, doomedNode))
            {
                if (!decodes.Contains(held) || !await IsDecodingAsync(api, held, lastChance))
                {
                    continue;
                }

                Signal(doomed, "STOP");
                if ((await HeldJobsAsync(schedule, doomedNode)).Contains(held) && await IsDecodingAsync(api, held, lastChance))
                {
                    victim = held;
                    var cut = await api.GetJsonAsync($"/api/jobs/{held}");
                    log.WriteLine($"Worker {doomedNode} killed holding decode job {held} at progress {cut.GetProperty("progress").GetDouble():0.00} ('{cut.GetProperty("progressText").GetString()}').");
                    doomed.Kill(entireProcessTree: true);
                    await doomed.WaitForExitAsync();
                    break;
                }

                Signal(doomed, "CONT");
            }

            await Task.Delay(20);
        }

        // The survivor finishes the decodes, the killed one among them; then the merges are queued (a merge needs its
        // tape's runs) and run on it too. At the end it is stopped as a service manager stops it (SIGTERM), cleanly.
        await api.WaitForJobsAsync(Cap);
        await QueueMergesAsync(api, queued);
        var jobs = await api.WaitForJobsAsync(Cap);
        Signal(survivor, "TERM");
        using (var cap = new CancellationTokenSource(Cap))
        {
            await survivor.WaitForExitAsync(cap.Token);
        }

        Assert.True(survivor.ExitCode == 0, $"The surviving worker exited {survivor.ExitCode}: {await survivorError}{await survivorOutput}");

        // Every job done; the killed decode was started twice (the dead node's attempt and the survivor's), every other
        // decode once.
        Assert.Equal(Tapes * (PassesPerTape + 1), jobs.Count);
        Assert.All(jobs, j => Assert.True(j.GetProperty("state").GetString() == "done", $"job {j}"));
        foreach (var job in jobs.Where(j => j.GetProperty("kind").GetString() == "decode"))
        {
            Assert.Equal(job.GetProperty("id").GetInt32() == victim ? 2 : 1, job.GetProperty("attempts").GetInt32());
        }

        // Done exactly once: one run per capture, one decode event per run, one image per tape.
        await using (var db = new NpgsqlConnection(archive))
        {
            await db.OpenAsync();
            Assert.Equal(Tapes * PassesPerTape, await CountAsync(db, "SELECT COUNT(*) FROM \"Runs\""));
            Assert.Equal(Tapes * PassesPerTape, await CountAsync(db, "SELECT COUNT(DISTINCT \"CaptureId\") FROM \"Runs\""));
            Assert.Equal(Tapes * PassesPerTape, await CountAsync(db, "SELECT COUNT(*) FROM \"Events\" WHERE \"EventType\" = 'decode'"));
            Assert.Equal(Tapes, await CountAsync(db, "SELECT COUNT(*) FROM \"Images\""));
            Assert.Equal(Tapes, await CountAsync(db, "SELECT COUNT(DISTINCT \"ItemId\") FROM \"Images\""));
            await AssertSoundAsync(db);
        }

        // The event chain and every stored object, as an operator proves them: tapevault verify (exit 0).
        using (var verify = CliProcess.Start(root, ["verify", "--store", store], settings))
        {
            var output = verify.StandardOutput.ReadToEndAsync();
            var error = verify.StandardError.ReadToEndAsync();
            using var cap = new CancellationTokenSource(Cap);
            await verify.WaitForExitAsync(cap.Token);
            Assert.True(verify.ExitCode == 0, $"tapevault verify exited {verify.ExitCode}: {await output}{await error}");
            Assert.Contains("Event chain intact", await output, StringComparison.Ordinal);
        }

        var outcome = await CollectAsync(api, queued, jobs);
        foreach (var (tape, image) in outcome.Images)
        {
            log.WriteLine($"{tape}: {image.Split('\n')[3..9].Aggregate((a, b) => a + " " + b)}");
        }

        return outcome;
    }

    /// <summary>
    /// What SQLite's PRAGMA integrity_check and foreign_key_check say of a file, asked of PostgreSQL: every foreign key
    /// is validated and no row names a parent that is missing (counted for each key of the schema, whatever the server
    /// thinks), and every B-tree index agrees with its table (amcheck's bt_index_check with heapallindexed, a contrib
    /// module shipped with PostgreSQL 15).
    /// </summary>
    private static async Task AssertSoundAsync(NpgsqlConnection db)
    {
        var keys = new List<(string Name, string Child, string Parent, bool Validated, string[] Columns, string[] ParentColumns)>();
        await using (var command = new NpgsqlCommand(
            """
            SELECT c.conname, c.conrelid::regclass::text, c.confrelid::regclass::text, c.convalidated,
                   ARRAY(SELECT a.attname FROM unnest(c.conkey) WITH ORDINALITY k(n, o) JOIN pg_attribute a ON a.attrelid = c.conrelid AND a.attnum = k.n ORDER BY k.o)::text[],
                   ARRAY(SELECT a.attname FROM unnest(c.confkey) WITH ORDINALITY k(n, o) JOIN pg_attribute a ON a.attrelid = c.confrelid AND a.attnum = k.n ORDER BY k.o)::text[]
            FROM pg_constraint c
            WHERE c.contype = 'f' AND c.connamespace = 'public'::regnamespace
            """, db))
        await using (var reader = await command.ExecuteReaderAsync())
        {
            while (await reader.ReadAsync())
            {
                keys.Add((reader.GetString(0), reader.GetString(1), reader.GetString(2), reader.GetBoolean(3), reader.GetFieldValue<string[]>(4), reader.GetFieldValue<string[]>(5)));
            }
        }

        // The archive's schema has foreign keys from runs to captures, candidates to runs, images to items, ...: a check
        // over none would prove nothing.
        Assert.True(keys.Count >= 10, $"Only {keys.Count} foreign keys found.");
        foreach (var key in keys)
        {
            Assert.True(key.Validated, $"Foreign key {key.Name} is not validated.");
            var present = string.Join(" AND ", key.Columns.Select(c => $"x.{Quote(c)} IS NOT NULL"));
            var match = string.Join(" AND ", key.Columns.Zip(key.ParentColumns, (c, p) => $"p.{Quote(p)} = x.{Quote(c)}"));
            long orphans = await CountAsync(db, $"SELECT COUNT(*) FROM {key.Child} x WHERE {present} AND NOT EXISTS (SELECT 1 FROM {key.Parent} p WHERE {match})");
            Assert.True(orphans == 0, $"{orphans} row(s) of {key.Child} name a missing {key.Parent} ({key.Name}).");
        }

        await using (var extension = new NpgsqlCommand("CREATE EXTENSION IF NOT EXISTS amcheck", db))
        {
            await extension.ExecuteNonQueryAsync();
        }

        // bt_index_check raises an error on the first index that does not agree with its table.
        int indexes = 0;
        await using (var check = new NpgsqlCommand(
            """
            SELECT c.relname, bt_index_check(i.indexrelid, true)::text
            FROM pg_index i JOIN pg_class c ON c.oid = i.indexrelid JOIN pg_am a ON a.oid = c.relam
            WHERE a.amname = 'btree' AND c.relnamespace = 'public'::regnamespace
            """, db))
        await using (var reader = await check.ExecuteReaderAsync())
        {
            while (await reader.ReadAsync())
            {
                indexes++;
            }
        }

        Assert.True(indexes >= 10, $"Only {indexes} indexes checked.");
    }

    /// <summary>What one deployment made: per capture (by SHA-256) its run, per tape (by accession number) its image, as comparable text.</summary>
    private sealed record Outcome(Dictionary<string, string> Runs, Dictionary<string, string> Images);

    private sealed record Queued(Dictionary<string, int> DecodeJobs, Dictionary<string, int> Items);

    private sealed record CaptureFile(string Tape, string Path, string Sha256);

    /// <summary>
    /// Four tapes of the demo format, three passes each with their own damage (noise, wow, dropouts), about half a
    /// minute to a minute of audio each, so that the merge has real work: passes that disagree where one was hurt.
    /// </summary>
    private static List<CaptureFile> WriteCaptures(string folder)
    {
        Directory.CreateDirectory(folder);
        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");
        var list = new List<CaptureFile>();
        for (int tape = 0; tape < Tapes; tape++)
        {
            var random = new Random(7000 + tape);
            var bytes = new byte[1200 + (tape * 200)];
            random.NextBytes(bytes);
            for (int pass = 0; pass < PassesPerTape; pass++)
            {
                var path = Path.Combine(folder, $"tape{tape + 1}-pass{pass + 1}.wav");
                CaptureSynthesizer.Write(path, profile, [new TapeFile($"PROG{tape + 1}", bytes)], new ChannelDamage
                {
                    // The first pass badly hurt (the merge must take its blocks from the others), the rest fair.
                    SnrDb = pass == 0 ? 9 : 14 + (4 * pass),
                    WowPercent = 0.2,
                    FlutterPercent = 0.1,
                    RandomDropoutsPerMinute = pass == 0 ? 10 : 0,
                    Seed = 100 + (10 * tape) + pass,
                });
                list.Add(new CaptureFile($"CL-{tape + 1}", path, Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(File.ReadAllBytes(path)))));
            }
        }

        return list;
    }

    /// <summary>As a curator: a collection, an item per tape, each pass uploaded and its decode queued.</summary>
    private static async Task<Queued> QueueDecodesAsync(ApiSession api, IReadOnlyList<CaptureFile> captures)
    {
        int collection = (await api.PostJsonAsync("/api/collections", new { name = "Loaned shelf" })).GetProperty("id").GetInt32();
        var items = new Dictionary<string, int>();
        var decodes = new Dictionary<string, int>();
        foreach (var capture in captures)
        {
            if (!items.TryGetValue(capture.Tape, out int item))
            {
                item = (await api.PostJsonAsync($"/api/collections/{collection}/items", new { accessionNumber = capture.Tape, title = $"Tape {capture.Tape}" })).GetProperty("id").GetInt32();
                items[capture.Tape] = item;
            }

            var stored = await api.UploadAsync(item, Path.GetFileName(capture.Path), new ByteArrayContent(await File.ReadAllBytesAsync(capture.Path)));
            Assert.Equal(capture.Sha256, stored.GetProperty("capture").GetProperty("sha256").GetString());
            int captureId = stored.GetProperty("capture").GetProperty("id").GetInt32();
            decodes[capture.Sha256] = (await api.PostJsonAsync($"/api/captures/{captureId}/decode", new { profile = "orrin-80" })).GetProperty("id").GetInt32();
        }

        return new Queued(decodes, items);
    }

    /// <summary>As a curator, once the tapes have runs: each tape's merge.</summary>
    private static async Task QueueMergesAsync(ApiSession api, Queued queued)
    {
        foreach (int item in queued.Items.Values)
        {
            await api.PostJsonAsync($"/api/items/{item}/merge");
        }
    }

    /// <summary>Reads every run and image through the API, keeping what must not depend on where or when it was made.</summary>
    private static async Task<Outcome> CollectAsync(ApiSession api, Queued queued, List<JsonElement> jobs)
    {
        var byId = jobs.ToDictionary(j => j.GetProperty("id").GetInt32());
        var runs = new Dictionary<string, string>();
        foreach (var (sha, jobId) in queued.DecodeJobs)
        {
            var job = byId[jobId];
            Assert.True(job.GetProperty("state").GetString() == "done", $"decode {job}");
            var run = await api.GetJsonAsync($"/api/runs/{job.GetProperty("resultId").GetInt32()}");
            var summary = run.GetProperty("run");
            runs[sha] = Text(
                summary, ["profileId", "settings", "codeVersion", "outcome", "positions", "cleanPositions"],
                run, ["captureFileName", "accessionNumber", "positions"]);
        }

        var images = new Dictionary<string, string>();
        foreach (var (tape, item) in queued.Items)
        {
            var list = (await api.GetJsonAsync($"/api/items/{item}/images")).EnumerateArray().ToList();
            Assert.True(list.Count == 1, $"Tape {tape} has {list.Count} images.");
            var image = await api.GetJsonAsync($"/api/images/{list[0].GetProperty("id").GetInt32()}");

            // The captures decode to something worth comparing: every tape's image has clean blocks.
            Assert.True(image.GetProperty("image").GetProperty("cleanBlocks").GetInt32() > 0, $"Tape {tape}'s image has no clean block: {image.GetProperty("image")}");
            images[tape] = Text(
                image.GetProperty("image"), ["version", "profileId", "codeVersion", "cleanBlocks", "votedBlocks", "repairedBlocks", "missingBlocks", "conflicts", "overallConfidence"],
                image, ["blocks", "files", "captures"]);
        }

        return new Outcome(runs, images);
    }

    private static string Text(JsonElement first, string[] firstFields, JsonElement second, string[] secondFields)
    {
        var text = new StringBuilder();
        foreach (var field in firstFields)
        {
            text.Append('"').Append(field).Append("\":").Append(first.GetProperty(field).GetRawText()).Append('\n');
        }

        foreach (var field in secondFields)
        {
            text.Append('"').Append(field).Append("\":").Append(second.GetProperty(field).GetRawText()).Append('\n');
        }

        return text.ToString();
    }

    /// <summary>The archive jobs a node is running now: Quartz's fired triggers of that instance, executing, keyed job-{id}.</summary>
    private static async Task<List<int>> HeldJobsAsync(string schedule, string node)
    {
        await using var db = new NpgsqlConnection(schedule);
        await db.OpenAsync();
        await using var command = new NpgsqlCommand(
            "SELECT job_name FROM qrtz_fired_triggers WHERE sched_name = @s AND instance_name = @n AND state = 'EXECUTING' AND job_group = 'archive'", db);
        command.Parameters.AddWithValue("s", SchedulerName);
        command.Parameters.AddWithValue("n", node);
        var held = new List<int>();
        await using var reader = await command.ExecuteReaderAsync();
        while (await reader.ReadAsync())
        {
            var name = reader.GetString(0);
            if (name.StartsWith("job-", StringComparison.Ordinal) && int.TryParse(name.AsSpan(4), NumberStyles.None, CultureInfo.InvariantCulture, out int id))
            {
                held.Add(id);
            }
        }

        return held;
    }

    /// <summary>Whether the job is running, and (unless <paramref name="started"/> will do) its decoder has reported progress.</summary>
    private static async Task<bool> IsDecodingAsync(ApiSession api, int jobId, bool started)
    {
        var job = await api.GetJsonAsync($"/api/jobs/{jobId}");
        return job.GetProperty("state").GetString() == "running" && (started || job.GetProperty("progress").GetDouble() > 0);
    }

    /// <summary>Sends a signal with the system's kill(1): STOP freezes the process where it is, CONT lets it go on (signal(7)).</summary>
    private static void Signal(Process process, string signal)
    {
        using var kill = Process.Start(new ProcessStartInfo("kill") { ArgumentList = { "-s", signal, process.Id.ToString(CultureInfo.InvariantCulture) } })!;
        kill.WaitForExit();
        Assert.Equal(0, kill.ExitCode);
    }

    private static async Task<T> WaitForValueAsync<T>(Func<Task<T?>> read, string what)
        where T : class
    {
        var deadline = DateTime.UtcNow + Cap;
        while (true)
        {
            if (await read() is { } value)
            {
                return value;
            }

            if (DateTime.UtcNow > deadline)
            {
                throw new TimeoutException($"Waited {Cap} for {what}.");
            }

            await Task.Delay(100);
        }
    }

    private static async Task<T?> ScalarAsync<T>(string connection, string sql, params (string Name, object Value)[] parameters)
        where T : class
    {
        await using var db = new NpgsqlConnection(connection);
        await db.OpenAsync();
        try
        {
            await using var command = new NpgsqlCommand(sql, db);
            foreach (var (name, value) in parameters)
            {
                command.Parameters.AddWithValue(name, value);
            }

            return await command.ExecuteScalarAsync() as T;
        }
        catch (PostgresException e) when (e.SqlState == PostgresErrorCodes.UndefinedTable)
        {
            // Quartz's tables are made by the first node that starts.
            return null;
        }
    }

    private static async Task<long> CountAsync(NpgsqlConnection db, string sql)
    {
        await using var command = new NpgsqlCommand(sql, db);
        return Convert.ToInt64(await command.ExecuteScalarAsync(), CultureInfo.InvariantCulture);
    }

    private static string Quote(string identifier) => "\"" + identifier.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"";
}
