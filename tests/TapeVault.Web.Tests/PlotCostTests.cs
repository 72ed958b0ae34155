using System.Net;
using System.Net.Http.Json;
using TapeVault.Core.Audio;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>
/// What viewers can make the server compute. The decode job makes the whole-capture plots ahead (every setting's
/// pulse-length survey, the overview), so opening a capture page costs no pass over the original; what is left (zooms,
/// a block's pulses) is limited per account with ASP.NET Core's rate limiter.
/// </summary>
public sealed class PlotCostTests
{
    [Fact]
    public async Task DecodeJob_MakesEverySettingsWholeCaptureSurveyAndTheOverview_AndThePageServesThemKept()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("PLOT-1");
        var capture = SynthCaptures.Orrin(folder.Root, "plots", files: 2, bytesPerFile: 40, seed: 3);
        var uploaded = await UploadAndDecodeAsync(curator, itemId, capture.Bytes);
        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        int id = uploaded.Capture.Id;

        var overview = await viewer.GetAsync<WaveformView>($"/api/captures/{id}/overview");
        Assert.True(overview.FromCache, "the overview was computed on request");

        var first = await viewer.GetAsync<HistogramView>($"/api/captures/{id}/pulses?scope=whole");
        Assert.True(first.Choice.Settings.Count > 1);
        var profile = ProfileCatalog.BuiltIn.Get(SynthCaptures.Profile);
        var settings = DetectorBanks.Default;
        foreach (var settingName in first.Choice.Settings)
        {
            var view = await viewer.GetAsync<HistogramView>($"/api/captures/{id}/pulses?scope=whole&setting={Uri.EscapeDataString(settingName)}");
            Assert.True(view.Cached, $"the survey of {settingName} was computed on request");

            // The kept counts are what a survey of that one setting over the uploaded bytes gives now.
            var setting = settings.Single(s => s.Name == settingName);
            string wav = Path.Combine(folder.Root, $"check-{settingName}.wav");
            await File.WriteAllBytesAsync(wav, capture.Bytes);
            using var reader = CaptureReader.Open(wav, ChannelChoice.Mix);
            var fresh = PulseSurvey.Measure(reader, setting, new PulseHistogram(view.Bins[0].FromSeconds, view.Bins[^1].ToSeconds, view.Bins.Count));
            Assert.Equal(fresh.Counts.ToArray(), view.Bins.Select(b => b.Count).ToArray());
            Assert.Equal(fresh.Below, view.Below);
            Assert.Equal(fresh.Above, view.Above);
            Assert.True(fresh.InRange > 100, $"{settingName}: only {fresh.InRange} intervals");
        }
    }

    [Fact]
    public async Task Zooms_AreLimitedPerAccount_With429RetryAfterAndASentence_OtherAccountsUnaffected()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?>
        {
            ["TapeVault:RateLimits:PlotBurst"] = "3",
            ["TapeVault:RateLimits:PlotsPerMinute"] = "1",
        });
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("PLOT-2");
        var capture = SynthCaptures.Orrin(folder.Root, "limits", files: 1, bytesPerFile: 40, seed: 4);
        var uploaded = await UploadAndDecodeAsync(curator, itemId, capture.Bytes);
        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        string zoom = $"/api/captures/{uploaded.Capture.Id}/zoom?from=0.1&seconds=0.5";

        for (int i = 0; i < 3; i++)
        {
            using var allowed = await viewer.Http.GetAsync(zoom);
            await ApiClient.EnsureAsync(allowed, HttpStatusCode.OK);
        }

        using var refused = await viewer.Http.GetAsync(zoom);
        Assert.Equal(HttpStatusCode.TooManyRequests, refused.StatusCode);
        Assert.True(refused.Headers.RetryAfter?.Delta is { TotalSeconds: >= 1 and <= 60 }, refused.Headers.RetryAfter?.ToString());
        string title = await ApiClient.ProblemTitleAsync(refused);
        Assert.StartsWith("Too many plot requests from this account (at most 3 at once and 1 a minute); try again in ", title, StringComparison.Ordinal);

        // The capture page, which draws a zoom and a histogram on the server, counts against the same allowance.
        using var page = await viewer.Http.GetAsync($"/captures/{uploaded.Capture.Id}");
        Assert.Equal(HttpStatusCode.TooManyRequests, page.StatusCode);

        // Another account has its own allowance; reads that compute nothing from the original are not limited.
        using var other = await curator.Http.GetAsync(zoom);
        await ApiClient.EnsureAsync(other, HttpStatusCode.OK);
        using var blocks = await viewer.Http.GetAsync($"/api/captures/{uploaded.Capture.Id}/blocks");
        await ApiClient.EnsureAsync(blocks, HttpStatusCode.OK);
    }

    private static async Task<UploadResult> UploadAndDecodeAsync(ApiClient curator, int itemId, byte[] bytes)
    {
        using var upload = await curator.UploadRawAsync(itemId, bytes, "plots.wav", extraQuery: $"&decodeProfile={SynthCaptures.Profile}");
        await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        var uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        var job = await curator.WaitForJobAsync(uploaded.DecodeJob!.Id, TimeSpan.FromSeconds(60));
        Assert.True(job.State == "done", job.Error);
        return uploaded;
    }
}
