using System.Globalization;
using AngleSharp.Html.Parser;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Events;
using TapeVault.Archive.Export;
using TapeVault.Core.Catalogue;
using Xunit;

namespace TapeVault.Archive.Tests;

[Collection(SharedArchiveGroup.Name)]
public sealed class CatalogueTests(SharedArchive shared)
{
    private readonly HtmlParser parser = new();

    [Fact]
    public async Task PublishedCatalogueVerifiesWithGnuSha256sumAndCoversEveryFile()
    {
        var site = await PublishAsync();
        var (exit, output) = ArchiveFixture.Sha256SumCheck(site, "SHA256SUMS");
        Assert.True(exit == 0, output);
        var listed = File.ReadAllLines(Path.Combine(site, "SHA256SUMS")).Select(l => l.Split("  ", 2)[1]).ToHashSet();
        var files = Directory.GetFiles(site, "*", SearchOption.AllDirectories).Select(f => Path.GetRelativePath(site, f).Replace('\\', '/')).Where(f => f != "SHA256SUMS").ToHashSet();
        Assert.Equal(files, listed);
    }

    [Fact]
    public async Task PagesParseAsHtmlWithNoScriptAndNothingFetchedFromOutside()
    {
        var site = await PublishAsync();
        foreach (var page in Directory.GetFiles(site, "*.html", SearchOption.AllDirectories))
        {
            // AngleSharp, a general-purpose HTML5 parser from NuGet, reads the page as a browser would.
            var document = parser.ParseDocument(File.ReadAllText(page));
            Assert.Empty(document.QuerySelectorAll("script"));
            Assert.Empty(document.QuerySelectorAll("iframe, object, embed"));
            Assert.All(document.QuerySelectorAll("[src]"), e => Assert.DoesNotContain("//", e.GetAttribute("src")!, StringComparison.Ordinal));
            Assert.All(document.QuerySelectorAll("link[rel=stylesheet]"), e => Assert.DoesNotContain("//", e.GetAttribute("href")!, StringComparison.Ordinal));
            Assert.All(document.All, e => Assert.DoesNotContain(e.Attributes, a => a.Name.StartsWith("on", StringComparison.OrdinalIgnoreCase)));
            Assert.NotNull(document.QuerySelector("title"));
        }
    }

    [Fact]
    public async Task CuratorNoteWithMarkupShowsAsTextAndItsScriptLinkIsInert()
    {
        var site = await PublishAsync();
        var document = parser.ParseDocument(File.ReadAllText(Path.Combine(site, "items", $"{ArchiveFixture.Accession}.html")));
        var description = document.QuerySelector(".description")!;
        Assert.Contains("<script>alert('x')</script>", description.TextContent, StringComparison.Ordinal);
        Assert.Empty(description.QuerySelectorAll("script"));
        Assert.Equal("#", description.QuerySelector("a")!.GetAttribute("href"));
        Assert.NotNull(description.QuerySelector("strong"));
    }

