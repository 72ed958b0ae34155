using System.Net;
using System.Net.Http.Json;
using System.Text;
using System.Text.Json;
using Xunit;

namespace TapeVault.EndToEnd.Tests.Http;

/// <summary>
/// Requests the app must refuse, sent to the real server (Kestrel, with its own body-size limit) as a script or an
/// attacker would send them: each gets the right status and one sentence saying why, and changes nothing.
/// </summary>
public sealed class HttpRefusalTests : IAsyncLifetime
{
    private AppProcess? app;
    private ApiSession? curator;

    public async Task InitializeAsync()
    {
        app = await AppProcess.StartAsync();
        curator = await ApiSession.SignInAsync(app.Address, "curator", app.CuratorPassword);
        await curator.PostJsonAsync("/api/collections", new { name = "Refusals" });
    }

    public async Task DisposeAsync()
    {
        curator?.Dispose();
        if (app is not null)
        {
            await app.DisposeAsync();
        }
    }

    public static TheoryData<string, string, string, string, HttpStatusCode> Refusals => new()
    {
        { "malformed JSON", "/api/collections", "{\"name\": \"unclosed", "application/json", HttpStatusCode.BadRequest },
        { "JSON of the wrong shape", "/api/collections", "[1, 2, 3]", "application/json", HttpStatusCode.BadRequest },
        { "huge JSON body", "/api/collections", "{\"name\": \"" + new string('x', 2_000_000) + "\"}", "application/json", HttpStatusCode.RequestEntityTooLarge },
        { "wrong content type", "/api/collections", "name=form", "text/plain", HttpStatusCode.UnsupportedMediaType },
        { "unknown collection", "/api/collections/999/items", "{\"accessionNumber\":\"X-1\",\"title\":\"x\"}", "application/json", HttpStatusCode.NotFound },
        { "unknown capture", "/api/captures/999/decode", "{\"profile\":\"orrin-80\"}", "application/json", HttpStatusCode.NotFound },
        { "unknown item for merge", "/api/items/999/merge", "{}", "application/json", HttpStatusCode.NotFound },
        { "empty accession number", "/api/collections/1/items", "{\"accessionNumber\":\"\",\"title\":\"x\"}", "application/json", HttpStatusCode.BadRequest },
    };

    [Theory]
    [MemberData(nameof(Refusals))]
    public async Task RefusedWriteGetsItsStatusAndOneSentence(string name, string path, string body, string contentType, HttpStatusCode expected)
    {
        int before = (await curator!.GetJsonAsync("/api/collections")).GetArrayLength();
        using var content = new StringContent(body, Encoding.UTF8, contentType);
        using var response = await curator.Http.PostAsync(path, content);
        Assert.True(expected == response.StatusCode, $"{name}: {(int)response.StatusCode}");
        AssertOneSentence(await response.Content.ReadAsStringAsync(), name);
        Assert.Equal(before, (await curator.GetJsonAsync("/api/collections")).GetArrayLength());
    }

    [Theory]
    [InlineData("/api/items/999")]
    [InlineData("/api/runs/999")]
    [InlineData("/api/images/999")]
    [InlineData("/api/exports/999/download")]
    [InlineData("/api/captures/999/original")]
    [InlineData("/api/captures/..%2F..%2Fetc%2Fpasswd/original")]
    [InlineData("/api/no-such-thing")]
    public async Task UnknownOrTraversingAddressGets404WithASentence(string path)
    {
        using var response = await curator!.Http.GetAsync(path);
        Assert.Equal(HttpStatusCode.NotFound, response.StatusCode);
        AssertOneSentence(await response.Content.ReadAsStringAsync(), path);
    }

    [Fact]
    public async Task AnotherUsersAntiforgeryTokenIsRefused()
    {
        // The token is bound to the account it was issued to (ASP.NET Core antiforgery): a viewer's token does not
        // let a forged request ride on the curator's cookie.
        await curator!.PostJsonAsync("/api/users", new { userName = "other-viewer", role = "viewer", password = "a long enough password" });
        using var viewer = await ApiSession.SignInAsync(app!.Address, "other-viewer", "a long enough password");
        var viewersToken = viewer.Http.DefaultRequestHeaders.GetValues("X-TapeVault-Antiforgery").Single();
        using var request = new HttpRequestMessage(HttpMethod.Post, "/api/collections") { Content = JsonContent.Create(new { name = "forged" }) };
        curator.Http.DefaultRequestHeaders.Remove("X-TapeVault-Antiforgery");
        try
        {
            request.Headers.Add("X-TapeVault-Antiforgery", viewersToken);
            using var response = await curator.Http.SendAsync(request);
            Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
            AssertOneSentence(await response.Content.ReadAsStringAsync(), "foreign token");
        }
        finally
        {
            var own = JsonDocument.Parse(await curator.Http.GetStringAsync("/api/antiforgery")).RootElement.GetProperty("token").GetString();
            curator.Http.DefaultRequestHeaders.Add("X-TapeVault-Antiforgery", own);
        }

        Assert.DoesNotContain((await curator.GetJsonAsync("/api/collections")).EnumerateArray(), c => c.GetProperty("name").GetString() == "forged");
    }

    private static void AssertOneSentence(string body, string what)
    {
        var title = JsonDocument.Parse(body).RootElement.GetProperty("title").GetString();
        Assert.False(string.IsNullOrWhiteSpace(title), $"{what}: no reason given");
        Assert.True(title!.EndsWith('.') && !title.Contains('\n', StringComparison.Ordinal) && title.Length > 20, $"{what}: '{title}' is not a sentence");
    }
}
