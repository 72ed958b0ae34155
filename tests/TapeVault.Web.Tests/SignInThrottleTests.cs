using System.Diagnostics;
using System.Net;
using System.Net.Http.Json;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Web.Tests;

/// <summary>
/// Failed sign-ins must not let anyone lock anyone else out, nor tell which user names exist (OWASP Authentication
/// Cheat Sheet: "Authentication and Error Messages" — the same answer for a wrong name and a wrong password — and
/// "Account Lockout": lockout can be a denial of service; from memory).
/// </summary>
public sealed class SignInThrottleTests(ITestOutputHelper output)
{
    private const string UnknownName = "nobody-by-this-name";

    [Fact]
    public async Task FailuresFromOneClient_SlowOnlyThatClient_AndARealNameAnswersExactlyAsAnUnknownOne()
    {
        using var folder = new ArchiveFolder();
        var clock = new ManualClock();
        await using var app = new ArchiveAppFactory(folder, clock: clock);
        await app.AddCuratorAndViewerAsync();

        // An attacker's client fails five times, fast, on the curator's name and on a name with no account.
        var real = await AttemptsAsync(app, "10.0.0.66", ArchiveAppFactory.CuratorName);
        var unknown = await AttemptsAsync(app, "10.0.0.67", UnknownName);
        output.WriteLine(string.Join(Environment.NewLine, real.Zip(unknown, (a, b) => $"{a}   |   {b}")));
        Assert.Equal(unknown, real);
        Assert.All(real.Take(5), a => Assert.Equal("401 The user name or password is wrong.", a));
        Assert.StartsWith("429 Too many failed sign-ins for this name; wait 1 seconds", real[5], StringComparison.Ordinal);

        // The attacker's sixth try waits even with the right password (it is not checked at all).
        using (var attacker = new ApiClient(app.NewClient("10.0.0.66")))
        {
            await attacker.RefreshAntiforgeryAsync();
            using var right = await attacker.Http.PostAsJsonAsync("/api/signin", new SignInRequest(ArchiveAppFactory.CuratorName, ArchiveAppFactory.Password), ApiClient.Json);
            Assert.Equal(HttpStatusCode.TooManyRequests, right.StatusCode);
            Assert.True(right.Headers.RetryAfter?.Delta >= TimeSpan.FromSeconds(1), "a throttled answer says how long to wait");
        }

        // The owner, on a client that has not failed, signs in at once.
        using (var owner = new ApiClient(app.NewClient("10.0.0.10")))
        {
            await owner.SignInAsync(ArchiveAppFactory.CuratorName, ArchiveAppFactory.Password);
            await owner.NewItemAsync("OWNER-1");
        }

        // Once the wait is over, the attacker's client is checked again (and the wait doubles after another failure).
        clock.Advance(TimeSpan.FromSeconds(1.2));
        using (var attacker = new ApiClient(app.NewClient("10.0.0.66")))
        {
            await attacker.RefreshAntiforgeryAsync();
            using var wrong = await attacker.Http.PostAsJsonAsync("/api/signin", new SignInRequest(ArchiveAppFactory.CuratorName, "still not the password"), ApiClient.Json);
            Assert.Equal(HttpStatusCode.Unauthorized, wrong.StatusCode);
            using var next = await attacker.Http.PostAsJsonAsync("/api/signin", new SignInRequest(ArchiveAppFactory.CuratorName, ArchiveAppFactory.Password), ApiClient.Json);
            Assert.Equal(HttpStatusCode.TooManyRequests, next.StatusCode);
            Assert.StartsWith("Too many failed sign-ins for this name; wait 2 seconds", await ApiClient.ProblemTitleAsync(next), StringComparison.Ordinal);
        }

        // The sign-in page answers the same way: the same sentence for a wrong password and an unknown name.
        foreach (var name in new[] { ArchiveAppFactory.ViewerName, UnknownName })
        {
            using var page = new ApiClient(app.NewClient("10.0.0.90"));
            await page.RefreshAntiforgeryAsync();
            using var form = new FormUrlEncodedContent(new Dictionary<string, string> { ["UserName"] = name, ["Password"] = "not the password at all" });
            using var response = await page.Http.PostAsync("/signin", form);
            Assert.Equal(HttpStatusCode.Unauthorized, response.StatusCode);
            Assert.Contains("The user name or password is wrong.", await response.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        }
    }

    [Fact]
    public async Task AWrongPasswordAndAnUnknownName_TakeAboutTheSameTime()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        var real = new List<double>();
        var unknown = new List<double>();

        // Alternating, each from its own address so that no throttle answers instead of the password check.
        for (int i = 0; i < 9; i++)
        {
            real.Add(await TimedFailureAsync(app, $"10.1.{i}.1", ArchiveAppFactory.CuratorName));
            unknown.Add(await TimedFailureAsync(app, $"10.1.{i}.2", UnknownName + i));
        }

        // The first of each warms up code paths; the medians of the rest are compared.
        double realMedian = Median(real.Skip(1)), unknownMedian = Median(unknown.Skip(1));
        output.WriteLine($"median wrong password {realMedian:0.0} ms, unknown name {unknownMedian:0.0} ms");
        double ratio = unknownMedian / realMedian;
        Assert.InRange(ratio, 0.5, 2.0);
    }

