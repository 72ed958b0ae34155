using System.Net;
using System.Net.Http.Json;
using TapeVault.Web.Api;
using TapeVault.Web;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

public sealed class WebSafetyTests
{
    [Fact]
    public async Task EveryResponseCarriesTheSecurityHeaders()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        using var client = app.NewClient();
        foreach (var path in new[] { "/signin", "/css/site.css", "/api/antiforgery", "/" })
        {
            using var response = await client.GetAsync(path);
            // OWASP secure headers project (common practice): no MIME sniffing, no framing, scripts only from the app.
            Assert.Equal("nosniff", response.Headers.GetValues("X-Content-Type-Options").Single());
            Assert.Equal("DENY", response.Headers.GetValues("X-Frame-Options").Single());
            var csp = response.Headers.GetValues("Content-Security-Policy").Single();
            Assert.Contains("script-src 'self'", csp, StringComparison.Ordinal);
            Assert.Contains("frame-ancestors 'none'", csp, StringComparison.Ordinal);
            Assert.DoesNotContain("unsafe-inline", csp, StringComparison.Ordinal);
        }
    }

    [Fact]
    public async Task SignInCookieIsHttpOnlyAndSameSiteStrict()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var client = app.NewClient();
        var api = new ApiClient(client);
        await api.RefreshAntiforgeryAsync();
        using var response = await client.PostAsync("/api/signin", System.Net.Http.Json.JsonContent.Create(new { userName = ArchiveAppFactory.CuratorName, password = ArchiveAppFactory.Password }));
        Assert.Equal(HttpStatusCode.NoContent, response.StatusCode);
        var cookie = response.Headers.GetValues("Set-Cookie").Single(c => c.StartsWith("tapevault.session=", StringComparison.Ordinal));
        Assert.Contains("httponly", cookie, StringComparison.OrdinalIgnoreCase);
        Assert.Contains("samesite=strict", cookie, StringComparison.OrdinalIgnoreCase);
    }

    [Theory]
    [InlineData("aaaaaaaaaaaa")]
    [InlineData("password1234")]
    [InlineData("aaaaaaaaaaaaaaaaaaaa")]
    [InlineData("Password123456789")]
    [InlineData("test-curator-2024-key")]
    public async Task WeakPasswordsAreRefusedForACurator(string password)
    {
        // NIST SP 800-63B-4 §3.1.1.2: length, a blocklist, and no context-specific words such as the user name.
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        using var response = await curator.Http.PostAsJsonAsync("/api/users", new NewUser("test-curator-2", "curator", password), ApiClient.Json);
        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.StartsWith("The password ", await ApiClient.ProblemTitleAsync(response), StringComparison.Ordinal);
        Assert.DoesNotContain(await app.UserNamesAsync(), u => u == "test-curator-2");
    }

    [Fact]
    public void ContentSecurityPolicyAllowsNothingFromOutside() =>
        Assert.DoesNotContain("http", SecurityHeaders.ContentSecurityPolicy, StringComparison.Ordinal);
}

public sealed class OriginalDownloadTests
{
    [Theory]
    [InlineData("false", HttpStatusCode.Forbidden)]
    [InlineData("true", HttpStatusCode.OK)]
    public async Task ViewersDownloadOriginalsOnlyWhenTheSettingAllowsIt(string allowed, HttpStatusCode viewerGets)
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?> { ["TapeVault:Web:ViewersMayDownloadOriginals"] = allowed });
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("DL-1");
        using var upload = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 2000), "dl.wav");
        await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        var uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        using var asViewer = await viewer.Http.GetAsync($"/api/captures/{uploaded.Capture.Id}/original");
        Assert.Equal(viewerGets, asViewer.StatusCode);
        using var asCurator = await curator.Http.GetAsync($"/api/captures/{uploaded.Capture.Id}/original");
        Assert.Equal(HttpStatusCode.OK, asCurator.StatusCode);
    }

    [Theory]
    [InlineData("false", true)]
    [InlineData("true", false)]
    public async Task ViewersSeeWaveformsNoFinerThanEightSamplesAColumnWhereOriginalsAreWithheld(string allowed, bool coarse)
    {
        // Zoom after zoom at one sample a column would hand a viewer the recording the download refuses.
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?> { ["TapeVault:Web:ViewersMayDownloadOriginals"] = allowed });
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("ZOOM-1");
        using var upload = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 22_050), "zoom.wav", extraQuery: $"&decodeProfile={SynthCaptures.Profile}");
        await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        var uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        Assert.Equal("done", (await curator.WaitForJobAsync(uploaded.DecodeJob!.Id, TimeSpan.FromSeconds(30))).State);
        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        int id = uploaded.Capture.Id;

        // 10 ms of a 22 050 Hz capture is 220 samples: at most 27 columns at eight samples a column.
        var viewerZoom = await viewer.GetAsync<ZoomView>($"/api/captures/{id}/zoom?from=0.1&seconds=0.01&columns=1000");
        var curatorZoom = await curator.GetAsync<ZoomView>($"/api/captures/{id}/zoom?from=0.1&seconds=0.01&columns=1000");
        var viewerOverview = await viewer.GetAsync<WaveformView>($"/api/captures/{id}/overview?columns=4000");
        if (coarse)
        {
            Assert.InRange(viewerZoom.Signal.Minimum.Count, 1, 220 / 8);
            Assert.InRange(viewerZoom.Conditioned.Minimum.Count, 1, 220 / 8);
            Assert.InRange(viewerOverview.Minimum.Count, 1, 22_050 / 8);
        }
        else
        {
            Assert.True(viewerZoom.Signal.Minimum.Count >= 200, $"{viewerZoom.Signal.Minimum.Count} columns");
            Assert.Equal(4000, viewerOverview.Minimum.Count);
        }

        Assert.True(curatorZoom.Signal.Minimum.Count >= 200, $"a curator's zoom has {curatorZoom.Signal.Minimum.Count} columns");
    }
}
