using System.Net;
using System.Net.Http.Json;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

public sealed class DuplicateUploadTests
{
    [Fact]
    public async Task SameBytes_SameItem_LinksTheExistingCapture_AndAnotherItem_LinksTheExistingObject()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (collectionId, firstItem) = await curator.NewItemAsync("DUP-1");
        var secondItem = (await curator.PostAsync<ItemDetail>($"/api/collections/{collectionId}/items", new NewItem("DUP-2", "Second tape", null, null, null), HttpStatusCode.Created)).Id;
        var wav = WavBytes.Pcm16(frames: 4000, seed: 3);

        using var first = await curator.UploadRawAsync(firstItem, wav, "first.wav");
        await ApiClient.EnsureAsync(first, HttpStatusCode.Created);
        var original = (await first.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        Assert.False(original.Duplicate);

        using var again = await curator.UploadMultipartAsync(firstItem, wav, "again.wav");
        await ApiClient.EnsureAsync(again, HttpStatusCode.OK);
        var duplicate = (await again.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        Assert.True(duplicate.Duplicate);
        Assert.Equal(original.Capture.Id, duplicate.Capture.Id);
        Assert.Equal("first.wav", duplicate.Capture.FileName);
        Assert.Contains($"capture {original.Capture.Id}", duplicate.Message, StringComparison.Ordinal);
        Assert.Equal((1, 1, 1), await CountsAsync(app));

        using var elsewhere = await curator.UploadRawAsync(secondItem, wav, "copy.wav");
        await ApiClient.EnsureAsync(elsewhere, HttpStatusCode.Created);
        var linked = (await elsewhere.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        Assert.False(linked.Duplicate);
        Assert.True(linked.LinkedExistingObject);
        Assert.NotEqual(original.Capture.Id, linked.Capture.Id);
        Assert.Equal(secondItem, linked.Capture.ItemId);
        Assert.Equal(original.Capture.Sha256, linked.Capture.Sha256);

        // Two captures, one object row and one object file; no temporary file left.
        Assert.Equal((2, 1, 1), await CountsAsync(app));
        Assert.Empty(Directory.EnumerateFiles(folder.TempFolder));

        var events = await curator.GetAsync<List<EventView>>($"/api/items/{firstItem}/events");
        Assert.Contains(events, e => e.EventType == "ingest" && e.Outcome == "duplicate");
    }

    private static async Task<(int Captures, int Objects, int Files)> CountsAsync(ArchiveAppFactory app)
    {
        await using var scope = app.Scope();
        var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
        return (await db.Captures.CountAsync(), await db.Objects.CountAsync(), app.Store.EnumerateHashes().Count());
    }
}
