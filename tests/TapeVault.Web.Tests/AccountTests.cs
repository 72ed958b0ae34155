using System.Net;
using System.Net.Http.Json;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>Changing, resetting, disabling and enabling accounts, and sessions that end when they should.</summary>
public sealed class AccountTests
{
    private const string NewPassword = "Mossy Reel Of Copper Tape 71";

    [Fact]
    public async Task AOneTimePassword_MustBeChangedBeforeAnythingElse_ThenStopsWorking_AndIsNeverLogged()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, captureLogs: true);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var created = await curator.PostAsync<NewUserCreated>("/api/users", new NewUser("new-viewer", Roles.Viewer, null), HttpStatusCode.Created);
        string oneTime = created.GeneratedPassword!;

        using var holder = new ApiClient(app.NewClient("10.5.0.1"));
        await holder.SignInAsync("new-viewer", oneTime);

        // Nothing but the change: the API says why, pages lead to the form.
        using (var read = await holder.Http.GetAsync("/api/collections"))
        {
            Assert.Equal(HttpStatusCode.Forbidden, read.StatusCode);
            Assert.Equal("This account signed in with a one-time password; change it first (POST /api/account/password).", await ApiClient.ProblemTitleAsync(read));
        }

        using (var page = await holder.Http.GetAsync("/"))
        {
            Assert.Equal(HttpStatusCode.Redirect, page.StatusCode);
            Assert.Equal("/account/password", page.Headers.Location!.OriginalString);
        }

        using (var form = await holder.Http.GetAsync("/account/password"))
        {
            Assert.Equal(HttpStatusCode.OK, form.StatusCode);
            Assert.Contains("You signed in with a one-time password", await form.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        }

        // The new password must pass the policy; then everything opens, and the one-time password stops working.
        using (var weak = await holder.Http.PostAsJsonAsync("/api/account/password", new PasswordChange(oneTime, "password12345678"), ApiClient.Json))
        {
            Assert.Equal(HttpStatusCode.BadRequest, weak.StatusCode);
        }

        using (var change = await holder.Http.PostAsJsonAsync("/api/account/password", new PasswordChange(oneTime, NewPassword), ApiClient.Json))
        {
            Assert.Equal(HttpStatusCode.NoContent, change.StatusCode);
        }

        await holder.GetAsync<List<CollectionSummary>>("/api/collections");
        await AssertSignInRefusedAsync(app, "10.5.0.2", "new-viewer", oneTime);
        using (var again = new ApiClient(app.NewClient("10.5.0.3")))
        {
            await again.SignInAsync("new-viewer", NewPassword);
            await again.GetAsync<List<CollectionSummary>>("/api/collections");
        }

        // The password was shown once, in the answer that made the account; no log line and no event holds it.
        Assert.NotEmpty(app.LogLines);
        Assert.DoesNotContain(app.LogLines, line => line.Contains(oneTime, StringComparison.Ordinal) || line.Contains(NewPassword, StringComparison.Ordinal));
        await using var scope = app.Scope();
        var events = await scope.ServiceProvider.GetRequiredService<ArchiveDbContext>().Events.Select(e => e.Detail).ToListAsync();
        Assert.Contains(events, d => d.Contains("one-time password must be changed", StringComparison.Ordinal));
        Assert.DoesNotContain(events, d => d.Contains(oneTime, StringComparison.Ordinal) || d.Contains(NewPassword, StringComparison.Ordinal));
    }

    [Fact]
    public async Task ACuratorResetsDisablesAndEnables_AndEachEndsTheAccountsSessions()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);

        // Reset: the viewer's session ends; the one-time password signs in and must be changed.
        using (var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName))
        {
            await viewer.GetAsync<List<CollectionSummary>>("/api/collections");
            var reset = await curator.PostAsync<PasswordReset>($"/api/users/{ArchiveAppFactory.ViewerName}/reset", new { }, HttpStatusCode.OK);
            await AssertSessionEndedAsync(viewer);
            await AssertSignInRefusedAsync(app, "10.6.0.1", ArchiveAppFactory.ViewerName, ArchiveAppFactory.Password);
            using var holder = new ApiClient(app.NewClient("10.6.0.2"));
            await holder.SignInAsync(ArchiveAppFactory.ViewerName, reset.OneTimePassword);
            using (var read = await holder.Http.GetAsync("/api/collections"))
            {
                Assert.Equal(HttpStatusCode.Forbidden, read.StatusCode);
            }

            using var change = await holder.Http.PostAsJsonAsync("/api/account/password", new PasswordChange(reset.OneTimePassword, NewPassword), ApiClient.Json);
            Assert.Equal(HttpStatusCode.NoContent, change.StatusCode);
        }

        // Disable: the session ends at its next request, and the right password is answered like a wrong one.
        using (var viewer = new ApiClient(app.NewClient("10.6.0.3")))
        {
            await viewer.SignInAsync(ArchiveAppFactory.ViewerName, NewPassword);
            using (var disable = await curator.Http.PostAsync($"/api/users/{ArchiveAppFactory.ViewerName}/disable", null))
            {
                Assert.Equal(HttpStatusCode.NoContent, disable.StatusCode);
            }

            await AssertSessionEndedAsync(viewer);
            await AssertSignInRefusedAsync(app, "10.6.0.4", ArchiveAppFactory.ViewerName, NewPassword);
            var listed = await curator.GetAsync<List<UserView>>("/api/users");
            Assert.True(listed.Single(u => u.UserName == ArchiveAppFactory.ViewerName).Disabled);
        }

        // Enable: the same password signs in again.
        using (var enable = await curator.Http.PostAsync($"/api/users/{ArchiveAppFactory.ViewerName}/enable", null))
        {
            Assert.Equal(HttpStatusCode.NoContent, enable.StatusCode);
        }

        using (var viewer = new ApiClient(app.NewClient("10.6.0.5")))
        {
            await viewer.SignInAsync(ArchiveAppFactory.ViewerName, NewPassword);
            await viewer.GetAsync<List<CollectionSummary>>("/api/collections");
        }

        // The archive keeps a curator: no curator disables itself, and the last enabled one stays enabled.
        using (var self = await curator.Http.PostAsync($"/api/users/{ArchiveAppFactory.CuratorName}/disable", null))
        {
            Assert.Equal(HttpStatusCode.Conflict, self.StatusCode);
            Assert.Equal("You cannot disable the account you are signed in with; ask another curator.", await ApiClient.ProblemTitleAsync(self));
        }

        await app.AddUserAsync("second-curator", Roles.Curator);
        using (var second = await app.SignedInAsync("second-curator"))
        {
            using var first = await second.Http.PostAsync($"/api/users/{ArchiveAppFactory.CuratorName}/disable", null);
            Assert.Equal(HttpStatusCode.NoContent, first.StatusCode);
        }

        await AssertSessionEndedAsync(curator);
        await using (var scope = app.Scope())
        {
            var admin = scope.ServiceProvider.GetRequiredService<UserAdmin>();
            var last = await Assert.ThrowsAsync<ArchiveConflictException>(() => admin.DisableAsync("second-curator", "cli:test"));
            Assert.Equal("The account 'second-curator' is the last enabled curator; enable or add another curator first.", last.Message);
        }

        // Unknown accounts are named.
        using var other = await app.SignedInAsync("second-curator");
        using var unknown = await other.Http.PostAsync("/api/users/no-such-account/reset", null);
        Assert.Equal(HttpStatusCode.NotFound, unknown.StatusCode);
        Assert.Equal("There is no account named 'no-such-account'.", await ApiClient.ProblemTitleAsync(unknown));
    }

    [Fact]
    public async Task TheAccountsPage_ResetsDisablesAndEnables_ForCuratorsOnly()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);

        string page = await curator.Http.GetStringAsync("/users");
        Assert.Contains("?handler=Disable", page, StringComparison.Ordinal);
        Assert.Contains("?handler=Reset", page, StringComparison.Ordinal);
        Assert.DoesNotContain("style=", page, StringComparison.Ordinal);
        Assert.DoesNotContain("<script>", page, StringComparison.Ordinal);

        using (var refused = await viewer.Http.PostAsync("/users?handler=Disable", Form(ArchiveAppFactory.CuratorName)))
        {
            bool denied = refused.StatusCode == HttpStatusCode.Forbidden
                || (refused.Headers.Location is { } to && (to.IsAbsoluteUri ? to.AbsolutePath : to.OriginalString.Split('?')[0]) == "/denied");
            Assert.True(denied, $"{refused.StatusCode} {refused.Headers.Location}");
        }

        using (var reset = await curator.Http.PostAsync("/users?handler=Reset", Form(ArchiveAppFactory.ViewerName)))
        {
            Assert.Equal(HttpStatusCode.OK, reset.StatusCode);
            Assert.Contains("has the one-time password <code>", await reset.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        }

        await AssertSessionEndedAsync(viewer);
        using (var disable = await curator.Http.PostAsync("/users?handler=Disable", Form(ArchiveAppFactory.ViewerName)))
        {
            string text = await disable.Content.ReadAsStringAsync();
            Assert.Contains($"Account &#x27;{ArchiveAppFactory.ViewerName}&#x27; was disabled", text, StringComparison.Ordinal);
            Assert.Contains("?handler=Enable", text, StringComparison.Ordinal);
        }

        using (var self = await curator.Http.PostAsync("/users?handler=Disable", Form(ArchiveAppFactory.CuratorName)))
        {
            Assert.Equal(HttpStatusCode.Conflict, self.StatusCode);
        }

        using var enable = await curator.Http.PostAsync("/users?handler=Enable", Form(ArchiveAppFactory.ViewerName));
        Assert.Contains($"Account &#x27;{ArchiveAppFactory.ViewerName}&#x27; was enabled.", await enable.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        Assert.False((await curator.GetAsync<List<UserView>>("/api/users")).Single(u => u.UserName == ArchiveAppFactory.ViewerName).Disabled);

        static FormUrlEncodedContent Form(string target) => new(new Dictionary<string, string> { ["Target"] = target });
    }

    [Fact]
    public async Task SigningOut_EndsTheSession_SoAReplayedCookieIsRefused()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();

        // Sign in by hand, keeping the session cookie as someone who copied it would.
        using var bare = app.NewBareClient();
        var (token, tokenCookie) = await AntiforgeryAsync(app, null);
        using var signIn = new HttpRequestMessage(HttpMethod.Post, "/api/signin") { Content = JsonContent.Create(new SignInRequest(ArchiveAppFactory.CuratorName, ArchiveAppFactory.Password)) };
        signIn.Headers.Add(ApiAntiforgery.HeaderName, token);
        signIn.Headers.Add("Cookie", tokenCookie);
        using var signedIn = await bare.SendAsync(signIn);
        Assert.Equal(HttpStatusCode.NoContent, signedIn.StatusCode);
        string session = signedIn.Headers.GetValues("Set-Cookie").Single(c => c.StartsWith("tapevault.session=", StringComparison.Ordinal)).Split(';')[0];
        Assert.Equal(HttpStatusCode.OK, await ReplayAsync(app, session));

        // Sign out with that session, as its browser would.
        var (userToken, userTokenCookie) = await AntiforgeryAsync(app, session);
        using var signOut = new HttpRequestMessage(HttpMethod.Post, "/api/signout");
        signOut.Headers.Add(ApiAntiforgery.HeaderName, userToken);
        signOut.Headers.Add("Cookie", $"{session}; {userTokenCookie}");
        using (var signedOut = await bare.SendAsync(signOut))
        {
            Assert.Equal(HttpStatusCode.NoContent, signedOut.StatusCode);
        }

        // The copy of the cookie no longer works (it did for eight hours before).
        Assert.Equal(HttpStatusCode.Unauthorized, await ReplayAsync(app, session));

        // A password change ends the other sessions too, while the one that changed it goes on.
        using var first = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        using var second = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        using (var change = await first.Http.PostAsJsonAsync("/api/account/password", new PasswordChange(ArchiveAppFactory.Password, NewPassword), ApiClient.Json))
        {
            Assert.Equal(HttpStatusCode.NoContent, change.StatusCode);
        }

        await first.GetAsync<List<CollectionSummary>>("/api/collections");
        await AssertSessionEndedAsync(second);
    }

    private static async Task<HttpStatusCode> ReplayAsync(ArchiveAppFactory app, string sessionCookie)
    {
        using var replay = app.NewBareClient();
        using var request = new HttpRequestMessage(HttpMethod.Get, "/api/collections");
        request.Headers.Add("Cookie", sessionCookie);
        using var response = await replay.SendAsync(request);
        return response.StatusCode;
    }

    /// <summary>An antiforgery token and its cookie, for nobody or for the given session.</summary>
    private static async Task<(string Token, string Cookie)> AntiforgeryAsync(ArchiveAppFactory app, string? sessionCookie)
    {
        using var bare = app.NewBareClient();
        using var request = new HttpRequestMessage(HttpMethod.Get, "/api/antiforgery");
        if (sessionCookie is not null)
        {
            request.Headers.Add("Cookie", sessionCookie);
        }

        using var response = await bare.SendAsync(request);
        var token = (await response.Content.ReadFromJsonAsync<AntiforgeryToken>(ApiClient.Json))!;
        string cookie = response.Headers.GetValues("Set-Cookie").Single(c => c.StartsWith("tapevault.antiforgery=", StringComparison.Ordinal)).Split(';')[0];
        return (token.Token, cookie);
    }

    private static async Task AssertSessionEndedAsync(ApiClient client)
    {
        using var response = await client.Http.GetAsync("/api/collections");
        Assert.Equal(HttpStatusCode.Unauthorized, response.StatusCode);
    }

    private static async Task AssertSignInRefusedAsync(ArchiveAppFactory app, string address, string userName, string password)
    {
        using var client = new ApiClient(app.NewClient(address));
        await client.RefreshAntiforgeryAsync();
        using var response = await client.Http.PostAsJsonAsync("/api/signin", new SignInRequest(userName, password), ApiClient.Json);
        Assert.Equal(HttpStatusCode.Unauthorized, response.StatusCode);
        Assert.Equal("The user name or password is wrong.", await ApiClient.ProblemTitleAsync(response));
    }
}
