using System.Diagnostics;
using System.Net;
using System.Net.Http.Json;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Web.Tests;

public sealed class ConcurrencyTests(ITestOutputHelper output)
{
    [Fact]
    public async Task TwoDecodes_RunAtOnce_WhilePagesKeepAnswering()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        var (collectionId, itemId) = await curator.NewItemAsync("BUSY-1");

        // Six minutes of tone each (different bytes, so two captures), both uploaded before either decode is asked
        // for: otherwise the first decode can be over before the second upload has arrived. Two minutes were too short
        // once the read path got faster: a decode could end before the runner had taken up the second job.
        var captures = new List<int>();
        for (int seed = 1; seed <= 2; seed++)
        {
            using var upload = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 22_050 * 360, seed: seed), $"busy{seed}.wav");
            await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
            captures.Add((await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!.Capture.Id);
        }

        var jobs = new List<int>();
        foreach (int capture in captures)
        {
            jobs.Add((await curator.PostAsync<JobView>($"/api/captures/{capture}/decode", new DecodeRequest(SynthCaptures.Profile, null, null), HttpStatusCode.Accepted)).Id);
        }

        string[] pages = ["/", $"/collections/{collectionId}", $"/items/{itemId}", "/jobs", "/api/jobs"];
        var clock = Stopwatch.StartNew();
        var slowest = TimeSpan.Zero;
        int requests = 0;
        bool sawBothRunning = false;
        List<JobView> states;
        while (true)
        {
            foreach (var page in pages)
            {
                var timer = Stopwatch.StartNew();
                using var response = await viewer.Http.GetAsync(new Uri(page, UriKind.Relative));
                timer.Stop();
                Assert.Equal(HttpStatusCode.OK, response.StatusCode);
                slowest = timer.Elapsed > slowest ? timer.Elapsed : slowest;
                requests++;
            }

            states = [.. await Task.WhenAll(jobs.Select(id => viewer.GetAsync<JobView>($"/api/jobs/{id}")))];
            sawBothRunning |= states.All(j => j.State == "running");
            if (states.All(j => j.State is "done" or "failed" or "cancelled"))
            {
                break;
            }

            Assert.True(clock.Elapsed < TimeSpan.FromSeconds(45), "The two decodes did not finish within 45 s.");
        }

        output.WriteLine($"{requests} page requests during the decodes, slowest {slowest.TotalMilliseconds:0} ms; both seen running: {sawBothRunning}.");
        Assert.All(states, j => Assert.Equal("done", j.State));

        // The two jobs' recorded running times overlap: each started before the other finished.
        Assert.True(states.Max(j => j.StartedUtc!.Value) < states.Min(j => j.FinishedUtc!.Value), "The two decodes ran one after the other.");

        // A page must not wait for a decode to finish. The bound is loose because the two decodes take both cores of
        // a small machine; a page queued behind a decode would wait for all of it instead.
        Assert.True(slowest < TimeSpan.FromSeconds(5), $"The slowest page took {slowest.TotalMilliseconds:0} ms.");
    }
}
