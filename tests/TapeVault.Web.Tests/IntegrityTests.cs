using System.IO.Compression;
using System.Net;
using System.Net.Http.Json;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Events;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

public sealed class IntegrityTests
{
    [Theory]
    [InlineData("false", HttpStatusCode.Forbidden)]
    [InlineData("true", HttpStatusCode.OK)]
    public async Task ViewersGetBagsOnlyWhereTheyMayDownloadOriginals_CataloguesAlways(string allowed, HttpStatusCode viewerGetsBag)
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?> { ["TapeVault:Web:ViewersMayDownloadOriginals"] = allowed });
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (collectionId, itemId) = await curator.NewItemAsync("BAG-1");
        using var upload = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 2000), "bagged.wav");
        await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        var uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        var bagJob = await curator.PostAsync<JobView>($"/api/items/{itemId}/bag", new { }, HttpStatusCode.Accepted);
        int bag = (await curator.WaitForJobAsync(bagJob.Id, TimeSpan.FromSeconds(30))).ResultId!.Value;
        var publishJob = await curator.PostAsync<JobView>($"/api/collections/{collectionId}/publish", new { }, HttpStatusCode.Accepted);
        int catalogue = (await curator.WaitForJobAsync(publishJob.Id, TimeSpan.FromSeconds(60))).ResultId!.Value;

        // The bag carries the original byte for byte, so it is an original's download by another route.
        using (var asCurator = await curator.Http.GetAsync($"/api/exports/{bag}/download"))
        {
            Assert.Equal(HttpStatusCode.OK, asCurator.StatusCode);
            using var zip = new ZipArchive(await asCurator.Content.ReadAsStreamAsync());
            Assert.Contains(zip.Entries, e => e.FullName.Contains("/originals/", StringComparison.Ordinal) && e.FullName.EndsWith("bagged.wav", StringComparison.Ordinal));
        }

        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        using (var asViewer = await viewer.Http.GetAsync($"/api/exports/{bag}/download"))
        {
            Assert.Equal(viewerGetsBag, asViewer.StatusCode);
        }

        using (var ranged = new HttpRequestMessage(HttpMethod.Get, $"/api/exports/{bag}/download"))
        {
            ranged.Headers.Range = new System.Net.Http.Headers.RangeHeaderValue(0, 99);
            using var part = await viewer.Http.SendAsync(ranged);
            Assert.Equal(viewerGetsBag == HttpStatusCode.OK ? HttpStatusCode.PartialContent : HttpStatusCode.Forbidden, part.StatusCode);
        }

        // A catalogue holds no originals: viewers get it either way.
        using (var cat = await viewer.Http.GetAsync($"/api/exports/{catalogue}/download"))
        {
            Assert.Equal(HttpStatusCode.OK, cat.StatusCode);
            using var zip = new ZipArchive(await cat.Content.ReadAsStreamAsync());
            Assert.DoesNotContain(zip.Entries, e => e.FullName.EndsWith(".wav", StringComparison.OrdinalIgnoreCase));
        }

        // The viewer's page offers no link the route would refuse.
        var page = await viewer.Http.GetStringAsync($"/items/{itemId}");
        bool offered = page.Contains($"/api/exports/{bag}/download", StringComparison.Ordinal);
        Assert.Equal(viewerGetsBag == HttpStatusCode.OK, offered);
        Assert.Equal(viewerGetsBag == HttpStatusCode.OK, page.Contains($"/api/captures/{uploaded.Capture.Id}/original", StringComparison.Ordinal));
    }

    [Fact]
    public async Task DeletedObjectRow_AtTheNextStart_LeavesTheOriginalInPlace_RecordsIt_AndTheAuditNamesTheCapture()
    {
        using var folder = new ArchiveFolder();
        string sha;
        int captureId;
        await using (var first = new ArchiveAppFactory(folder))
        {
            await first.AddCuratorAndViewerAsync();
            using var curator = await first.SignedInAsync(ArchiveAppFactory.CuratorName);
            var (_, itemId) = await curator.NewItemAsync("ROW-1");
            using var upload = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 3000), "kept.wav");
            await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
            var uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
            sha = uploaded.Capture.Sha256;
            captureId = uploaded.Capture.Id;
        }

        Assert.Equal(1, folder.ExecuteBehindTheApp($"DELETE FROM \"Objects\" WHERE \"Sha256\" = '{sha}';"));

        await using var second = new ArchiveAppFactory(folder);
        using var again = await second.SignedInAsync(ArchiveAppFactory.CuratorName);
        var path = second.Store.PathOf(sha);
        Assert.True(File.Exists(path), "The original was moved out of the store at start.");
        Assert.False(Directory.Exists(Path.Combine(folder.StorePath, "orphans")));
        await using (var db = folder.OpenDatabase())
        {
            Assert.Equal(1, await db.Events.CountAsync(e => e.Outcome == "unrecorded" && e.Detail.Contains(sha)));
        }

        var audit = await again.PostAsync<JobView>("/api/fixity", new { }, HttpStatusCode.Accepted);
        var done = await again.WaitForJobAsync(audit.Id, TimeSpan.FromSeconds(30));
        Assert.Contains($"capture {captureId} ", done.ProgressText, StringComparison.Ordinal);
        Assert.True(File.Exists(path));
    }

    [Fact]
    public async Task ViewersSeeNoServerPathInTheEventLog_EvenWhenTheAuditFindsAFileGone()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("PATH-1");
        using var upload = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 2000), "gone.wav");
        await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        var uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        var path = app.Store.PathOf(uploaded.Capture.Sha256);
        File.SetAttributes(path, FileAttributes.Normal);
        File.Delete(path);
        var audit = await curator.PostAsync<JobView>("/api/fixity", new { }, HttpStatusCode.Accepted);
        await curator.WaitForJobAsync(audit.Id, TimeSpan.FromSeconds(30));

        // An event as an older release's command line wrote it, with the folder it published to.
        await using (var scope = app.Scope())
        {
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            EventLog.Add(db, EventTypes.Export, "cli:old", "item", itemId.ToString(System.Globalization.CultureInfo.InvariantCulture), "success",
                $"Catalogue published to {Path.Combine(folder.Root, ".site.part-0123abcd")} (9 files).", itemId);
            await db.SaveChangesAsync();
        }

        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        var events = await viewer.Http.GetStringAsync($"/api/items/{itemId}/events");
        var page = await viewer.Http.GetStringAsync($"/items/{itemId}");
        Assert.Contains("missing", events, StringComparison.Ordinal);
        foreach (var text in new[] { events, page })
        {
            Assert.DoesNotContain(folder.Root, text, StringComparison.Ordinal);
            Assert.DoesNotContain(folder.Root.Replace("/", "\\/", StringComparison.Ordinal), text, StringComparison.Ordinal);
        }

        Assert.Contains("Catalogue published to (a folder on the server) (9 files).", events, StringComparison.Ordinal);
    }
}