    [Fact]
    public async Task OneClientTryingManyNames_IsTurnedAwayByTheRateLimiter_OthersAreNot()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?> { ["TapeVault:Web:SignIn:ClientAttemptsPerMinute"] = "8" });
        await app.AddCuratorAndViewerAsync();
        using var spray = new ApiClient(app.NewClient("10.2.0.1"));
        await spray.RefreshAntiforgeryAsync();
        var statuses = new List<int>();
        for (int i = 0; i < 10; i++)
        {
            using var response = await spray.Http.PostAsJsonAsync("/api/signin", new SignInRequest($"name-{i}", "a guessed password"), ApiClient.Json);
            statuses.Add((int)response.StatusCode);
            if (i == 9)
            {
                Assert.StartsWith("Too many sign-in attempts from this address; wait", await ApiClient.ProblemTitleAsync(response), StringComparison.Ordinal);
                Assert.NotNull(response.Headers.RetryAfter);
            }
        }

        Assert.Equal([401, 401, 401, 401, 401, 401, 401, 401, 429, 429], statuses);

        // The form from the same address leads back to the sign-in page, which says why.
        using (var form = new FormUrlEncodedContent(new Dictionary<string, string> { ["UserName"] = "x", ["Password"] = "y" }))
        using (var response = await spray.Http.PostAsync("/signin", form))
        {
            Assert.Equal(HttpStatusCode.SeeOther, response.StatusCode);
            using var shown = await spray.Http.GetAsync(response.Headers.Location);
            Assert.Contains("Too many sign-in attempts from this address; wait", await shown.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        }

        using var other = new ApiClient(app.NewClient("10.2.0.2"));
        await other.SignInAsync(ArchiveAppFactory.ViewerName, ArchiveAppFactory.Password);
    }

    [Fact]
    public async Task ManyClientsGuessingOneName_PauseItForNewBrowsers_NotForOneThatSignedInBefore()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?> { ["TapeVault:Web:SignIn:AccountFailuresPerHour"] = "12" });
        await app.AddCuratorAndViewerAsync();

        // The owner signed in from this browser before, and signed out.
        using var owner = new ApiClient(app.NewClient("10.3.0.1"));
        await owner.SignInAsync(ArchiveAppFactory.CuratorName, ArchiveAppFactory.Password);
        using (var signedOut = await owner.Http.PostAsync("/api/signout", null))
        {
            Assert.Equal(HttpStatusCode.NoContent, signedOut.StatusCode);
        }

        // Three clients fail four times each: twelve failures on the name, none of them slowed down per client.
        for (int c = 0; c < 3; c++)
        {
            Assert.All(await AttemptsAsync(app, $"10.3.1.{c}", ArchiveAppFactory.CuratorName, count: 4), a => Assert.StartsWith("401", a, StringComparison.Ordinal));
        }

        // A browser that never signed in to it waits, even with the right password...
        using (var stranger = new ApiClient(app.NewClient("10.3.2.1")))
        {
            await stranger.RefreshAntiforgeryAsync();
            using var response = await stranger.Http.PostAsJsonAsync("/api/signin", new SignInRequest(ArchiveAppFactory.CuratorName, ArchiveAppFactory.Password), ApiClient.Json);
            Assert.Equal(HttpStatusCode.TooManyRequests, response.StatusCode);
        }

        // ... and so does an unknown name after as many failures (nothing tells the two apart).
        for (int c = 0; c < 3; c++)
        {
            await AttemptsAsync(app, $"10.3.3.{c}", UnknownName, count: 4);
        }

        Assert.StartsWith("429", (await AttemptsAsync(app, "10.3.4.1", UnknownName, count: 1))[0], StringComparison.Ordinal);

        // The owner's browser is let through.
        await owner.SignInAsync(ArchiveAppFactory.CuratorName, ArchiveAppFactory.Password);
        await owner.NewItemAsync("OWNER-2");
    }

    /// <summary>Wrong-password attempts from one client address; each answer as "status title".</summary>
    private static async Task<List<string>> AttemptsAsync(ArchiveAppFactory app, string address, string userName, int count = 6)
    {
        using var client = new ApiClient(app.NewClient(address));
        await client.RefreshAntiforgeryAsync();
        var answers = new List<string>();
        for (int i = 0; i < count; i++)
        {
            using var response = await client.Http.PostAsJsonAsync("/api/signin", new SignInRequest(userName, $"wrong password number {i}"), ApiClient.Json);
            answers.Add($"{(int)response.StatusCode} {await ApiClient.ProblemTitleAsync(response)}");
        }

        return answers;
    }

    private static async Task<double> TimedFailureAsync(ArchiveAppFactory app, string address, string userName)
    {
        using var client = new ApiClient(app.NewClient(address));
        await client.RefreshAntiforgeryAsync();
        var clock = Stopwatch.StartNew();
        using var response = await client.Http.PostAsJsonAsync("/api/signin", new SignInRequest(userName, "a wrong password here"), ApiClient.Json);
        clock.Stop();
        Assert.Equal(HttpStatusCode.Unauthorized, response.StatusCode);
        return clock.Elapsed.TotalMilliseconds;
    }

    private static double Median(IEnumerable<double> values)
    {
        var sorted = values.Order().ToArray();
        return sorted.Length % 2 == 1 ? sorted[sorted.Length / 2] : (sorted[(sorted.Length / 2) - 1] + sorted[sorted.Length / 2]) / 2;
    }
}
