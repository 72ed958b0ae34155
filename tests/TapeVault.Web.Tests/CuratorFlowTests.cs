using System.Net;
using System.Net.Http.Json;
using System.Xml.Linq;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using AngleSharp.Dom;
using AngleSharp.Html.Parser;
using TapeVault.Core.Detection;
using TapeVault.Core.Tests.OutsideChecks;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>The curator's flow through the pages: audits, uploads, notes, recovered files, names and links.</summary>
public sealed class CuratorFlowTests
{
    private static readonly TimeSpan JobLimit = TimeSpan.FromSeconds(60);

    [Fact]
    public async Task FixityAudit_ShowsItsResultOnTheCollectionPage_AndTheJobsPageNamesWhatEachJobIsFor()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (collectionId, itemId) = await curator.NewItemAsync("FIX-0007");
        using (var upload = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 4000, seed: 5), "fixity.wav"))
        {
            await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        }

        var queued = await curator.PostAsync<JobView>($"/api/fixity?collectionId={collectionId}", new { }, HttpStatusCode.Accepted);
        var audit = await curator.WaitForJobAsync(queued.Id, JobLimit);
        Assert.Equal("done", audit.State);
        Assert.Equal(collectionId, audit.CollectionId);

        var page = await PageAsync(curator, $"/collections/{collectionId}");
        var row = page.QuerySelector($"[data-fixity][data-job=\"{audit.Id}\"]");
        Assert.NotNull(row);
        Assert.Equal(audit.ProgressText, row.QuerySelector(".job-text")!.TextContent.Trim());
        Assert.Contains("match their recorded SHA-256", audit.ProgressText, StringComparison.Ordinal);

        // A decode names its tape by accession number, the audit its collection by name, both as links.
        var decode = await curator.PostAsync<JobView>($"/api/captures/{(await curator.GetAsync<ItemDetail>($"/api/items/{itemId}")).Captures[0].Id}/decode",
            new DecodeRequest(SynthCaptures.Profile, ["line-rise"], null), HttpStatusCode.Accepted);
        await curator.WaitForJobAsync(decode.Id, JobLimit);
        var jobs = await PageAsync(curator, "/jobs");
        var auditFor = jobs.QuerySelector($"tr[data-job=\"{audit.Id}\"] td:nth-child(3) a")!;
        Assert.Equal($"/collections/{collectionId}", auditFor.GetAttribute("href"));
        Assert.Equal($"Collection for FIX-0007", auditFor.TextContent.Trim());
        var decodeFor = jobs.QuerySelector($"tr[data-job=\"{decode.Id}\"] td:nth-child(3) a")!;
        Assert.Equal($"/items/{itemId}", decodeFor.GetAttribute("href"));
        Assert.Equal("FIX-0007", decodeFor.TextContent.Trim());
    }

    [Fact]
    public async Task UploadForm_DecodesWithTheWholeBankByDefault_AndTheDecodeFormGroupsSettingsByWhatTheyAssume()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("UPL-0001");
        using (var upload = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 4000, seed: 9), "one.wav"))
        {
            await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        }

        var page = await PageAsync(curator, $"/items/{itemId}");
        var chosen = page.QuerySelector("#decodeProfile option[selected]");
        Assert.NotNull(chosen);
        var profiles = await curator.GetAsync<List<ProfileView>>("/api/profiles");
        Assert.Contains(chosen.GetAttribute("value"), profiles.Select(p => p.Id));
        Assert.NotNull(page.QuerySelector("#upload-notice"));

        // Two groups, one per assumption about where the signal comes from; every setting of the bank once, in the
        // group that matches its chain, each told apart from the others by its own words.
        var groups = page.QuerySelectorAll("fieldset.setting-group");
        Assert.Equal(2, groups.Length);
        foreach (var group in groups)
        {
            bool head = group.QuerySelector("legend")!.TextContent.Contains("head", StringComparison.Ordinal);
            var names = group.QuerySelectorAll("input[type=checkbox]").Select(i => i.GetAttribute("value")).ToList();
            Assert.Equal(DetectorBanks.Default.Where(s => s.Differentiate == head).Select(s => s.Name), names);
            Assert.False(string.IsNullOrWhiteSpace(group.QuerySelector(".assumes")?.TextContent));
        }

        var labels = page.QuerySelectorAll("fieldset.setting-group label").Select(l => l.TextContent.Trim()).ToList();
        Assert.Equal(DetectorBanks.Default.Count, labels.Count);
        Assert.Equal(labels.Count, labels.Distinct(StringComparer.Ordinal).Count());
        Assert.Equal(DetectorBanks.Default.Count, page.QuerySelectorAll("fieldset.setting-group input[type=checkbox][checked]").Length);
    }

    [Fact]
    public async Task CuratorsNotes_RenderAsMarkdown_WithRawHtmlShownAsText()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var collection = await curator.PostAsync<CollectionDetail>("/api/collections", new NewCollection("Notes shelf", "Given by *the club*."), HttpStatusCode.Created);
        const string notes = "Some **mould** on the shell.\n\n- label peeling\n- <script>alert(1)</script> [bad](javascript:alert(1))";
        var item = await curator.PostAsync<ItemDetail>($"/api/collections/{collection.Id}/items", new NewItem("MD-0001", "Notes tape", null, notes, "A"), HttpStatusCode.Created);

        // CommonMark 0.31 (spec.commonmark.org): **x** is strong emphasis, *x* emphasis, "- " starts a bullet list item.
        var page = await PageAsync(curator, $"/items/{item.Id}");
        var condition = page.QuerySelector("dl.facts .markdown")!;
        Assert.Equal("mould", condition.QuerySelector("strong")!.TextContent);
        Assert.Equal(2, condition.QuerySelectorAll("ul > li").Length);
        Assert.Empty(page.QuerySelectorAll("main script"));
        Assert.Contains("<script>alert(1)</script>", condition.TextContent, StringComparison.Ordinal);
        Assert.Equal("#", condition.QuerySelector("a")!.GetAttribute("href"));

        var shelf = await PageAsync(curator, $"/collections/{collection.Id}");
        Assert.Equal("the club", shelf.QuerySelector(".lead .markdown em")!.TextContent);
    }

    [Fact]
    public async Task RecoveredFiles_DownloadOneByOneAndAsAZip_ForViewersToo_ByteForByteAsWritten()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("FILES-01");

        // Ground truth: the files our channel model wrote onto the tape.
        var capture = SynthCaptures.Orrin(folder.Root, "files", files: 2, bytesPerFile: 100, seed: 21);
        using (var upload = await curator.UploadRawAsync(itemId, capture.Bytes, "files.wav", extraQuery: $"&decodeProfile={SynthCaptures.Profile}"))
        {
            await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
            var uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
            Assert.Equal("done", (await curator.WaitForJobAsync(uploaded.DecodeJob!.Id, JobLimit)).State);
        }

        var merge = await curator.PostAsync<JobView>($"/api/items/{itemId}/merge", new { }, HttpStatusCode.Accepted);
        Assert.Equal("done", (await curator.WaitForJobAsync(merge.Id, JobLimit)).State);
        var image = (await curator.GetAsync<List<ImageSummary>>($"/api/items/{itemId}/images"))[0];

        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        var page = await PageAsync(viewer, $"/items/{itemId}");
        var links = page.QuerySelectorAll("a[data-file-download]").Select(a => a.GetAttribute("href")!).ToList();
        Assert.Equal([$"/api/images/{image.Id}/files/0", $"/api/images/{image.Id}/files/1"], links);
        for (int i = 0; i < links.Count; i++)
        {
            using var response = await viewer.Http.GetAsync(new Uri(links[i], UriKind.Relative));
            await ApiClient.EnsureAsync(response, HttpStatusCode.OK);
            Assert.Equal($"FILE{i:00}", response.Content.Headers.ContentDisposition?.FileName?.Trim('"'));
            Assert.Equal(capture.Payloads[i], await response.Content.ReadAsByteArrayAsync());
        }

        var zipLink = page.QuerySelector("a[data-files-zip]")!.GetAttribute("href")!;
        using var zipped = await viewer.Http.GetAsync(new Uri(zipLink, UriKind.Relative));
        await ApiClient.EnsureAsync(zipped, HttpStatusCode.OK);
        Assert.Equal("application/zip", zipped.Content.Headers.ContentType?.MediaType);
        string zipPath = folder.File("files.zip");
        await File.WriteAllBytesAsync(zipPath, await zipped.Content.ReadAsByteArrayAsync());

        // Info-ZIP's unzip, outside the project, tests and unpacks the zip.
        string unpacked = Directory.CreateDirectory(folder.File("unpacked")).FullName;
        OutsideTool.Run("/usr/bin/unzip", ["-t", "-q", zipPath]);
        OutsideTool.Run("/usr/bin/unzip", ["-q", zipPath, "-d", unpacked]);
        Assert.Equal(["FILE00", "FILE01"], Directory.EnumerateFiles(unpacked).Select(Path.GetFileName).Order(StringComparer.Ordinal));
        for (int i = 0; i < 2; i++)
        {
            Assert.Equal(capture.Payloads[i], await File.ReadAllBytesAsync(Path.Combine(unpacked, $"FILE{i:00}")));
        }

        using var beyond = await viewer.Http.GetAsync(new Uri($"/api/images/{image.Id}/files/2", UriKind.Relative));
        Assert.Equal(HttpStatusCode.NotFound, beyond.StatusCode);
    }

    [Fact]
    public async Task RunPage_BreadcrumbLinksCollectionTapeAndCapture_AndTheFooterLinksTheHandlingPage_AndTheFaviconIsServed()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (collectionId, itemId) = await curator.NewItemAsync("RUN-0001");
        int captureId;
        using (var upload = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 4000, seed: 11), "run.wav"))
        {
            await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
            captureId = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!.Capture.Id;
        }

        var decode = await curator.PostAsync<JobView>($"/api/captures/{captureId}/decode", new DecodeRequest(SynthCaptures.Profile, ["line-rise"], null), HttpStatusCode.Accepted);
        var done = await curator.WaitForJobAsync(decode.Id, JobLimit);
        var run = await PageAsync(curator, $"/runs/{done.ResultId}");
        var crumbs = run.QuerySelectorAll(".crumbs a").Select(a => a.GetAttribute("href")).ToList();
        Assert.Equal(["/", $"/collections/{collectionId}", $"/items/{itemId}", $"/captures/{captureId}"], crumbs);

        Assert.Equal("/handling", run.QuerySelector("footer a")!.GetAttribute("href"));
        Assert.Equal("/favicon.svg", run.QuerySelector("link[rel=icon]")!.GetAttribute("href"));

        // Both are there for someone not signed in too: the sign-in page shows the same footer.
        using var anonymous = app.NewClient();
        using var handling = await anonymous.GetAsync(new Uri("/handling", UriKind.Relative));
        Assert.Equal(HttpStatusCode.OK, handling.StatusCode);
        var text = await handling.Content.ReadAsStringAsync();
        Assert.Contains("mould", text, StringComparison.OrdinalIgnoreCase);
        Assert.Contains("conservation", text, StringComparison.OrdinalIgnoreCase);
        using var icon = await anonymous.GetAsync(new Uri("/favicon.svg", UriKind.Relative));
        Assert.Equal(HttpStatusCode.OK, icon.StatusCode);
        Assert.Equal("image/svg+xml", icon.Content.Headers.ContentType?.MediaType);
        XNamespace svg = "http://www.w3.org/2000/svg";
        Assert.Equal(svg + "svg", XDocument.Parse(await icon.Content.ReadAsStringAsync()).Root!.Name);
    }

    [Fact]
    public async Task CapturePage_ListsBlockPositionsInOrder_EvenWhenTheBestReadingsStartTimesAreNot()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("ORDER-01");
        var capture = SynthCaptures.Orrin(folder.Root, "order", files: 2, bytesPerFile: 60, seed: 33);
        UploadResult uploaded;
        using (var upload = await curator.UploadRawAsync(itemId, capture.Bytes, "order.wav", extraQuery: $"&decodeProfile={SynthCaptures.Profile}"))
        {
            await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
            uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        }

        var run = (await curator.WaitForJobAsync(uploaded.DecodeJob!.Id, JobLimit)).ResultId!.Value;

        // Number the first two positions the other way round, so that tape time and position order disagree: the
        // page must list by position, not by where the best reading happens to start.
        await using (var scope = app.Scope())
        {
            var db = scope.ServiceProvider.GetRequiredService<TapeVault.Archive.ArchiveDbContext>();
            var candidates = await db.Candidates.Where(c => c.RunId == run).ToListAsync();
            Assert.True(candidates.Select(c => c.Position).Distinct().Count() >= 2, "the decode found fewer than two positions");
            foreach (var c in candidates.Where(c => c.Position is 0 or 1))
            {
                c.Position = 1 - c.Position;
            }

            await db.SaveChangesAsync();
        }

        var page = await PageAsync(curator, $"/captures/{uploaded.Capture.Id}?run={run}");
        var table = page.QuerySelectorAll("table").First(t => t.QuerySelector("thead")?.TextContent.Contains("Look closer", StringComparison.Ordinal) == true);
        var positions = table.QuerySelectorAll("tbody tr td:first-child")
            .Select(td => int.Parse(td.TextContent.Split(' ')[0], System.Globalization.CultureInfo.InvariantCulture)).ToList();
        Assert.True(positions.Count >= 2);
        Assert.Equal(positions.Order(), positions);

        // A page that shows confidence says in one sentence what it means.
        Assert.Contains(TapeVault.Core.Text.Vocabulary.ConfidenceSentence, page.Body!.TextContent, StringComparison.Ordinal);
    }

    private static async Task<IDocument> PageAsync(ApiClient client, string path)
    {
        using var response = await client.Http.GetAsync(new Uri(path, UriKind.Relative));
        await ApiClient.EnsureAsync(response, HttpStatusCode.OK);
        return await new HtmlParser().ParseDocumentAsync(await response.Content.ReadAsStringAsync());
    }
}
