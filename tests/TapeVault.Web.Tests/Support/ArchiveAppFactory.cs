using System.Collections.Concurrent;
using System.Globalization;
using System.Net;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Identity;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.Data.Sqlite;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Logging;
using Npgsql;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Storage;
using TapeVault.Archive.Tests.PostgreSql;
using TapeVault.Web.Startup;

namespace TapeVault.Web.Tests.Support;

/// <summary>
/// A fresh folder for one archive (its SQLite file, its content store, its sign-in keys), deleted with everything in
/// it when the test is done; on a PostgreSQL run (<see cref="TestDatabase"/>) the archive's database is a fresh
/// PostgreSQL database instead of the file, dropped with the folder. Several app starts in a row may share one, as a
/// restart does.
/// </summary>
public sealed class ArchiveFolder : IDisposable
{
    /// <param name="emptyDatabase">On a PostgreSQL run, a database with no tables yet (as a first start finds it) rather than a migrated one.</param>
    public ArchiveFolder(bool emptyDatabase = false)
    {
        if (TestDatabase.IsPostgreSql)
        {
            PostgreSql = emptyDatabase ? TestDatabase.CreateEmpty() : TestDatabase.Create();
        }
    }

    public string Root { get; } = Directory.CreateTempSubdirectory("tapevault-web-").FullName;

    /// <summary>The archive's PostgreSQL database on a PostgreSQL run; null on SQLite, where it is <see cref="DatabasePath"/>.</summary>
    public string? PostgreSql { get; }

    public string DatabasePath => Path.Combine(Root, "data", "archive.db");

    /// <summary>A context on the archive's database, whichever provider holds it.</summary>
    public ArchiveDbContext OpenDatabase() => ArchiveDatabase.Open(new ArchiveOptions
    {
        DatabasePath = DatabasePath,
        Provider = PostgreSql is null ? DatabaseProvider.Sqlite : DatabaseProvider.PostgreSql,
        ConnectionString = PostgreSql ?? string.Empty,
    });

    public string StorePath => Path.Combine(Root, "data", "store");

    public string TempFolder => Path.Combine(StorePath, "tmp");

    public string File(string name) => Path.Combine(Root, name);

    /// <summary>
    /// Runs SQL on the archive's database as an outside program would: its own connection, foreign keys off (SQLite:
    /// PRAGMA foreign_keys; PostgreSQL: a superuser's session_replication_role = replica, PostgreSQL 15 manual).
    /// Identifiers are double-quoted, which both read alike. Returns the rows changed.
    /// </summary>
    public int ExecuteBehindTheApp(string sql)
    {
        if (PostgreSql is not null)
        {
            using var pg = new NpgsqlConnection(new NpgsqlConnectionStringBuilder(PostgreSql) { Pooling = false }.ConnectionString);
            pg.Open();
            using (var role = new NpgsqlCommand("SET session_replication_role = replica", pg))
            {
                role.ExecuteNonQuery();
            }

            using var run = new NpgsqlCommand(sql, pg);
            return run.ExecuteNonQuery();
        }

        SqliteConnection.ClearAllPools();
        using var connection = new SqliteConnection($"Data Source={DatabasePath};Pooling=False");
        connection.Open();
        using (var keys = connection.CreateCommand())
        {
            keys.CommandText = "PRAGMA foreign_keys = OFF;";
            keys.ExecuteNonQuery();
        }

        using var command = connection.CreateCommand();
        command.CommandText = sql;
        return command.ExecuteNonQuery();
    }