    [Fact]
    public async Task ItemPageNumbersEqualTheStoredImage()
    {
        var site = await PublishAsync();
        await using var db = shared.Archive.NewContext();
        var image = await db.Images.AsNoTracking().SingleAsync(i => i.ItemId == shared.Archive.ItemId);
        var document = parser.ParseDocument(File.ReadAllText(Path.Combine(site, "items", $"{ArchiveFixture.Accession}.html")));
        string Count(string name) => document.QuerySelector($"[data-count={name}]")!.TextContent;
        Assert.Equal(image.CleanBlocks.ToString(CultureInfo.InvariantCulture), Count("clean"));
        Assert.Equal(image.VotedBlocks.ToString(CultureInfo.InvariantCulture), Count("voted"));
        Assert.Equal(image.RepairedBlocks.ToString(CultureInfo.InvariantCulture), Count("repaired"));
        Assert.Equal(image.MissingBlocks.ToString(CultureInfo.InvariantCulture), Count("missing"));
        Assert.Equal(image.OverallConfidence.ToString("0.000", CultureInfo.InvariantCulture), Count("overall"));
        Assert.Contains(image.Sha256, document.Body!.TextContent, StringComparison.Ordinal);
        Assert.Contains(CatalogueWriter.ConfidenceExplanation, document.Body.TextContent, StringComparison.Ordinal);
        Assert.Equal(ArchiveFixture.Accession, document.QuerySelector("meta[name='DCTERMS.identifier']")!.GetAttribute("content"));
        // The tape timeline: the image lane draws one titled shape per position of the image.
        var timeline = document.QuerySelector("svg.timeline");
        Assert.NotNull(timeline);
        Assert.Equal(image.CleanBlocks + image.VotedBlocks + image.RepairedBlocks + image.MissingBlocks,
            timeline!.QuerySelectorAll("title").Count(t => t.TextContent.StartsWith("position ", StringComparison.Ordinal)));

        // Every capture is in the provenance table with its SHA-256.
        foreach (var capture in await db.Captures.AsNoTracking().Where(c => c.ItemId == shared.Archive.ItemId).ToListAsync())
        {
            Assert.Contains(capture.Sha256, document.Body.TextContent, StringComparison.Ordinal);
        }

        // The files the headers name, with the lengths of the synthesised files (the ground truth of the fixture).
        foreach (var file in shared.Archive.Files)
        {
            var row = document.QuerySelectorAll("tr").First(r => r.TextContent.Contains(file.Name, StringComparison.Ordinal) && r.TextContent.Contains("yes", StringComparison.Ordinal));
            Assert.Contains(file.Content.Length.ToString(CultureInfo.InvariantCulture), row.TextContent, StringComparison.Ordinal);
        }
    }

    [Fact]
    public async Task PulseHistogramPeaksWhereTheFormatWritesItsPulses()
    {
        var site = await PublishAsync();
        var document = parser.ParseDocument(File.ReadAllText(Path.Combine(site, "items", $"{ArchiveFixture.Accession}.html")));
        Assert.NotNull(document.QuerySelector("svg.histogram"));
        var tables = document.QuerySelectorAll("details table");
        var bins = tables[0].QuerySelectorAll("tbody tr").Select(r => r.QuerySelectorAll("td").Select(c => double.Parse(c.TextContent, CultureInfo.InvariantCulture)).ToArray()).ToList();
        var marks = tables[1].QuerySelectorAll("tbody tr").Where(r => !r.TextContent.Contains("boundary", StringComparison.Ordinal))
            .Select(r => double.Parse(r.QuerySelectorAll("td")[1].TextContent, CultureInfo.InvariantCulture)).ToList();
        Assert.NotEmpty(marks);

        // The fullest bin lies within 10 % of a duration the format writes (orrin-80 writes 320, 640 and 1280 µs
        // cycles; the synthesised passes were written with exactly those), the marks placed at the measured speed.
        var peak = bins.MaxBy(b => b[2])!;
        double centre = Math.Sqrt(peak[0] * peak[1]);
        Assert.Contains(marks, m => Math.Abs(m - centre) / m < 0.10);
    }

