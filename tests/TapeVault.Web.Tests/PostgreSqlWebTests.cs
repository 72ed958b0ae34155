using System.Net;
using System.Net.Http.Json;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Events;
using TapeVault.Archive.Tests.PostgreSql;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>The web app with its archive on a real PostgreSQL 15 server (a temporary cluster, <see cref="PostgreSqlServer"/>).</summary>
[Collection(PostgreSqlGroup.Name)]
public sealed class PostgreSqlWebTests(PostgreSqlServer server)
{
    [Fact]
    public async Task The_web_app_on_PostgreSql_stores_uploads_refuses_as_documented_and_chains_its_events()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?>
        {
            ["TapeVault:Archive:Provider"] = "PostgreSql",
            ["TapeVault:Archive:ConnectionString"] = await server.CreateDatabaseAsync(),
        });
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (collectionId, itemId) = await curator.NewItemAsync("PG-WEB-1");

        var wav = WavBytes.Pcm16(frames: 4000, seed: 3);
        using (var first = await curator.UploadRawAsync(itemId, wav, "side-a.wav"))
        {
            await ApiClient.EnsureAsync(first, HttpStatusCode.Created);
        }

        using (var again = await curator.UploadRawAsync(itemId, wav, "side-a-again.wav"))
        {
            await ApiClient.EnsureAsync(again, HttpStatusCode.OK);
            Assert.True((await again.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!.Duplicate);
        }

        using (var taken = await curator.Http.PostAsJsonAsync($"/api/collections/{collectionId}/items", new NewItem("PG-WEB-1", "Again", null, null, "A"), ApiClient.Json))
        {
            Assert.Equal(HttpStatusCode.Conflict, taken.StatusCode);
        }

        using (var missing = await curator.Http.GetAsync(new Uri("/api/items/987654", UriKind.Relative)))
        {
            Assert.Equal(HttpStatusCode.NotFound, missing.StatusCode);
        }

        var events = await curator.GetAsync<List<EventView>>($"/api/items/{itemId}/events");
        Assert.Contains(events, e => e.EventType == EventTypes.Ingest);

        await using var scope = app.Scope();
        var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
        Assert.True(db.Database.IsNpgsql());
        Assert.Equal(1, await db.Captures.CountAsync(c => c.ItemId == itemId));
        var chain = await EventChain.VerifyAsync(db);
        Assert.True(chain.Intact, chain.FirstBreak?.Reason);
    }
}