    public void Dispose()
    {
        if (PostgreSql is not null)
        {
            TestDatabase.Drop(PostgreSql);
        }

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

/// <summary>A clock that stands still until a test moves it on; it starts at the real time.</summary>
public sealed class ManualClock : TimeProvider
{
    private DateTimeOffset now = DateTimeOffset.UtcNow;

    public override DateTimeOffset GetUtcNow() => now;

    public void Advance(TimeSpan by) => now += by;
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

    /// <summary>The known password of the test accounts (the password policy asks at least 15 characters, no common word).</summary>
    public const string Password = "Archive-Test-Passw0rd";

    private readonly Dictionary<string, string?> settings;

    private readonly bool captureLogs;
    private readonly TimeProvider? clock;
    private readonly TextWriter? console;

    /// <param name="clock">The app's clock, when a test must move time on (a <see cref="ManualClock"/>).</param>
    /// <param name="console">Where this app's words to whoever started it go (standard output when null).</param>
    public ArchiveAppFactory(ArchiveFolder folder, IReadOnlyDictionary<string, string?>? overrides = null, bool captureLogs = false, TimeProvider? clock = null, TextWriter? console = null)
    {
        this.captureLogs = captureLogs;
        this.clock = clock;
        this.console = console;
        ArgumentNullException.ThrowIfNull(folder);
        Folder = folder;
        settings = new Dictionary<string, string?>(StringComparer.OrdinalIgnoreCase)
        {
            ["TapeVault:Archive:DatabasePath"] = folder.DatabasePath,
            ["TapeVault:Archive:StorePath"] = folder.StorePath,
            ["TapeVault:Web:SeedDemo"] = "false",
            ["TapeVault:Web:InitialCurator"] = string.Empty,
            ["TapeVault:Archive:Provider"] = folder.PostgreSql is null ? "Sqlite" : "PostgreSql",
            ["TapeVault:Archive:ConnectionString"] = folder.PostgreSql ?? string.Empty,

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

    /// <summary>A client as <see cref="NewClient()"/>, whose requests arrive from the given network address.</summary>
    public HttpClient NewClient(string address)
    {
        var client = NewClient();
        client.DefaultRequestHeaders.Add(ClientAddressFilter.Header, address);
        return client;
    }

    /// <summary>A client that keeps no cookies: every request carries only the headers the test gives it.</summary>
    public HttpClient NewBareClient() => CreateClient(new WebApplicationFactoryClientOptions { AllowAutoRedirect = false, HandleCookies = false });

    /// <summary>Every line the app logged, at every level, when the factory was made with <c>captureLogs</c>.</summary>
    public ConcurrentQueue<string> LogLines { get; } = new();

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

    /// <summary>The names of every account, read from the Identity store.</summary>
    public async Task<IList<string>> UserNamesAsync()
    {
        await using var scope = Scope();
        var users = scope.ServiceProvider.GetRequiredService<UserManager<IdentityUser>>();
        return [.. users.Users.Select(u => u.UserName!)];
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

        builder.ConfigureServices(services => services.AddSingleton<IStartupFilter, ClientAddressFilter>());
        if (clock is not null)
        {
            builder.ConfigureServices(services => services.AddSingleton(clock));
        }

        if (console is not null)
        {
            builder.ConfigureServices(services => services.AddSingleton(new OperatorConsole(console)));
        }
        if (captureLogs)
        {
            builder.ConfigureLogging(logging =>
            {
                logging.SetMinimumLevel(LogLevel.Trace);
                logging.AddFilter(_ => true);
                logging.AddProvider(new QueueLoggerProvider(LogLines));
            });
        }
    }

    /// <summary>
    /// The in-memory server has no network, so every request would come from no address; this stands in for the
    /// network, giving a request the address a test names in <see cref="Header"/> (test builds only).
    /// </summary>
    private sealed class ClientAddressFilter : IStartupFilter
    {
        public const string Header = "X-Test-Client-Address";

        public Action<IApplicationBuilder> Configure(Action<IApplicationBuilder> next) => app =>
        {
            app.Use((context, nextMiddleware) =>
            {
                if (context.Request.Headers.TryGetValue(Header, out var value) && IPAddress.TryParse(value, out var address))
                {
                    context.Connection.RemoteIpAddress = address;
                }

                return nextMiddleware();
            });
            next(app);
        };
    }

    private sealed class QueueLoggerProvider(ConcurrentQueue<string> lines) : ILoggerProvider
    {
        public ILogger CreateLogger(string categoryName) => new QueueLogger(categoryName, lines);

        public void Dispose()
        {
        }
    }

    private sealed class QueueLogger(string category, ConcurrentQueue<string> lines) : ILogger
    {
        public IDisposable? BeginScope<TState>(TState state)
            where TState : notnull => null;

        public bool IsEnabled(LogLevel logLevel) => true;

        public void Log<TState>(LogLevel logLevel, EventId eventId, TState state, Exception? exception, Func<TState, Exception?, string> formatter)
        {
            ArgumentNullException.ThrowIfNull(formatter);
            lines.Enqueue($"{category} {logLevel}: {formatter(state, exception)} {exception}");
        }
    }

    public static string Invariant(long value) => value.ToString(CultureInfo.InvariantCulture);
}