    [Fact]
    public async Task CsvAndJsonCarryTheSameSummary()
    {
        var site = await PublishAsync();
        await using var db = shared.Archive.NewContext();
        var image = await db.Images.AsNoTracking().SingleAsync(i => i.ItemId == shared.Archive.ItemId);
        var rows = File.ReadAllText(Path.Combine(site, "catalogue.csv")).Split("\r\n", StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(2, rows.Length);
        // Every cell is quoted (RFC 4180 allows it; OWASP's CSV Injection guidance asks for it); none of these hold a comma.
        var fields = rows[1].Split(',').Select(f => f.Trim('"')).ToArray();
        Assert.Equal(ArchiveFixture.Accession, fields[0]);
        Assert.Equal(image.CleanBlocks.ToString(CultureInfo.InvariantCulture), fields[4]);
        Assert.Equal(image.Sha256, fields[10]);
        using var json = System.Text.Json.JsonDocument.Parse(File.ReadAllText(Path.Combine(site, "catalogue.json")));
        var item = json.RootElement.GetProperty("items")[0];
        Assert.Equal(image.MissingBlocks, item.GetProperty("image").GetProperty("missing").GetInt32());
    }

    [Fact]
    public async Task CliPublishWritesTheSiteAndRefusesAFolderInUse()
    {
        var archive = shared.Archive;
        var target = Path.Combine(archive.Root, $"cli-site-{Guid.NewGuid():N}");
        string[] args = ["publish", archive.CollectionId.ToString(CultureInfo.InvariantCulture), target, .. archive.CliArchiveArguments()];
        Assert.Equal(0, TapeVault.Cli.Entry.Run(args, new StringWriter(), new StringWriter()));
        Assert.True(File.Exists(Path.Combine(target, "index.html")));
        var error = new StringWriter();
        Assert.Equal(2, TapeVault.Cli.Entry.Run(args, new StringWriter(), error));
        Assert.Contains("not empty", error.ToString(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task CatalogueJsonCarriesTheEventChainHeadAsTheDatabaseHoldsIt()
    {
        ChainHead head;
        await using (var db = shared.Archive.NewContext())
        {
            head = (await EventChain.HeadAsync(db))!;
            Assert.Equal(head.Sha256, (await db.Events.AsNoTracking().OrderByDescending(e => e.Id).FirstAsync()).Sha256);
        }

        var site = await PublishAsync();
        using var json = System.Text.Json.JsonDocument.Parse(File.ReadAllText(Path.Combine(site, "catalogue.json")));
        Assert.Equal($"event {head.EventId} sha256:{head.Sha256}", json.RootElement.GetProperty("eventChainHead").GetString());
    }

    [Fact]
    public async Task CliPublishRecordsTheFolderItEndedInNotTheTemporaryOneNorAServerPath()
    {
        var archive = shared.Archive;
        var target = Path.Combine(archive.Root, $"named-site-{Guid.NewGuid():N}");
        string[] args = ["publish", archive.CollectionId.ToString(CultureInfo.InvariantCulture), target, .. archive.CliArchiveArguments()];
        Assert.Equal(0, TapeVault.Cli.Entry.Run(args, new StringWriter(), new StringWriter()));
        await using var db = archive.NewContext();
        var recorded = await db.Events.AsNoTracking().Where(e => e.EventType == "export" && e.ObjectType == "collection").OrderByDescending(e => e.Id).FirstAsync();
        Assert.Contains($"'{Path.GetFileName(target)}'", recorded.Detail, StringComparison.Ordinal);
        Assert.DoesNotContain(".part-", recorded.Detail, StringComparison.Ordinal);
        Assert.DoesNotContain(archive.Root, recorded.Detail, StringComparison.Ordinal);
    }

    private async Task<string> PublishAsync()
    {
        var folder = Path.Combine(shared.Archive.Root, $"site-{Guid.NewGuid():N}");
        using var scope = shared.Archive.Services.CreateScope();
        await scope.ServiceProvider.GetRequiredService<CataloguePublisher>().WriteAsync(shared.Archive.CollectionId, folder);
        return folder;
    }
}

public sealed class SafeMarkdownTests
{
    [Theory]
    [InlineData("javascript:alert(1)", false)]
    [InlineData(" JavaScript:alert(1)", false)]
    [InlineData("java\tscript:alert(1)", false)]
    [InlineData("data:text/html,x", false)]
    [InlineData("vbscript:x", false)]
    [InlineData("https://example.org/", true)]
    [InlineData("mailto:club@example.org", true)]
    [InlineData("../index.html", true)]
    [InlineData("#top", true)]
    public void OnlyWebMailAndRelativeAddressesStayLinks(string url, bool safe) => Assert.Equal(safe, SafeMarkdown.IsSafeUrl(url));

    [Fact]
    public void RawHtmlIsEscapedNotRendered()
    {
        // CommonMark with raw HTML disabled (Markdig's DisableHtml): the tag is text.
        var html = SafeMarkdown.ToHtml("<img src=x onerror=alert(1)> and <b>bold</b>");
        Assert.DoesNotContain("<img", html, StringComparison.Ordinal);
        Assert.Contains("&lt;img", html, StringComparison.Ordinal);
    }
}
