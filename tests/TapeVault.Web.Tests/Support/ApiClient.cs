using System.Diagnostics;
using System.Net;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Text.Json;
using TapeVault.Web.Api;
using Xunit;

namespace TapeVault.Web.Tests.Support;

/// <summary>The JSON API as a signed-in person uses it: sign in, fetch the antiforgery token, then read and write.</summary>
public sealed class ApiClient(HttpClient http) : IDisposable
{
    public static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web);

    public HttpClient Http { get; } = http;

    /// <summary>The token the last <see cref="RefreshAntiforgeryAsync"/> fetched (it belongs to the identity signed in then).</summary>
    public string? AntiforgeryToken { get; private set; }

    /// <summary>Fetches a token for whoever is signed in now and sends it on every later request.</summary>
    public async Task RefreshAntiforgeryAsync()
    {
        var token = await Http.GetFromJsonAsync<AntiforgeryToken>("/api/antiforgery", Json).ConfigureAwait(false)
            ?? throw new InvalidOperationException("No antiforgery token.");
        Assert.Equal(ApiAntiforgery.HeaderName, token.HeaderName);
        AntiforgeryToken = token.Token;
        Http.DefaultRequestHeaders.Remove(ApiAntiforgery.HeaderName);
        Http.DefaultRequestHeaders.Add(ApiAntiforgery.HeaderName, token.Token);
    }

    /// <summary>Drops the antiforgery header (the cookie stays), for checking that writes without it are refused.</summary>
    public void ForgetAntiforgery() => Http.DefaultRequestHeaders.Remove(ApiAntiforgery.HeaderName);

    public async Task SignInAsync(string userName, string password)
    {
        // Signing in is a write too: it needs the anonymous visitor's token; afterwards the token is the user's.
        await RefreshAntiforgeryAsync().ConfigureAwait(false);
        using var response = await Http.PostAsJsonAsync("/api/signin", new SignInRequest(userName, password), Json).ConfigureAwait(false);
        Assert.Equal(HttpStatusCode.NoContent, response.StatusCode);
        await RefreshAntiforgeryAsync().ConfigureAwait(false);
    }

    public async Task<T> GetAsync<T>(string path)
    {
        using var response = await Http.GetAsync(new Uri(path, UriKind.Relative)).ConfigureAwait(false);
        await EnsureAsync(response, HttpStatusCode.OK).ConfigureAwait(false);
        return (await response.Content.ReadFromJsonAsync<T>(Json).ConfigureAwait(false))!;
    }

    public async Task<T> PostAsync<T>(string path, object body, HttpStatusCode expected)
    {
        using var response = await Http.PostAsJsonAsync(path, body, Json).ConfigureAwait(false);
        await EnsureAsync(response, expected).ConfigureAwait(false);
        return (await response.Content.ReadFromJsonAsync<T>(Json).ConfigureAwait(false))!;
    }

    /// <summary>Makes a collection with one item and returns the item's id.</summary>
    public async Task<(int CollectionId, int ItemId)> NewItemAsync(string accession)
    {
        var collection = await PostAsync<CollectionDetail>("/api/collections", new NewCollection($"Collection for {accession}", "Made by a test."), HttpStatusCode.Created).ConfigureAwait(false);
        var item = await PostAsync<ItemDetail>($"/api/collections/{collection.Id}/items", new NewItem(accession, $"Tape {accession}", null, null, "A"), HttpStatusCode.Created).ConfigureAwait(false);
        return (collection.Id, item.Id);
    }

    /// <summary>Uploads a capture as the raw request body, with the file name in the query.</summary>
    public async Task<HttpResponseMessage> UploadRawAsync(int itemId, byte[] bytes, string fileName, string contentType = "audio/wav", string extraQuery = "")
    {
        using var content = new ByteArrayContent(bytes);
        content.Headers.ContentType = MediaTypeHeaderValue.Parse(contentType);
        return await Http.PostAsync(new Uri($"/api/items/{itemId}/captures?fileName={Uri.EscapeDataString(fileName)}{extraQuery}", UriKind.Relative), content).ConfigureAwait(false);
    }

    /// <summary>Uploads a capture as the one file of a multipart form, as the upload page does.</summary>
    public async Task<HttpResponseMessage> UploadMultipartAsync(int itemId, byte[] bytes, string fileName, string contentType = "audio/wav", string extraQuery = "")
    {
        using var form = new MultipartFormDataContent();
        var file = new ByteArrayContent(bytes);
        file.Headers.ContentType = MediaTypeHeaderValue.Parse(contentType);
        form.Add(file, "file", fileName);
        return await Http.PostAsync(new Uri($"/api/items/{itemId}/captures?{extraQuery.TrimStart('&')}", UriKind.Relative), form).ConfigureAwait(false);
    }

    /// <summary>Polls a job until it is done, failed or cancelled; fails the test when that takes longer than <paramref name="limit"/>.</summary>
    public async Task<JobView> WaitForJobAsync(int jobId, TimeSpan limit)
    {
        var clock = Stopwatch.StartNew();
        while (true)
        {
            var job = await GetAsync<JobView>($"/api/jobs/{jobId}").ConfigureAwait(false);
            if (job.State is "done" or "failed" or "cancelled")
            {
                return job;
            }

            Assert.True(clock.Elapsed < limit, $"Job {jobId} was still {job.State} after {limit.TotalSeconds:0} s ({job.ProgressText}).");
            await Task.Delay(50).ConfigureAwait(false);
        }
    }

    public static async Task EnsureAsync(HttpResponseMessage response, HttpStatusCode expected)
    {
        ArgumentNullException.ThrowIfNull(response);
        if (response.StatusCode != expected)
        {
            string body = await response.Content.ReadAsStringAsync().ConfigureAwait(false);
            Assert.Fail($"{response.RequestMessage?.Method} {response.RequestMessage?.RequestUri} answered {(int)response.StatusCode}, expected {(int)expected}: {body}");
        }
    }

    /// <summary>The title of a problem-details answer: the one-sentence reason.</summary>
    public static async Task<string> ProblemTitleAsync(HttpResponseMessage response)
    {
        ArgumentNullException.ThrowIfNull(response);
        using var document = JsonDocument.Parse(await response.Content.ReadAsStringAsync().ConfigureAwait(false));
        return document.RootElement.GetProperty("title").GetString() ?? string.Empty;
    }

    public void Dispose() => Http.Dispose();
}
