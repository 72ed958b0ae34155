using System.Net;
using AngleSharp.Html.Parser;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Curation;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>Pages of an archive at the scale of a real collection come in pages, not as one table of thousands of rows.</summary>
public sealed class PagingTests
{
    [Fact]
    public async Task CollectionPage_ListsItsTapesTwoHundredAtATime_InAccessionOrder_WithLinksBetweenThePages()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        int collectionId;
        await using (var scope = app.Scope())
        {
            var actions = scope.ServiceProvider.GetRequiredService<CuratorActions>();
            collectionId = (await actions.CreateCollectionAsync("Big shelf", null, "curator")).Id;
            for (int t = 205; t >= 1; t--)
            {
                await actions.CreateItemAsync(collectionId, $"BIG-{t:000}", $"Tape {t}", null, null, null, "curator");
            }
        }

        var first = await PageAsync(viewer, $"/collections/{collectionId}");
        var rows = first.QuerySelectorAll("table.grid tbody tr");
        Assert.Equal(200, rows.Length);
        Assert.Equal("BIG-001", rows[0].QuerySelector("a")!.TextContent.Trim());
        Assert.Contains("Tapes 1–200 of 205", first.QuerySelector("nav.pager")!.TextContent, StringComparison.Ordinal);
        Assert.Null(first.QuerySelector("nav.pager a[rel=prev]"));
        var later = first.QuerySelector("nav.pager a[rel=next]")!.GetAttribute("href")!;

        var second = await PageAsync(viewer, later);
        var rest = second.QuerySelectorAll("table.grid tbody tr");
        Assert.Equal(["BIG-201", "BIG-202", "BIG-203", "BIG-204", "BIG-205"], rest.Select(r => r.QuerySelector("a")!.TextContent.Trim()));
        Assert.Null(second.QuerySelector("nav.pager a[rel=next]"));
        Assert.NotNull(second.QuerySelector("nav.pager a[rel=prev]"));

        // A page past the end shows the last page rather than an empty list.
        var past = await PageAsync(viewer, $"/collections/{collectionId}?tapes=5000");
        Assert.Equal(5, past.QuerySelectorAll("table.grid tbody tr").Length);
    }

    private static async Task<AngleSharp.Dom.IDocument> PageAsync(ApiClient client, string path)
    {
        using var response = await client.Http.GetAsync(new Uri(path, UriKind.Relative));
        await ApiClient.EnsureAsync(response, HttpStatusCode.OK);
        return await new HtmlParser().ParseDocumentAsync(await response.Content.ReadAsStringAsync());
    }
}
