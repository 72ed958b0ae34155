using System.Net;
using System.Net.Http.Json;
using System.Text.Json;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>
/// The OpenAPI document (/openapi/v1.json) lists, for each operation, the refusals it really gives: each listed status
/// is then provoked against the running app and must come back as that status.
/// </summary>
public sealed class OpenApiDocumentTests
{
    [Fact]
    public async Task The_document_lists_404_409_and_413_where_the_api_gives_them_and_the_api_gives_them_there()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?>
        {
            ["TapeVault:Web:SeedDemo"] = "false",
            ["TapeVault:Archive:MaxUploadBytes"] = "4096",
        });
        await app.AddCuratorAndViewerAsync();

        using var anonymous = app.NewBareClient();
        using var response = await anonymous.GetAsync(new Uri("/openapi/v1.json", UriKind.Relative));
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        using var document = JsonDocument.Parse(await response.Content.ReadAsStringAsync());
        var paths = document.RootElement.GetProperty("paths");
        IReadOnlyCollection<string> Statuses(string path, string method) =>
            [.. paths.GetProperty(path).GetProperty(method).GetProperty("responses").EnumerateObject().Select(p => p.Name)];

        Assert.Contains("200", Statuses("/api/items/{id}", "get"));
        Assert.Contains("404", Statuses("/api/items/{id}", "get"));
        Assert.Contains("404", Statuses("/api/collections/{id}", "get"));
        Assert.Contains("404", Statuses("/api/jobs/{id}", "get"));
        Assert.Contains("201", Statuses("/api/collections/{id}/items", "post"));
        Assert.Contains("409", Statuses("/api/collections/{id}/items", "post"));
        Assert.Contains("409", Statuses("/api/users/{name}/disable", "post"));
        Assert.Contains("413", Statuses("/api/items/{id}/captures", "post"));
        Assert.Contains("201", Statuses("/api/items/{id}/captures", "post"));

        // Grouped by resource: each operation carries its resource's tag.
        var tags = paths.EnumerateObject().SelectMany(p => p.Value.EnumerateObject())
            .SelectMany(o => o.Value.TryGetProperty("tags", out var t) ? t.EnumerateArray().Select(x => x.GetString()!) : [])
            .ToHashSet(StringComparer.Ordinal);
        Assert.Superset(new HashSet<string>(["collections", "items", "captures", "jobs", "users", "session"], StringComparer.Ordinal), tags);

        // What the document says is what the API does.
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        using (var missing = await curator.Http.GetAsync(new Uri("/api/items/987654", UriKind.Relative)))
        {
            Assert.Equal(HttpStatusCode.NotFound, missing.StatusCode);
        }

        var (collectionId, itemId) = await curator.NewItemAsync("OPENAPI-1");
        using (var again = await curator.Http.PostAsJsonAsync($"/api/collections/{collectionId}/items", new TapeVault.Web.Api.NewItem("OPENAPI-1", "Second", null, null, "A"), ApiClient.Json))
        {
            Assert.Equal(HttpStatusCode.Conflict, again.StatusCode);
        }

        using (var big = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 40_000), "big.wav"))
        {
            // 413 Content Too Large, RFC 9110 §15.5.14.
            Assert.Equal(HttpStatusCode.RequestEntityTooLarge, big.StatusCode);
        }
    }
}
