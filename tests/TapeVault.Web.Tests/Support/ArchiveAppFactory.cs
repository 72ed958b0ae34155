using System.Globalization;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Identity;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.Data.Sqlite;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Storage;

namespace TapeVault.Web.Tests.Support;

/// <summary>
/// A fresh folder for one archive (its SQLite file, its content store, its sign-in keys), deleted with everything in
/// it when the test is done. Several app starts in a row may share one, as a restart does.
/// </summary>
public sealed class ArchiveFolder : IDisposable
{
    public string Root { get; } = Directory.CreateTempSubdirectory("tapevault-web-").FullName;

    public string DatabasePath => Path.Combine(Root, "data", "archive.db");

    public string StorePath => Path.Combine(Root, "data", "store");

    public string TempFolder => Path.Combine(StorePath, "tmp");

    public string File(string name) => Path.Combine(Root, name);

    public void Dispose()
    {
        // Pooled connections keep the file open; let them go before the folder is removed.
        using (var connection = new SqliteConnection(ArchiveDatabase.ConnectionString(DatabasePath)))
        {
            SqliteConnection.ClearPool(connection);
        }

        try
        {
            Directory.Delete(Root, recursive: true);
        }
        catch (IOException)
        {
            // A leftover temp folder is harmless.
        }
        catch (UnauthorizedAccessException)
        {
            // Stored objects are read-only; on Linux that does not stop deletion, elsewhere a leftover is harmless.
        }
    }
}

/// <summary>
/// Starts the real web app (pages, API, job workers) in memory over an <see cref="ArchiveFolder"/>. Settings go in as
/// host settings, which the factory hands to the program as command-line arguments, so the app reads them while it is
/// being built, as it reads appsettings.json.
/// </summary>
public sealed class ArchiveAppFactory : WebApplicationFactory<Program>
{
    public const string CuratorName = "test-curator";
    public const string ViewerName = "test-viewer";

    /// <summary>Known passwords for the test accounts (Identity asks for 12 characters with digits and both cases).</summary>
    public const string Password = "Archive-Test-Passw0rd";

    private readonly Dictionary<string, string?> settings;

    public ArchiveAppFactory(ArchiveFolder folder, IReadOnlyDictionary<string, string?>? overrides = null)
    {
        ArgumentNullException.ThrowIfNull(folder);
        Folder = folder;
        settings = new Dictionary<string, string?>(StringComparer.OrdinalIgnoreCase)
        {
            ["TapeVault:Archive:DatabasePath"] = folder.DatabasePath,
            ["TapeVault:Archive:StorePath"] = folder.StorePath,
            ["TapeVault:Web:SeedDemo"] = "false",
            ["TapeVault:Web:InitialCurator"] = string.Empty,

            // Quiet logs: the settings file's per-category levels would otherwise win over a filter set in code.
            ["Logging:LogLevel:Default"] = "Warning",
            ["Logging:LogLevel:Microsoft.AspNetCore"] = "Error",
            ["Logging:LogLevel:Microsoft.EntityFrameworkCore"] = "Error",
        };
        foreach (var (key, value) in overrides ?? new Dictionary<string, string?>())
        {
            settings[key] = value;
        }
    }

    public ArchiveFolder Folder { get; }

    public ContentStore Store => Services.GetRequiredService<ContentStore>();

    /// <summary>A database context of the running app, for checking what was stored.</summary>
    public AsyncServiceScope Scope() => Services.CreateAsyncScope();

    /// <summary>A client that keeps cookies and shows redirects as they are (so a redirect to /signin can be seen).</summary>
    public HttpClient NewClient() => CreateClient(new WebApplicationFactoryClientOptions { AllowAutoRedirect = false, HandleCookies = true });

    /// <summary>Makes an account with the known password through the archive's own account service.</summary>
    public async Task AddUserAsync(string userName, string role)
    {
        await using var scope = Scope();
        await scope.ServiceProvider.GetRequiredService<UserAdmin>().AddAsync(userName, role, Password, "test").ConfigureAwait(false);
    }

    /// <summary>A client signed in as the given account, carrying the antiforgery header that writes need.</summary>
    public async Task<ApiClient> SignedInAsync(string userName)
    {
        var client = new ApiClient(NewClient());
        await client.SignInAsync(userName, Password).ConfigureAwait(false);
        return client;
    }

    /// <summary>The usual pair of accounts: a curator and a viewer.</summary>
    public async Task AddCuratorAndViewerAsync()
    {
        await AddUserAsync(CuratorName, Roles.Curator).ConfigureAwait(false);
        await AddUserAsync(ViewerName, Roles.Viewer).ConfigureAwait(false);
    }

    /// <summary>The role names a user has, read from the Identity store.</summary>
    public async Task<IList<string>> RolesOfAsync(string userName)
    {
        await using var scope = Scope();
        var users = scope.ServiceProvider.GetRequiredService<UserManager<IdentityUser>>();
        var user = await users.FindByNameAsync(userName).ConfigureAwait(false) ?? throw new InvalidOperationException($"No user {userName}.");
        return await users.GetRolesAsync(user).ConfigureAwait(false);
    }

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        ArgumentNullException.ThrowIfNull(builder);
        foreach (var (key, value) in settings)
        {
            builder.UseSetting(key, value);
        }
    }

    public static string Invariant(long value) => value.ToString(CultureInfo.InvariantCulture);
}
