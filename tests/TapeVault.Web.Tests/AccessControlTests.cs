using System.Globalization;
using System.Net;
using System.Net.Http.Json;
using System.Text;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Http;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.AspNetCore.Mvc.RazorPages.Infrastructure;
using Microsoft.AspNetCore.Routing;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Web.Tests;

/// <summary>One archive holding one of everything (collection, item, capture, decode run, job), so every route has an id that exists.</summary>
public sealed class AccessControlArchive : IAsyncLifetime
{
    public ArchiveFolder Folder { get; } = new();

    public ArchiveAppFactory App { get; private set; } = null!;

    public Dictionary<string, string> Ids { get; } = new(StringComparer.Ordinal);

    public async Task InitializeAsync()
    {
        App = new ArchiveAppFactory(Folder);
        await App.AddCuratorAndViewerAsync();
        using var curator = await App.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (collectionId, itemId) = await curator.NewItemAsync("ACL-1");
        // A capture with a file on it, so that the image has positions and files to reach.
        var capture = SynthCaptures.Orrin(Folder.Root, "acl", files: 1, bytesPerFile: 40, seed: 7);
        using var upload = await curator.UploadRawAsync(itemId, capture.Bytes, "acl.wav", extraQuery: $"&decodeProfile={SynthCaptures.Profile}");
        await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        var uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        var job = await curator.WaitForJobAsync(uploaded.DecodeJob!.Id, TimeSpan.FromSeconds(30));
        Assert.Equal("done", job.State);
        Ids["collections"] = Invariant(collectionId);
        Ids["items"] = Invariant(itemId);
        Ids["captures"] = Invariant(uploaded.Capture.Id);
        Ids["runs"] = Invariant(job.ResultId!.Value);
        Ids["jobs"] = Invariant(job.Id);

        // An image and an export, so that their endpoints are reached with ids that exist.
        var merge = await curator.PostAsync<JobView>($"/api/items/{itemId}/merge", new { }, HttpStatusCode.Accepted);
        var merged = await curator.WaitForJobAsync(merge.Id, TimeSpan.FromSeconds(30));
        Assert.True(merged.State == "done", merged.Error);
        Ids["images"] = Invariant(merged.ResultId!.Value);
        Ids["positions"] = "0";
        Ids["files"] = "0";
        var bag = await curator.PostAsync<JobView>($"/api/items/{itemId}/bag", new { }, HttpStatusCode.Accepted);
        var bagged = await curator.WaitForJobAsync(bag.Id, TimeSpan.FromSeconds(30));
        Assert.True(bagged.State == "done", bagged.Error);
        Ids["exports"] = Invariant(bagged.ResultId!.Value);
        Ids["users"] = ArchiveAppFactory.ViewerName;
    }

    public async Task DisposeAsync()
    {
        await App.DisposeAsync();
        Folder.Dispose();
    }

    private static string Invariant(int value) => value.ToString(CultureInfo.InvariantCulture);
}

/// <summary>One request the app's endpoint data source says it accepts.</summary>
/// <param name="AllowsAnonymous">The endpoint is open to visitors who have not signed in (its metadata says so).</param>
public sealed record EndpointRequest(string Method, string Path, string Route, bool IsPage, bool AllowsAnonymous)
{
    public override string ToString() => $"{Method} {Path}";
}

public sealed partial class AccessControlTests(AccessControlArchive archive, ITestOutputHelper output) : IClassFixture<AccessControlArchive>
{
    /// <summary>
    /// Writes open to people who are not curators, each on purpose: signing in and out, fetching the antiforgery
    /// token, changing one's own password, and the error page (which a failed form post lands on). Everything else
    /// that writes needs a curator.
    /// </summary>
    private static readonly HashSet<string> OpenWriteRoutes = new(StringComparer.Ordinal)
    {
        "/api/signin", "/api/signout", "/api/antiforgery", "/signin", "/signout", "/Error", "/api/account/password", "/account/password",
    };

    /// <summary>Reads that need a curator: the account list.</summary>
    private static readonly HashSet<string> CuratorOnlyReads = new(StringComparer.Ordinal) { "/api/users" };

    /// <summary>Reads open to visitors: the sign-in and refusal pages, the error page, the handling cautions, the token and the API description.</summary>
    private static readonly HashSet<string> AnonymousReads = new(StringComparer.Ordinal)
    {
        "/api/antiforgery", "/signin", "/denied", "/Error", "/handling", "/openapi/{documentName}.json",
    };

