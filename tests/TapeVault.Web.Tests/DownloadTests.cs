using System.Globalization;
using System.Net;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Security.Cryptography;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>One archive with one of every download: an original, a tape image, a bag, a catalogue, a recovered file and their zip.</summary>
public sealed class DownloadArchive : IAsyncLifetime
{
    public ArchiveFolder Folder { get; } = new();

    public ArchiveAppFactory App { get; private set; } = null!;

    public ApiClient Curator { get; private set; } = null!;

    public int CaptureId { get; private set; }

    public Dictionary<string, string> Urls { get; } = new(StringComparer.Ordinal);

    public async Task InitializeAsync()
    {
        App = new ArchiveAppFactory(Folder);
        await App.AddCuratorAndViewerAsync();
        Curator = await App.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (collectionId, itemId) = await Curator.NewItemAsync("DL-ALL");
        var capture = SynthCaptures.Orrin(Folder.Root, "downloads", files: 1, bytesPerFile: 60, seed: 11);
        using var upload = await Curator.UploadRawAsync(itemId, capture.Bytes, "downloads.wav", extraQuery: $"&decodeProfile={SynthCaptures.Profile}");
        await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        var uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        Assert.Equal("done", (await Curator.WaitForJobAsync(uploaded.DecodeJob!.Id, TimeSpan.FromSeconds(60))).State);
        CaptureId = uploaded.Capture.Id;
        int image = await DoneAsync($"/api/items/{itemId}/merge");
        int bag = await DoneAsync($"/api/items/{itemId}/bag");
        int catalogue = await DoneAsync($"/api/collections/{collectionId}/publish");
        Urls["original"] = $"/api/captures/{CaptureId}/original";
        Urls["image"] = $"/api/images/{image}/download";
        Urls["bag"] = $"/api/exports/{bag}/download";
        Urls["catalogue"] = $"/api/exports/{catalogue}/download";
        Urls["recovered file"] = $"/api/images/{image}/files/0";
        Urls["recovered files zip"] = $"/api/images/{image}/files/zip";
    }

    public async Task DisposeAsync()
    {
        Curator.Dispose();
        await App.DisposeAsync();
        Folder.Dispose();
    }

    private async Task<int> DoneAsync(string path)
    {
        var job = await Curator.PostAsync<JobView>(path, new { }, HttpStatusCode.Accepted);
        var done = await Curator.WaitForJobAsync(job.Id, TimeSpan.FromSeconds(60));
        Assert.True(done.State == "done", done.Error);
        return done.ResultId!.Value;
    }
}

/// <summary>
/// Downloads against RFC 9110: HEAD (§9.3.2), a strong ETag that is the SHA-256 of the bytes (§8.8.3), Last-Modified
/// (§8.8.2), ranges (§14.2) and If-Range (§13.1.5: a validator that does not match gives the whole file with 200).
/// The hash each test expects is computed by the BCL's SHA-256 (FIPS 180-4) over the bytes actually received.
/// </summary>
public sealed class DownloadTests(DownloadArchive archive) : IClassFixture<DownloadArchive>
{
    public static TheoryData<string> Kinds => ["original", "image", "bag", "catalogue", "recovered file", "recovered files zip"];

    [Theory]
    [MemberData(nameof(Kinds))]
    public async Task Get_CarriesAStrongETagThatIsTheSha256OfTheBody_AndLastModified(string kind)
    {
        using var response = await SendAsync(HttpMethod.Get, kind);
        await ApiClient.EnsureAsync(response, HttpStatusCode.OK);
        byte[] body = await response.Content.ReadAsByteArrayAsync();
        Assert.NotEmpty(body);

        // RFC 9110 §8.8.3: entity-tag = [ weak ] opaque-tag; opaque-tag = DQUOTE *etagc DQUOTE. Strong: no W/ prefix.
        var etag = response.Headers.ETag!;
        Assert.False(etag.IsWeak);
        Assert.Equal($"\"{Convert.ToHexStringLower(SHA256.HashData(body))}\"", etag.Tag);
        Assert.NotNull(response.Content.Headers.LastModified);
        Assert.Equal("bytes", Assert.Single(response.Headers.AcceptRanges));
    }

    [Theory]
    [MemberData(nameof(Kinds))]
    public async Task Head_AnswersWithTheSameHeadersAndNoBody(string kind)
    {
        using var get = await SendAsync(HttpMethod.Get, kind);
        byte[] body = await get.Content.ReadAsByteArrayAsync();
        using var head = await SendAsync(HttpMethod.Head, kind);

        // RFC 9110 §9.3.2: the same header fields as GET, no content.
        await ApiClient.EnsureAsync(head, HttpStatusCode.OK);
        Assert.Equal(get.Headers.ETag, head.Headers.ETag);
        Assert.Equal(get.Content.Headers.LastModified, head.Content.Headers.LastModified);
        Assert.Equal(body.Length, head.Content.Headers.ContentLength);
        Assert.Equal(get.Content.Headers.ContentDisposition?.ToString(), head.Content.Headers.ContentDisposition?.ToString());
        Assert.Empty(await head.Content.ReadAsByteArrayAsync());
    }

