using System.Net;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Text.Json;

namespace TapeVault.EndToEnd.Tests;

/// <summary>A signed-in client of the JSON API, as a script would use it: cookie, antiforgery header, uploads, job polling.</summary>
public sealed class ApiSession : IDisposable
{
    private readonly HttpClient http;

    private ApiSession(HttpClient http) => this.http = http;

    public static async Task<ApiSession> SignInAsync(Uri address, string user, string password)
    {
        var handler = new HttpClientHandler { CookieContainer = new CookieContainer(), AllowAutoRedirect = false };
        var http = new HttpClient(handler) { BaseAddress = address, Timeout = TimeSpan.FromMinutes(5) };
        var session = new ApiSession(http);
        await session.RefreshTokenAsync();
        using var response = await http.PostAsJsonAsync("/api/signin", new { userName = user, password });
        response.EnsureSuccessStatusCode();
        await session.RefreshTokenAsync();
        return session;
    }

    public HttpClient Http => http;

    public async Task<JsonElement> PostJsonAsync(string path, object? body = null)
    {
        using var response = await http.PostAsJsonAsync(path, body ?? new { });
        var text = await response.Content.ReadAsStringAsync();
        if (!response.IsSuccessStatusCode)
        {
            throw new InvalidOperationException($"POST {path}: {(int)response.StatusCode} {text}");
        }

        return JsonDocument.Parse(text).RootElement.Clone();
    }

    public async Task<JsonElement> GetJsonAsync(string path) =>
        JsonDocument.Parse(await http.GetStringAsync(path)).RootElement.Clone();

    public async Task<JsonElement> UploadAsync(int itemId, string fileName, HttpContent content)
    {
        content.Headers.ContentType = new MediaTypeHeaderValue("audio/wav");
        using var response = await http.PostAsync($"/api/items/{itemId}/captures?fileName={Uri.EscapeDataString(fileName)}", content);
        var text = await response.Content.ReadAsStringAsync();
        if (!response.IsSuccessStatusCode)
        {
            throw new InvalidOperationException($"upload: {(int)response.StatusCode} {text}");
        }

        return JsonDocument.Parse(text).RootElement.Clone();
    }

    /// <summary>Waits (bounded) until no job is queued or running; returns every job.</summary>
    public async Task<List<JsonElement>> WaitForJobsAsync(TimeSpan limit)
    {
        var deadline = DateTime.UtcNow + limit;
        while (true)
        {
            var jobs = (await GetJsonAsync("/api/jobs?take=1000")).EnumerateArray().ToList();
            if (jobs.All(j => j.GetProperty("state").GetString() is not ("queued" or "running")))
            {
                return jobs;
            }

            if (DateTime.UtcNow > deadline)
            {
                throw new TimeoutException($"Jobs still not finished after {limit}: {string.Join("; ", jobs.Select(j => j.ToString()))}");
            }

            await Task.Delay(200);
        }
    }

    public void Dispose() => http.Dispose();

    private async Task RefreshTokenAsync()
    {
        var token = JsonDocument.Parse(await http.GetStringAsync("/api/antiforgery")).RootElement.GetProperty("token").GetString();
        http.DefaultRequestHeaders.Remove("X-TapeVault-Antiforgery");
        http.DefaultRequestHeaders.Add("X-TapeVault-Antiforgery", token);
    }
}