    [Fact]
    public async Task EveryWriteEndpoint_RefusesAnonymousAndViewer_NeverAnswering2xx()
    {
        var writes = await WritesAsync();

        // The enumeration found the writes we know of, so it is not vacuous; new ones are covered without a change here.
        Assert.Contains(writes, w => w.ToString() == $"POST /api/collections");
        Assert.Contains(writes, w => w.ToString() == $"POST /api/items/{archive.Ids["items"]}/captures");
        Assert.Contains(writes, w => w.ToString() == $"POST /items/{archive.Ids["items"]}?handler=Decode");
        Assert.Contains(writes, w => w.ToString() == "POST /jobs?handler=Cancel");
        Assert.Contains(writes, w => w.ToString() == "POST /users");
        Assert.Contains(writes, w => w.ToString() == "POST /users?handler=Disable");
        Assert.Contains(writes, w => w.ToString() == $"POST /api/users/{ArchiveAppFactory.ViewerName}/disable");

        using var anonymous = new ApiClient(archive.App.NewClient());
        await anonymous.RefreshAntiforgeryAsync();
        using var viewer = await archive.App.SignedInAsync(ArchiveAppFactory.ViewerName);
        int before = await CollectionCountAsync();
        var failures = new List<string>();
        foreach (var write in writes.Where(w => !OpenWriteRoutes.Contains(w.Route)))
        {
            // Both carry a valid antiforgery token, so what refuses them is the role check, not the token check.
            using (var response = await SendAsync(anonymous.Http, write))
            {
                bool refused = response.StatusCode == HttpStatusCode.Unauthorized
                    || RedirectsTo(response, "/signin")
                    || (write.AllowsAnonymous && RedirectsTo(response, "/denied"));
                if (!refused)
                {
                    failures.Add($"anonymous {write}: {(int)response.StatusCode} {response.Headers.Location}");
                }
            }

            using (var response = await SendAsync(viewer.Http, write))
            {
                if (response.StatusCode != HttpStatusCode.Forbidden && !RedirectsTo(response, "/denied"))
                {
                    failures.Add($"viewer {write}: {(int)response.StatusCode} {response.Headers.Location}");
                }
            }
        }

        output.WriteLine($"{writes.Count} write requests, {writes.Count(w => OpenWriteRoutes.Contains(w.Route))} of them open on purpose; each other one sent as anonymous and as viewer.");
        Assert.Empty(failures);
        Assert.Equal(before, await CollectionCountAsync());
    }

    [Fact]
    public async Task EveryWriteEndpoint_RefusesACuratorWithoutTheAntiforgeryToken_With400()
    {
        var writes = (await WritesAsync()).Where(w => w.Route != "/Error").ToList();
        using var curator = await archive.App.SignedInAsync(ArchiveAppFactory.CuratorName);
        curator.ForgetAntiforgery();
        int before = await CollectionCountAsync();
        var failures = new List<string>();
        foreach (var write in writes)
        {
            using var response = await SendAsync(curator.Http, write);
            if (response.StatusCode != HttpStatusCode.BadRequest)
            {
                failures.Add($"{write}: {(int)response.StatusCode} {response.Headers.Location}");
            }
        }

        Assert.Empty(failures);
        Assert.Equal(before, await CollectionCountAsync());

        // The same curator with the token may write: the refusals were the token's.
        await curator.RefreshAntiforgeryAsync();
        await curator.PostAsync<CollectionDetail>("/api/collections", new NewCollection("Written with the token", null), HttpStatusCode.Created);
        Assert.Equal(before + 1, await CollectionCountAsync());
    }

    [Fact]
    public async Task EveryReadEndpoint_AnswersAViewer_AndRefusesAnonymousVisitors()
    {
        var reads = (await EndpointsAsync()).Where(e => e.Method == HttpMethods.Get || e.Method == HttpMethods.Head).ToList();
        Assert.Contains(reads, r => r.Route == "/api/runs/{id:int}");
        Assert.Contains(reads, r => r.Route == "/items/{id:int}");
        using var viewer = await archive.App.SignedInAsync(ArchiveAppFactory.ViewerName);
        using var anonymous = archive.App.NewClient();
        var failures = new List<string>();
        foreach (var read in reads)
        {
            using (var response = await SendAsync(viewer.Http, read))
            {
                var expected = CuratorOnlyReads.Contains(read.Route) ? HttpStatusCode.Forbidden : HttpStatusCode.OK;
                if (response.StatusCode != expected)
                {
                    failures.Add($"viewer {read}: {(int)response.StatusCode}, expected {(int)expected}");
                }
            }

            using (var response = await SendAsync(anonymous, read))
            {
                bool ok = AnonymousReads.Contains(read.Route)
                    ? response.StatusCode == HttpStatusCode.OK
                    : response.StatusCode == HttpStatusCode.Unauthorized || RedirectsTo(response, "/signin");
                if (!ok)
                {
                    failures.Add($"anonymous {read}: {(int)response.StatusCode} {response.Headers.Location}");
                }
            }
        }

        output.WriteLine($"{reads.Count} read requests, each sent as viewer and as anonymous.");
        Assert.Empty(failures);
    }

