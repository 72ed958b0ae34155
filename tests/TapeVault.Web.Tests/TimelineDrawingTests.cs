using System.Net;
using System.Net.Http.Json;
using AngleSharp.Dom;
using AngleSharp.Html.Parser;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Timeline;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>The tape page's timeline drawn by the decode and merge jobs, and the same drawing made by the page itself.</summary>
public sealed class TimelineDrawingTests
{
    private static readonly TimeSpan JobLimit = TimeSpan.FromSeconds(60);

    [Fact]
    public async Task DecodeAndMergeJobs_KeepThePagesTimeline_OneDrawingPerTape_ByteForByteAsThePageDrawsIt()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("TL-0001");
        string kept = Path.Combine(folder.StorePath, "derived", "timelines", itemId.ToString(System.Globalization.CultureInfo.InvariantCulture));
        string? previous = null;
        foreach (int seed in new[] { 31, 32 })
        {
            var capture = SynthCaptures.Orrin(folder.Root, $"pass{seed}", files: 2, bytesPerFile: 80, seed: seed);
            using var upload = await curator.UploadRawAsync(itemId, capture.Bytes, $"pass{seed}.wav", extraQuery: $"&decodeProfile={SynthCaptures.Profile}");
            await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
            var uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
            Assert.Equal("done", (await curator.WaitForJobAsync(uploaded.DecodeJob!.Id, JobLimit)).State);

            // Each decode keeps the drawing with its run and removes the tape's older one; the first view reads it (the
            // page says which in its Server-Timing header, W3C Server Timing).
            string drawing = Assert.Single(Directory.EnumerateFiles(kept, "*.json"));
            Assert.NotEqual(previous, drawing);
            previous = drawing;
            var (_, timing) = await PageAsync(curator, $"/items/{itemId}");
            Assert.Contains("drawn earlier", timing, StringComparison.Ordinal);

            // The decode job drew it from the run in memory; the page, with nothing kept, draws it from the stored rows:
            // the same file, byte for byte.
            byte[] byDecode = await File.ReadAllBytesAsync(drawing);
            Directory.Delete(kept, recursive: true);
            var (_, redrawn) = await PageAsync(curator, $"/items/{itemId}");
            Assert.Contains("read and drawn", redrawn, StringComparison.Ordinal);
            Assert.Equal(Path.GetFileName(drawing), Path.GetFileName(Assert.Single(Directory.EnumerateFiles(kept, "*.json"))));
            Assert.Equal(byDecode, await File.ReadAllBytesAsync(drawing));
        }

        var merge = await curator.PostAsync<JobView>($"/api/items/{itemId}/merge", new { }, HttpStatusCode.Accepted);
        Assert.Equal("done", (await curator.WaitForJobAsync(merge.Id, JobLimit)).State);

        // The first view after the merge reads the drawing the merge kept, the only one of the tape.
        var byMerge = Assert.Single(Directory.EnumerateFiles(kept, "*.json"));
        Assert.NotEqual(previous, byMerge);
        var (first, firstTiming) = await PageAsync(curator, $"/items/{itemId}");
        Assert.Contains("drawn earlier", firstTiming, StringComparison.Ordinal);
        Assert.NotNull(first.QuerySelector("#timeline"));
        byte[] byJob = await File.ReadAllBytesAsync(byMerge);

        // With nothing kept, the page draws the timeline itself: the same file, byte for byte, and the same page.
        Directory.Delete(kept, recursive: true);
        var (fresh, freshTiming) = await PageAsync(curator, $"/items/{itemId}");
        Assert.Contains("read and drawn", freshTiming, StringComparison.Ordinal);
        var only = Assert.Single(Directory.EnumerateFiles(kept, "*.json"));
        Assert.Equal(Path.GetFileName(byMerge), Path.GetFileName(only));
        Assert.Equal(byJob, await File.ReadAllBytesAsync(only));
        Assert.Equal(MainContent(first), MainContent(fresh));

        // The page drew that from the readings each run keeps in one row (written with the run). A run stored before
        // they were kept has only its readings' rows: drawn from those, the same file, byte for byte.
        await using (var scope = app.Scope())
        {
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            var runIds = await db.Runs.Where(r => r.Capture!.ItemId == itemId).Select(r => r.Id).ToListAsync();
            Assert.Equal(2, runIds.Count);
            Assert.Equal(2, await db.RunTimelines.Where(t => runIds.Contains(t.RunId)).ExecuteDeleteAsync());
        }

        Directory.Delete(kept, recursive: true);
        var (_, rowsTiming) = await PageAsync(curator, $"/items/{itemId}");
        Assert.Contains("read and drawn", rowsTiming, StringComparison.Ordinal);
        Assert.Equal(byJob, await File.ReadAllBytesAsync(Assert.Single(Directory.EnumerateFiles(kept, "*.json"))));
    }

    [Fact]
    public void A_run_id_used_again_by_another_decode_of_the_same_capture_names_another_drawing()
    {
        // SQLite may give a rolled-back run's id to the next run; a drawing kept under the first must not be shown for
        // a decode with another profile, other settings or another build.
        static DecodeRun Run(string profile, string settings, string code) =>
            new() { Id = 7, CaptureId = 3, ProfileId = profile, SettingsJson = settings, CodeVersion = code, Outcome = "done" };
        string Key(DecodeRun run) => TimelineDrawings.KeyOf(5, [run], null, "/items/5/positions/", "TL-0001");

        string first = Key(Run("orrin-80", "[{\"name\":\"a\"}]", "1"));
        Assert.Equal(first, Key(Run("orrin-80", "[{\"name\":\"a\"}]", "1")));
        Assert.NotEqual(first, Key(Run("kcs-300", "[{\"name\":\"a\"}]", "1")));
        Assert.NotEqual(first, Key(Run("orrin-80", "[{\"name\":\"b\"}]", "1")));
        Assert.NotEqual(first, Key(Run("orrin-80", "[{\"name\":\"a\"}]", "2")));
    }

    /// <summary>The page's main content without its per-request anti-forgery tokens.</summary>
    private static string MainContent(IDocument page)
    {
        foreach (var token in page.QuerySelectorAll("input[name=__RequestVerificationToken]").ToList())
        {
            token.Remove();
        }

        return page.QuerySelector("main")!.OuterHtml;
    }

    private static async Task<(IDocument Page, string Timing)> PageAsync(ApiClient client, string path)
    {
        using var response = await client.Http.GetAsync(new Uri(path, UriKind.Relative));
        await ApiClient.EnsureAsync(response, HttpStatusCode.OK);
        string timing = response.Headers.TryGetValues("Server-Timing", out var values) ? string.Join(",", values) : string.Empty;
        return (await new HtmlParser().ParseDocumentAsync(await response.Content.ReadAsStringAsync()), timing);
    }
}
