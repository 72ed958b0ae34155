using System.Diagnostics;
using System.Net.Http.Headers;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.EndToEnd.Tests;

namespace TapeVault.Bench;

/// <summary>
/// The load test: the web app as a real process on loopback with a fresh archive; two long decodes are started, and
/// meanwhile 50 clients read pages and the API for a bounded time and count. Prints errors, latency percentiles and
/// requests per second. Loopback only; bounded in requests and in time.
/// </summary>
public static class LoadTest
{
    private static readonly string[] Paths =
    [
        "/", "/collections/1", "/items/1", "/runs/1", "/jobs",
        "/api/collections", "/api/collections/1", "/api/items/1", "/api/runs/1", "/api/jobs", "/api/items/1/block-map", "/api/items/1/events",
    ];

    public static async Task RunAsync(string work, int clients = 50, int requestsPerClient = 200, int maxSeconds = 60)
    {
        Console.WriteLine($"== Load: {clients} clients × up to {requestsPerClient} reads (at most {maxSeconds} s) while two decodes run");
        await using var app = await AppProcess.StartAsync();
        using var api = await ApiSession.SignInAsync(app.Address, "curator", app.CuratorPassword);
        var collection = await api.PostJsonAsync("/api/collections", new { name = "Load shelf" });
        int itemId = (await api.PostJsonAsync($"/api/collections/{collection.GetProperty("id").GetInt32()}/items", new { accessionNumber = "LOAD-1", title = "Load tape" })).GetProperty("id").GetInt32();

        // Something real to read: a decoded orrin-80 capture (run 1).
        var small = Path.Combine(work, "load-small.wav");
        CaptureSynthesizer.Write(small, ProfileCatalog.BuiltIn.Get("orrin-80"), [new TapeFile("LOAD", new byte[600])], new ChannelDamage { SnrDb = 24, Seed = 9 });
        var first = await api.UploadAsync(itemId, "small.wav", new ByteArrayContent(await File.ReadAllBytesAsync(small)));
        await api.PostJsonAsync($"/api/captures/{first.GetProperty("capture").GetProperty("id").GetInt32()}/decode", new { profile = "orrin-80" });
        await api.WaitForJobsAsync(TimeSpan.FromSeconds(60));

        // Two long captures (about ten minutes of synthesised tape each) for the workers to decode over and over.
        var longIds = new List<int>();
        for (int i = 0; i < 2; i++)
        {
            var path = Path.Combine(work, $"load-long-{i}.wav");
            if (!File.Exists(path))
            {
                CaptureSynthesizer.Write(path, ProfileCatalog.BuiltIn.Get("orrin-80"), [new TapeFile("LONG", new byte[120_000])], new ChannelDamage { SnrDb = 22, Seed = 40 + i });
            }

            var content = new StreamContent(File.OpenRead(path));
            content.Headers.ContentType = new MediaTypeHeaderValue("audio/wav");
            longIds.Add((await api.UploadAsync(itemId, $"long-{i}.wav", content)).GetProperty("capture").GetProperty("id").GetInt32());
        }

        // Keep two decodes going for the whole test: queue another as soon as one finishes.
        using var stopDecodes = new CancellationTokenSource();
        int decodesQueued = 0;
        var keeper = Task.Run(async () =>
        {
            while (!stopDecodes.IsCancellationRequested)
            {
                var active = (await api.GetJsonAsync("/api/jobs?take=20")).EnumerateArray().Count(j => j.GetProperty("state").GetString() is "running" or "queued");
                for (int k = active; k < 2; k++)
                {
                    await api.PostJsonAsync($"/api/captures/{longIds[decodesQueued % 2]}/decode", new { profile = "orrin-80" });
                    decodesQueued++;
                }

                await Task.Delay(100);
            }
        });

        var latencies = new List<double>[clients];
        int errors = 0;
        var clock = Stopwatch.StartNew();
        var stopAt = TimeSpan.FromSeconds(maxSeconds);
        var tasks = Enumerable.Range(0, clients).Select(async c =>
        {
            latencies[c] = new List<double>(requestsPerClient);
            var random = new Random(c);
            for (int r = 0; r < requestsPerClient && clock.Elapsed < stopAt; r++)
            {
                var path = Paths[random.Next(Paths.Length)];
                var started = Stopwatch.GetTimestamp();
                try
                {
                    using var response = await api.Http.GetAsync(path);
                    await response.Content.ReadAsByteArrayAsync();
                    if (!response.IsSuccessStatusCode)
                    {
                        Interlocked.Increment(ref errors);
                    }
                }
                catch (HttpRequestException)
                {
                    Interlocked.Increment(ref errors);
                }

                latencies[c].Add(Stopwatch.GetElapsedTime(started).TotalMilliseconds);
            }
        }).ToList();
        await Task.WhenAll(tasks);
        double seconds = clock.Elapsed.TotalSeconds;
        await stopDecodes.CancelAsync();
        await keeper;
        var jobs = (await api.GetJsonAsync("/api/jobs?take=1000")).EnumerateArray().ToList();
        int decodesDone = jobs.Count(j => j.GetProperty("kind").GetString() == "decode" && j.GetProperty("state").GetString() == "done") - 1;
        var all = latencies.SelectMany(l => l).Order().ToList();
        double P(double q) => all[Math.Min(all.Count - 1, (int)Math.Ceiling(q * all.Count) - 1)];
        Console.WriteLine($"requests {all.Count}, errors {errors}, {all.Count / seconds:0} requests/s over {seconds:0.0} s");
        Console.WriteLine($"latency ms: p50 {P(0.50):0.0}, p95 {P(0.95):0.0}, p99 {P(0.99):0.0}, max {all[^1]:0.0}");
        Console.WriteLine($"decodes kept running meanwhile: {decodesQueued} queued, {decodesDone} finished during the reads (two at a time)");
        Console.WriteLine();
    }
}
