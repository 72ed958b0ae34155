using System.Net;
using AngleSharp.Html.Parser;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Ingest;
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

    [Fact]
    public async Task CollectionPage_CountsEachTapesOwnCapturesAndDecodeRuns()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        int collectionId;

        // Three tapes with 2, 1 and 0 captures; the first capture of the first tape decoded twice, the second tape's once.
        int[] captures = [2, 1, 0];
        int[] runs = [2, 1, 0];
        await using (var scope = app.Scope())
        {
            var actions = scope.ServiceProvider.GetRequiredService<CuratorActions>();
            var ingest = scope.ServiceProvider.GetRequiredService<CaptureIngest>();
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            collectionId = (await actions.CreateCollectionAsync("Counted shelf", null, "curator")).Id;
            for (int t = 0; t < captures.Length; t++)
            {
                int item = (await actions.CreateItemAsync(collectionId, $"CNT-{t + 1}", $"Tape {t + 1}", null, null, null, "curator")).Id;
                var ids = new List<int>();
                for (int p = 0; p < captures[t]; p++)
                {
                    using var body = new MemoryStream(SilentWav(100 + (10 * t) + p));
                    ids.Add((await ingest.IngestAsync(body, new IngestRequest { ItemId = item, FileName = $"pass-{p + 1}.wav", ContentType = "audio/wav", Agent = "curator" })).Capture.Id);
                }

                for (int r = 0; r < runs[t]; r++)
                {
                    db.Runs.Add(new DecodeRun { CaptureId = ids[0], ProfileId = "orrin-80", SettingsJson = "[]", CodeVersion = "test", Outcome = "nothing read" });
                }
            }

            await db.SaveChangesAsync();
        }

        var page = await PageAsync(viewer, $"/collections/{collectionId}");
        var rows = page.QuerySelectorAll("table.grid tbody tr").Select(r => r.QuerySelectorAll("td").Select(d => d.TextContent.Trim()).ToArray()).ToList();
        Assert.Equal(["CNT-1", "CNT-2", "CNT-3"], rows.Select(r => r[0]));
        Assert.Equal(captures.Select(c => c.ToString(System.Globalization.CultureInfo.InvariantCulture)), rows.Select(r => r[3]));
        Assert.Equal(runs.Select(c => c.ToString(System.Globalization.CultureInfo.InvariantCulture)), rows.Select(r => r[4]));
    }

    /// <summary>A 16-bit mono 8 kHz PCM WAV of <paramref name="samples"/> zero samples (its length makes it distinct).</summary>
    private static byte[] SilentWav(int samples)
    {
        using var bytes = new MemoryStream();
        using (var writer = new NAudio.Wave.WaveFileWriter(bytes, new NAudio.Wave.WaveFormat(8000, 16, 1)))
        {
            writer.Write(new byte[2 * samples], 0, 2 * samples);
        }

        return bytes.ToArray();
    }

    private static async Task<AngleSharp.Dom.IDocument> PageAsync(ApiClient client, string path)
    {
        using var response = await client.Http.GetAsync(new Uri(path, UriKind.Relative));
        await ApiClient.EnsureAsync(response, HttpStatusCode.OK);
        return await new HtmlParser().ParseDocumentAsync(await response.Content.ReadAsStringAsync());
    }
}
