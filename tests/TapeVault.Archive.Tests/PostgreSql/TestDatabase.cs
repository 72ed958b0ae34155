using Npgsql;
using TapeVault.Archive;

namespace TapeVault.Archive.Tests.PostgreSql;

/// <summary>
/// Which database the archive and web tests run on. scripts/test runs both suites twice: once as they are (SQLite, the
/// default) and once with <see cref="Variable"/> set to PostgreSql, when every test that makes an archive gets a fresh
/// PostgreSQL database of its own instead of an SQLite file. The databases live on one temporary cluster per test
/// process (<see cref="PostgreSqlServer"/>), started on first use and stopped when the process ends; each is a copy of
/// a template migrated once (CREATE DATABASE … TEMPLATE copies files instead of running every migration again).
/// </summary>
public static class TestDatabase
{
    /// <summary>The environment variable that selects the provider of a test run: Sqlite (the default) or PostgreSql.</summary>
    public const string Variable = "TAPEVAULT_TEST_PROVIDER";

    private const string TemplateName = "tapevault_template";

    /// <summary>
    /// The test databases sort text as a server set up in English does (ICU's "en" collation, PostgreSQL 15 manual,
    /// "Collation Support"), not byte by byte as the cluster's C locale would: an order that only byte order gives
    /// shows up as a difference from the SQLite run.
    /// </summary>
    private const string EnglishText = "TEMPLATE template0 LOCALE_PROVIDER icu ICU_LOCALE 'en' LOCALE 'C'";

    private static readonly Lazy<Task<PostgreSqlServer>> Shared = new(StartAsync, LazyThreadSafetyMode.ExecutionAndPublication);

    /// <summary>The provider this test run is on.</summary>
    public static DatabaseProvider Provider { get; } = ReadProvider();

    public static bool IsPostgreSql => Provider == DatabaseProvider.PostgreSql;

    /// <summary>A fresh, migrated PostgreSQL database on the run's shared cluster; returns its connection string.</summary>
    public static Task<string> CreateAsync() => CreateFromAsync(TemplateName);

    /// <param name="template">The migrated template; null for an empty database.</param>
    private static async Task<string> CreateFromAsync(string? template)
    {
        var server = await Shared.Value.ConfigureAwait(false);
        var name = "archive_" + Guid.NewGuid().ToString("N");
        await using var connection = new NpgsqlConnection(server.ConnectionString("postgres"));
        await connection.OpenAsync().ConfigureAwait(false);
        await using var create = new NpgsqlCommand(template is null ? $"CREATE DATABASE \"{name}\" {EnglishText}" : $"CREATE DATABASE \"{name}\" TEMPLATE \"{template}\"", connection);
        await create.ExecuteNonQueryAsync().ConfigureAwait(false);
        return server.ConnectionString(name);
    }

    /// <summary>A fresh PostgreSQL database with no tables (in English collation, as the template), as an archive's first start finds it.</summary>
    public static string CreateEmpty() => Task.Run(() => CreateFromAsync(null)).GetAwaiter().GetResult();

    /// <summary>The synchronous form of <see cref="CreateAsync"/>, for fixtures made in a constructor.</summary>
    public static string Create() => Task.Run(CreateAsync).GetAwaiter().GetResult();

    /// <summary>Removes a database made by <see cref="CreateAsync"/>, closing whatever connections still hold it.</summary>
    public static void Drop(string connectionString)
    {
        var name = new NpgsqlConnectionStringBuilder(connectionString).Database;
        var server = Shared.Value.GetAwaiter().GetResult();
        using (var pooled = new NpgsqlConnection(connectionString))
        {
            NpgsqlConnection.ClearPool(pooled);
        }

        using var connection = new NpgsqlConnection(server.ConnectionString("postgres"));
        connection.Open();
        using var drop = new NpgsqlCommand($"DROP DATABASE IF EXISTS \"{name}\" WITH (FORCE)", connection);
        drop.ExecuteNonQuery();
    }

    private static DatabaseProvider ReadProvider()
    {
        var value = Environment.GetEnvironmentVariable(Variable);
        if (string.IsNullOrWhiteSpace(value))
        {
            return DatabaseProvider.Sqlite;
        }

        return Enum.TryParse<DatabaseProvider>(value.Trim(), ignoreCase: true, out var provider) && Enum.IsDefined(provider)
            ? provider
            : throw new InvalidOperationException($"{Variable}=\"{value}\" is not a provider; use Sqlite or PostgreSql.");
    }

    private static async Task<PostgreSqlServer> StartAsync()
    {
        var server = new PostgreSqlServer();
        // The cluster goes with the test process, whether its tests passed or failed; scripts/test also stops any
        // cluster a process killed before its end left behind.
        AppDomain.CurrentDomain.ProcessExit += (_, _) => server.DisposeAsync().GetAwaiter().GetResult();
        await server.InitializeAsync().ConfigureAwait(false);

        await using (var connection = new NpgsqlConnection(server.ConnectionString("postgres")))
        {
            await connection.OpenAsync().ConfigureAwait(false);
            await using var create = new NpgsqlCommand($"CREATE DATABASE \"{TemplateName}\" {EnglishText}", connection);
            await create.ExecuteNonQueryAsync().ConfigureAwait(false);
        }

        var template = server.ConnectionString(TemplateName);
        await using (var db = ArchiveDatabase.Open(new ArchiveOptions { Provider = DatabaseProvider.PostgreSql, ConnectionString = template }))
        {
            await ArchiveDatabase.MigrateAsync(db).ConfigureAwait(false);
        }

        // A template must have no open connection while it is copied.
        await using (var pooled = new NpgsqlConnection(template))
        {
            NpgsqlConnection.ClearPool(pooled);
        }

        return server;
    }
}

/// <summary>
/// The database of one test that sets up its own archive: nothing on an SQLite run (the test's own file is used), a
/// fresh PostgreSQL database on a PostgreSQL run, dropped when disposed.
/// </summary>
public sealed class TestArchiveDatabase : IDisposable
{
    private TestArchiveDatabase(string? connectionString) => ConnectionString = connectionString;

    /// <summary>The PostgreSQL database's connection string on a PostgreSQL run, else null.</summary>
    public string? ConnectionString { get; }

    public static TestArchiveDatabase Create() => new(TestDatabase.IsPostgreSql ? TestDatabase.Create() : null);

    /// <summary>Points the options at the PostgreSQL database on a PostgreSQL run; leaves them on their SQLite file otherwise.</summary>
    public ArchiveOptions ApplyTo(ArchiveOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        if (ConnectionString is not null)
        {
            options.Provider = DatabaseProvider.PostgreSql;
            options.ConnectionString = ConnectionString;
        }

        return options;
    }

    /// <summary>The command line's way to this archive's database: --database FILE, or --connection on a PostgreSQL run.</summary>
    public string[] CliArguments(string sqliteFile) => ConnectionString is null ? ["--database", sqliteFile] : ["--connection", ConnectionString];

    public void Dispose()
    {
        if (ConnectionString is not null)
        {
            TestDatabase.Drop(ConnectionString);
        }
    }
}

/// <summary>
/// A test that checks something only SQLite has (a PRAGMA, the database file, a data migration of an SQLite database
/// made by an earlier release). On a PostgreSQL run it is reported as skipped, with the reason, never as passed.
/// </summary>
public sealed class SqliteOnlyFactAttribute : Xunit.FactAttribute
{
    public SqliteOnlyFactAttribute(string reason)
    {
        Reason = reason;
        if (TestDatabase.IsPostgreSql)
        {
            Skip = "SQLite only: " + reason;
        }
    }

    public string Reason { get; }
}