    [Theory]
    [MemberData(nameof(Kinds))]
    public async Task IfRange_WithTheCurrentETagOrExactDate_GivesTheRange_AnythingElseTheWholeFile(string kind)
    {
        using var full = await SendAsync(HttpMethod.Get, kind);
        byte[] body = await full.Content.ReadAsByteArrayAsync();
        var etag = full.Headers.ETag!;
        var lastModified = full.Content.Headers.LastModified!.Value;

        // RFC 9110 §13.1.5: a matching strong entity tag, or a date that exactly matches Last-Modified: the range (206).
        await AssertRangeAsync(kind, r => r.Headers.IfRange = new RangeConditionHeaderValue(etag), body, partial: true);
        await AssertRangeAsync(kind, r => r.Headers.IfRange = new RangeConditionHeaderValue(lastModified), body, partial: true);
        await AssertRangeAsync(kind, _ => { }, body, partial: true);

        // Anything else: "the server SHOULD ignore the Range header field" and send the whole representation (200).
        string wrong = "\"" + new string('0', 64) + "\"";
        await AssertRangeAsync(kind, r => r.Headers.IfRange = new RangeConditionHeaderValue(wrong), body, partial: false);

        // A weak tag never matches under the strong comparison If-Range requires, even with the right hash.
        await AssertRangeAsync(kind, r => r.Headers.IfRange = new RangeConditionHeaderValue(new EntityTagHeaderValue(etag.Tag, isWeak: true)), body, partial: false);

        // A date that is not exactly Last-Modified, later or earlier, does not match either.
        await AssertRangeAsync(kind, r => r.Headers.IfRange = new RangeConditionHeaderValue(lastModified.AddSeconds(1)), body, partial: false);
        await AssertRangeAsync(kind, r => r.Headers.IfRange = new RangeConditionHeaderValue(lastModified.AddDays(1)), body, partial: false);
        await AssertRangeAsync(kind, r => r.Headers.IfRange = new RangeConditionHeaderValue(lastModified.AddSeconds(-1)), body, partial: false);
    }

    [Theory]
    [MemberData(nameof(Kinds))]
    public async Task IfNoneMatch_WithTheETag_Gives304(string kind)
    {
        using var full = await SendAsync(HttpMethod.Get, kind);
        using var again = await SendAsync(HttpMethod.Get, kind, r => r.Headers.IfNoneMatch.Add(full.Headers.ETag!));

        // RFC 9110 §13.1.2: If-None-Match that matches, for GET or HEAD: 304 Not Modified.
        Assert.Equal(HttpStatusCode.NotModified, again.StatusCode);
    }

    [Fact]
    public async Task OriginalStoredUnderANameWithARightToLeftOverride_IsOfferedUnderANameThatShowsIt()
    {
        // A name stored before uploads refused such characters (UAX #9: U+202E makes "\u202Evaw.exe" show as "exe.wav").
        await using (var scope = archive.App.Scope())
        {
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            await db.Captures.Where(c => c.Id == archive.CaptureId).ExecuteUpdateAsync(s => s.SetProperty(c => c.OriginalFileName, "side-a\u202Evaw.exe"));
        }

        try
        {
            using var response = await SendAsync(HttpMethod.Get, "original");
            await ApiClient.EnsureAsync(response, HttpStatusCode.OK);
            var disposition = response.Content.Headers.ContentDisposition!;
            string name = Uri.UnescapeDataString(disposition.FileNameStar ?? disposition.FileName!.Trim('"'));
            Assert.Equal("side-a[U+202E]vaw.exe", name);
        }
        finally
        {
            await using var scope = archive.App.Scope();
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            await db.Captures.Where(c => c.Id == archive.CaptureId).ExecuteUpdateAsync(s => s.SetProperty(c => c.OriginalFileName, "downloads.wav"));
        }
    }

    private async Task AssertRangeAsync(string kind, Action<HttpRequestMessage> condition, byte[] body, bool partial)
    {
        using var response = await SendAsync(HttpMethod.Get, kind, r =>
        {
            r.Headers.Range = new RangeHeaderValue(10, 19);
            condition(r);
        });
        byte[] got = await response.Content.ReadAsByteArrayAsync();
        string what = $"{kind} If-Range {response.RequestMessage!.Headers.IfRange?.ToString() ?? "(none)"}";
        if (partial)
        {
            Assert.True(response.StatusCode == HttpStatusCode.PartialContent, $"{what}: {(int)response.StatusCode}");
            Assert.Equal(body[10..20], got);
            Assert.Equal(string.Create(CultureInfo.InvariantCulture, $"bytes 10-19/{body.Length}"), response.Content.Headers.ContentRange!.ToString());
        }
        else
        {
            Assert.True(response.StatusCode == HttpStatusCode.OK, $"{what}: {(int)response.StatusCode}");
            Assert.Equal(body, got);
        }
    }

    private async Task<HttpResponseMessage> SendAsync(HttpMethod method, string kind, Action<HttpRequestMessage>? configure = null)
    {
        using var request = new HttpRequestMessage(method, new Uri(archive.Urls[kind], UriKind.Relative));
        configure?.Invoke(request);
        return await archive.Curator.Http.SendAsync(request);
    }
}
