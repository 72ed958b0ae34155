using System.Diagnostics;
using System.Net;
using System.Net.Http.Json;
using System.Net.Sockets;
using System.Text;
using System.Text.RegularExpressions;

namespace TapeVault.EndToEnd.Tests;

/// <summary>
/// The web app as a real process on 127.0.0.1 on a free port, with a fresh database and store in a temporary folder,
/// started from its build output the way a user runs it. The first curator's one-time password is read from what the
/// app prints, as a user would read it.
/// </summary>
public sealed partial class AppProcess : IAsyncDisposable
{
    private const int StartCapSeconds = 300;

    private readonly Process process;
    private readonly StringBuilder output = new();

    private readonly bool ownsRoot;

    private AppProcess(Process process, string root, Uri address, bool ownsRoot)
    {
        this.process = process;
        Root = root;
        Address = address;
        this.ownsRoot = ownsRoot;
    }

    public Uri Address { get; }

    public string Root { get; }

    public string CuratorPassword { get; private set; } = string.Empty;

    public string Output
    {
        get
        {
            lock (output)
            {
                return output.ToString();
            }
        }
    }

    public static string RepositoryRoot()
    {
        for (var folder = new DirectoryInfo(AppContext.BaseDirectory); folder is not null; folder = folder.Parent)
        {
            if (File.Exists(Path.Combine(folder.FullName, "TapeVault.sln")))
            {
                return folder.FullName;
            }
        }

        throw new InvalidOperationException("The tests must run from inside the repository.");
    }

    /// <summary>
    /// Starts the app; with <paramref name="root"/> on an existing archive folder (a restart), else on a new one it
    /// deletes afterwards. <paramref name="environment"/> adds or overrides settings (TapeVault__… variables).
    /// </summary>
    public static async Task<AppProcess> StartAsync(string? root = null, IReadOnlyDictionary<string, string>? environment = null)
    {
        var repo = RepositoryRoot();
        var configuration = AppContext.BaseDirectory.Contains($"{Path.DirectorySeparatorChar}Debug{Path.DirectorySeparatorChar}", StringComparison.Ordinal) ? "Debug" : "Release";
        var app = Path.Combine(repo, "src", "TapeVault.Web", "bin", configuration, "net10.0", "TapeVault.Web.dll");
        if (!File.Exists(app))
        {
            throw new InvalidOperationException($"The web app is not built at {app}; run the tests with scripts/test.");
        }

        bool owns = root is null;
        root ??= Directory.CreateTempSubdirectory("tapevault-e2e-").FullName;
        int port = FreePort();
        var address = new Uri($"http://127.0.0.1:{port}");
        var start = new ProcessStartInfo("dotnet")
        {
            WorkingDirectory = root,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add(app);
        start.Environment["urls"] = address.ToString().TrimEnd('/');
        start.Environment["TapeVault__Archive__DatabasePath"] = Path.Combine(root, "archive.db");
        start.Environment["TapeVault__Archive__StorePath"] = Path.Combine(root, "store");
        start.Environment["TapeVault__Web__SeedDemo"] = "false";
        start.Environment["TapeVault__Web__InitialCurator"] = "curator";
        start.Environment["TapeVault__Fixity__Schedule"] = string.Empty;
        start.Environment["DOTNET_ENVIRONMENT"] = "Production";
        foreach (var (key, value) in environment ?? new Dictionary<string, string>())
        {
            start.Environment[key] = value;
        }

        var process = Process.Start(start) ?? throw new InvalidOperationException("Could not start the web app.");
        var running = new AppProcess(process, root, address, owns);
        process.OutputDataReceived += (_, e) => running.Append(e.Data);
        process.ErrorDataReceived += (_, e) => running.Append(e.Data);
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();

        using var http = new HttpClient();
        // A cap, not a timing claim: on a loaded machine a start (migrations, first curator) can take minutes.
        var deadline = DateTime.UtcNow.AddSeconds(StartCapSeconds);
        while (true)
        {
            if (process.HasExited)
            {
                throw new InvalidOperationException($"The web app stopped at start:\n{running.Output}");
            }

            try
            {
                using var response = await http.GetAsync(new Uri(address, "/signin"));
                if (response.StatusCode == HttpStatusCode.OK)
                {
                    break;
                }
            }
            catch (HttpRequestException)
            {
                // Not listening yet.
            }

            if (DateTime.UtcNow > deadline)
            {
                throw new TimeoutException($"The web app did not answer within {StartCapSeconds} s:\n{running.Output}");
            }

            await Task.Delay(200);
        }

        var match = PasswordLine().Match(running.Output);
        if (owns && !match.Success)
        {
            throw new InvalidOperationException($"The app printed no curator password:\n{running.Output}");
        }

        // The printed password is a one-time password that must be changed at the first sign-in, as a user would.
        running.CuratorPassword = match.Success ? await ChangeOneTimePasswordAsync(address, match.Groups[1].Value) : string.Empty;
        return running;
    }

    /// <summary>Signs in with the one-time password and sets a new one, which it returns.</summary>
    private static async Task<string> ChangeOneTimePasswordAsync(Uri address, string oneTime)
    {
        string chosen = $"spools and reels {Guid.NewGuid():N}";
        using var handler = new HttpClientHandler { CookieContainer = new CookieContainer(), AllowAutoRedirect = false };
        using var http = new HttpClient(handler) { BaseAddress = address };
        await UseTokenAsync(http);
        using (var signIn = await http.PostAsJsonAsync("/api/signin", new { userName = "curator", password = oneTime }))
        {
            signIn.EnsureSuccessStatusCode();
        }

        await UseTokenAsync(http);
        using var change = await http.PostAsJsonAsync("/api/account/password", new { currentPassword = oneTime, newPassword = chosen });
        if (!change.IsSuccessStatusCode)
        {
            throw new InvalidOperationException($"Changing the one-time password failed: {(int)change.StatusCode} {await change.Content.ReadAsStringAsync()}");
        }

        return chosen;

        static async Task UseTokenAsync(HttpClient http)
        {
            using var document = System.Text.Json.JsonDocument.Parse(await http.GetStringAsync("/api/antiforgery"));
            http.DefaultRequestHeaders.Remove(document.RootElement.GetProperty("headerName").GetString()!);
            http.DefaultRequestHeaders.Add(document.RootElement.GetProperty("headerName").GetString()!, document.RootElement.GetProperty("token").GetString());
        }
    }

    /// <summary>Ends the app at once with SIGKILL, as a power cut or the OOM killer would: no shutdown code runs.</summary>
    public async Task KillAsync()
    {
        if (!process.HasExited)
        {
            process.Kill(entireProcessTree: true);
            await process.WaitForExitAsync();
        }
    }

    public async ValueTask DisposeAsync()
    {
        await KillAsync();
        process.Dispose();
        if (!ownsRoot)
        {
            return;
        }

        try
        {
            Directory.Delete(Root, recursive: true);
        }
        catch (IOException)
        {
            // A leftover temporary folder is harmless.
        }
    }

    private static int FreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }

    private void Append(string? line)
    {
        if (line is null)
        {
            return;
        }

        lock (output)
        {
            output.AppendLine(line);
        }
    }

    [GeneratedRegex(@"password:\s+(\S+)")]
    private static partial Regex PasswordLine();
}
