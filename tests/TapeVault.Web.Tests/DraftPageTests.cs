using System.Net;
using System.Net.Http.Json;
using System.Text.RegularExpressions;
using TapeVault.Core.Formats;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>
/// The draft page: a curator drafts a profile from an uploaded capture, sees the guesses marked, checks the text
/// against the capture, and saves it into the profiles folder only after a check of that very text; a viewer sees the
/// page but cannot draft or save.
/// </summary>
public sealed class DraftPageArchive : IAsyncLifetime
{
    public ArchiveFolder Folder { get; } = new();

    public ArchiveAppFactory App { get; private set; } = null!;

    public string ProfilesFolder => Folder.File("profiles");

    public int CaptureId { get; private set; }

    public async Task InitializeAsync()
    {
        App = new ArchiveAppFactory(Folder, new Dictionary<string, string?> { ["TapeVault:ProfilesFolder"] = ProfilesFolder });
        await App.AddCuratorAndViewerAsync();
        using var curator = await App.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("DRAFT-1");
        var capture = SynthCaptures.Orrin(Folder.Root, "draft", files: 12, bytesPerFile: 120, seed: 11);
        using var upload = await curator.UploadRawAsync(itemId, capture.Bytes, "draft.wav");
        await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        CaptureId = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!.Capture.Id;
    }

    public async Task DisposeAsync()
    {
        await App.DisposeAsync();
        Folder.Dispose();
    }
}

public sealed partial class DraftPageTests(DraftPageArchive archive) : IClassFixture<DraftPageArchive>
{
    private ArchiveAppFactory app => archive.App;

    private string profilesFolder => archive.ProfilesFolder;

    private int captureId => archive.CaptureId;

    [Fact]
    public async Task Curator_drafts_checks_and_only_then_saves()
    {
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        string page = $"/captures/{captureId}/draft";
        using (var drafted = await curator.Http.PostAsync($"{page}?handler=Draft", Form(("Seconds", "60"))))
        {
            string html = await drafted.Content.ReadAsStringAsync();
            Assert.Equal(HttpStatusCode.OK, drafted.StatusCode);
            Assert.True(html.Contains("guess-row", StringComparison.Ordinal), Regex.Match(html, "class=\"problem\"[^>]*>(.*?)</div>", RegexOptions.Singleline).Groups[1].Value);
            Assert.Contains("pulse-width", html, StringComparison.Ordinal);
            string json = WebUtility.HtmlDecode(TextArea().Match(html).Groups[1].Value);
            var profile = ProfileLoader.Parse(json, "page");
            Assert.Equal(FormatFamily.PulseWidth, profile.Family);

            // Saving text that was never checked is refused, and nothing is written.
            using var unchecked_ = await curator.Http.PostAsync($"{page}?handler=Save", Form(("ProfileJson", json), ("Seconds", "60")));
            Assert.Contains("before saving", WebUtility.HtmlDecode(await unchecked_.Content.ReadAsStringAsync()), StringComparison.Ordinal);
            Assert.False(Directory.Exists(profilesFolder) && Directory.EnumerateFiles(profilesFolder).Any());

            // Checked, then saved: the saved file is the text checked, and it loads.
            using var checkedPage = await curator.Http.PostAsync($"{page}?handler=Check", Form(("ProfileJson", json), ("Seconds", "60")));
            string checkedHtml = await checkedPage.Content.ReadAsStringAsync();
            Assert.Contains("What the check found", checkedHtml, StringComparison.Ordinal);
            string hash = HiddenHash().Match(checkedHtml).Groups[1].Value;
            Assert.Matches("^[0-9a-f]{64}$", hash);

            // The hash of the checked text does not let an edited text through.
            using var edited = await curator.Http.PostAsync($"{page}?handler=Save", Form(("ProfileJson", json.Replace("Draft from", "Edited draft from", StringComparison.Ordinal)), ("CheckedHash", hash), ("Seconds", "60")));
            Assert.Contains("before saving", WebUtility.HtmlDecode(await edited.Content.ReadAsStringAsync()), StringComparison.Ordinal);

            using var saved = await curator.Http.PostAsync($"{page}?handler=Save", Form(("ProfileJson", json), ("CheckedHash", hash), ("Seconds", "60")));
            Assert.Contains("Saved as", await saved.Content.ReadAsStringAsync(), StringComparison.Ordinal);
            string file = Assert.Single(Directory.EnumerateFiles(profilesFolder));
            Assert.Equal(profile.Id, ProfileLoader.Load(file).Id);
        }
    }

    [Fact]
    public async Task Viewer_sees_the_page_but_may_not_draft()
    {
        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        using var get = await viewer.Http.GetAsync($"/captures/{captureId}/draft");
        Assert.Equal(HttpStatusCode.OK, get.StatusCode);
        Assert.Contains("Only curators", await get.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        using var post = await viewer.Http.PostAsync($"/captures/{captureId}/draft?handler=Draft", Form(("Seconds", "60")));
        Assert.True(post.StatusCode is HttpStatusCode.Forbidden or HttpStatusCode.Redirect or HttpStatusCode.Found, $"{post.StatusCode}");
    }

    private static FormUrlEncodedContent Form(params (string Key, string Value)[] fields) =>
        new(fields.Select(f => new KeyValuePair<string, string>(f.Key, f.Value)));

    [GeneratedRegex("<textarea id=\"profile-json\"[^>]*>(.*?)</textarea>", RegexOptions.Singleline)]
    private static partial Regex TextArea();

    [GeneratedRegex("name=\"CheckedHash\" value=\"([0-9a-f]*)\"")]
    private static partial Regex HiddenHash();
}