    /// <summary>Every non-GET request the endpoints accept: each API method, and for pages every handler plus the other methods.</summary>
    private async Task<List<EndpointRequest>> WritesAsync() =>
        [.. (await EndpointsAsync()).Where(e => e.Method != HttpMethods.Get && e.Method != HttpMethods.Head)];

    private async Task<List<EndpointRequest>> EndpointsAsync()
    {
        var source = archive.App.Services.GetRequiredService<EndpointDataSource>();
        var loader = archive.App.Services.GetRequiredService<PageLoader>();
        var requests = new List<EndpointRequest>();
        foreach (var endpoint in source.Endpoints.OfType<RouteEndpoint>())
        {
            string route = "/" + (endpoint.RoutePattern.RawText ?? string.Empty).TrimStart('/');
            string path = Fill(route);
            bool anonymous = endpoint.Metadata.GetMetadata<IAllowAnonymous>() is not null;
            if (endpoint.Metadata.GetMetadata<PageActionDescriptor>() is { } page)
            {
                // A page answers every method; its handlers say which do something.
                var compiled = await loader.LoadAsync(page, endpoint.Metadata);
                anonymous |= compiled.EndpointMetadata.OfType<IAllowAnonymous>().Any();
                requests.Add(new(HttpMethods.Get, path, route, true, anonymous));
                foreach (var method in new[] { HttpMethods.Post, HttpMethods.Put, HttpMethods.Delete })
                {
                    requests.Add(new(method, path, route, true, anonymous));
                }

                foreach (var handler in compiled.HandlerMethods.Where(h => h.Name is { Length: > 0 } && !string.Equals(h.HttpMethod, "Get", StringComparison.OrdinalIgnoreCase)))
                {
                    requests.Add(new(handler.HttpMethod.ToUpperInvariant(), $"{path}?handler={handler.Name}", route, true, anonymous));
                }

                continue;
            }

            var methods = endpoint.Metadata.GetMetadata<IHttpMethodMetadata>()?.HttpMethods;
            Assert.True(methods is { Count: > 0 }, $"The endpoint {route} accepts every method; say which it accepts.");
            foreach (var method in methods!)
            {
                requests.Add(new(method, path, route, false, anonymous));
            }
        }

        return [.. requests.DistinctBy(r => r.ToString())];
    }

    /// <summary>The route with each parameter replaced by an id that exists.</summary>
    private string Fill(string route) => RouteParameter().Replace(route, match =>
    {
        if (match.Groups["name"].Value == "documentName")
        {
            return "v1";
        }

        string before = route[..match.Index].TrimEnd('/');
        string segment = before[(before.LastIndexOf('/') + 1)..];
        Assert.True(archive.Ids.TryGetValue(segment, out var id), $"No known id for the parameter {match.Value} in {route}; add one to the fixture.");
        return id!;
    });

    private static async Task<HttpResponseMessage> SendAsync(HttpClient client, EndpointRequest request)
    {
        using var message = new HttpRequestMessage(new HttpMethod(request.Method), new Uri(request.Path, UriKind.Relative));
        if (request.Method != HttpMethods.Get && request.Method != HttpMethods.Head)
        {
            // A body that would pass model binding for most writes, so a missing check cannot hide behind a bad request.
            message.Content = request.IsPage
                ? new FormUrlEncodedContent(new Dictionary<string, string> { ["Name"] = "Forged", ["jobId"] = "1" })
                : new StringContent("""{"name":"Forged","accessionNumber":"FORGED-1","title":"Forged","profile":"orrin-80","userName":"forged","role":"curator"}""", Encoding.UTF8, "application/json");
        }

        return await client.SendAsync(message);
    }

    private static bool RedirectsTo(HttpResponseMessage response, string path) =>
        response.StatusCode is HttpStatusCode.Redirect or HttpStatusCode.Found or HttpStatusCode.SeeOther
        && response.Headers.Location is { } location
        && (location.IsAbsoluteUri ? location.AbsolutePath : location.OriginalString.Split('?')[0]) == path;

    private async Task<int> CollectionCountAsync()
    {
        await using var scope = archive.App.Scope();
        return await scope.ServiceProvider.GetRequiredService<ArchiveDbContext>().Collections.CountAsync();
    }

    [GeneratedRegex(@"\{(?<name>\w+)(:[^}]*)?\}")]
    private static partial Regex RouteParameter();
}
