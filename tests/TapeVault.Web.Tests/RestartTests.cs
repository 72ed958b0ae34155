using System.Diagnostics;
using System.Net;
using System.Net.Http.Json;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive;
using TapeVault.Archive.Entities;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

public sealed class RestartTests
{
    [Fact]
    public async Task StopMidDecode_ThenStartAgain_FinishesTheJob_WithExactlyOneRun()
    {
        using var folder = new ArchiveFolder();
        int jobId;
        int captureId;
        var first = new ArchiveAppFactory(folder);
        try
        {
            await first.AddCuratorAndViewerAsync();
            using var curator = await first.SignedInAsync(ArchiveAppFactory.CuratorName);
            var (_, itemId) = await curator.NewItemAsync("RESTART-1");

            // Thirty minutes of tone: long enough that the decode (about 40 M samples, seconds even on an idle
            // machine) is still going when the app is stopped, with progress reported on the way.
            using var upload = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 22_050 * 1800, seed: 7), "long.wav", extraQuery: $"&decodeProfile={SynthCaptures.Profile}");
            await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
            var uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
            jobId = uploaded.DecodeJob!.Id;
            captureId = uploaded.Capture.Id;

            var clock = Stopwatch.StartNew();
            while (true)
            {
                var job = await curator.GetAsync<JobView>($"/api/jobs/{jobId}");
                if (job.State == "running" && job.Progress > 0)
                {
                    break;
                }

                Assert.True(job.State is "queued" or "running", $"The job ended ({job.State}) before the app could be stopped; make the capture longer.");
                // A bound for a job that never starts, not a timing: a loaded machine may take a while.
                Assert.True(clock.Elapsed < TimeSpan.FromSeconds(180), "The job did not start within 180 s.");
                await Task.Delay(20);
            }
        }
        finally
        {
            await first.DisposeAsync();
        }

        // The stop cut the job off: it is still marked running, and nothing of it was stored.
        await using (var db = folder.OpenDatabase())
        {
            var job = await db.Jobs.AsNoTracking().SingleAsync(j => j.Id == jobId);
            Assert.Equal(JobState.Running, job.State);
            Assert.Equal(1, job.Attempts);
            Assert.Equal(0, await db.Runs.CountAsync(r => r.CaptureId == captureId));
        }

        await using var second = new ArchiveAppFactory(folder);
        using var again = await second.SignedInAsync(ArchiveAppFactory.CuratorName);
        // The job decodes the thirty minutes again and surveys them for the plots (every setting, one more pass). The wait
        // is a bound for a hung job, not a timing: a Debug build on a loaded machine took more than 120 s.
        var finished = await again.WaitForJobAsync(jobId, TimeSpan.FromMinutes(10));
        Assert.True(finished.State == "done" || (finished.State == "failed" && !string.IsNullOrWhiteSpace(finished.Error)), $"The job ended {finished.State} without a reason.");
        Assert.Equal(2, finished.Attempts);
        await using (var db = folder.OpenDatabase())
        {
            Assert.Equal(1, await db.Runs.CountAsync(r => r.CaptureId == captureId));
            Assert.Equal(0, await db.Jobs.CountAsync(j => j.State == JobState.Running || j.State == JobState.Queued));
        }
    }
}
