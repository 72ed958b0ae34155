using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Sockets;
using Npgsql;
using Xunit;

namespace TapeVault.Archive.Tests.PostgreSql;

/// <summary>
/// A real PostgreSQL server (Debian's, version 15) for the tests: a temporary cluster made with initdb in a folder of
/// its own, owned by an unprivileged user (the server refuses to run as root, so under root it runs as "nobody"),
/// listening on a free loopback port only, stopped and removed at the end. When it cannot start, the tests that use
/// it fail with the reason; they are never skipped.
/// </summary>
public sealed class PostgreSqlServer : IAsyncLifetime
{
    /// <summary>Where Debian puts the server's programs (package postgresql-15; scripts/test installs it).</summary>
    public const string BinFolder = "/usr/lib/postgresql/15/bin";

    /// <summary>
    /// When set, the folder the clusters are made in (scripts/test sets it, so that it can stop any cluster a test
    /// process killed before its end left running); else the system's temporary folder.
    /// </summary>
    public const string ClustersVariable = "TAPEVAULT_TEST_CLUSTERS";

    private const string Superuser = "postgres";
    private string? root;
    private string? data;
    private bool started;

    public int Port { get; private set; }

    /// <summary>Connects as the cluster's superuser to <paramref name="database"/>.</summary>
    public string ConnectionString(string database) => new NpgsqlConnectionStringBuilder
    {
        Host = "127.0.0.1",
        Port = Port,
        Username = Superuser,
        Database = database,
        Pooling = true,
        IncludeErrorDetail = true,
    }.ConnectionString;

    public async Task InitializeAsync()
    {
        foreach (var program in new[] { "initdb", "pg_ctl", "postgres" })
        {
            if (!File.Exists(Path.Combine(BinFolder, program)))
            {
                throw new InvalidOperationException($"PostgreSQL 15 is not installed ({BinFolder}/{program} is missing); scripts/test installs the Debian package 'postgresql'.");
            }
        }

        root = Environment.GetEnvironmentVariable(ClustersVariable) is { Length: > 0 } parent
            ? Directory.CreateDirectory(Path.Combine(parent, "tapevault-pg-" + Guid.NewGuid().ToString("N")[..12])).FullName
            : Directory.CreateTempSubdirectory("tapevault-pg-").FullName;
        data = Path.Combine(root, "data");
        bool asRoot = Environment.UserName == "root" || GetEffectiveUserId() == 0;
        if (asRoot)
        {
            // The cluster's files must belong to the user the server runs as.
            Run("/bin/chown", ["nobody:nogroup", root], asNobody: false);
        }

        Run(Path.Combine(BinFolder, "initdb"), ["-D", data, "-U", Superuser, "--auth=trust", "-E", "UTF8", "--locale=C", "--no-sync"], asRoot);
        Port = FreeLoopbackPort();
        var options = string.Create(CultureInfo.InvariantCulture, $"-p {Port} -c listen_addresses=127.0.0.1 -k {root} -c fsync=off -c synchronous_commit=off -c max_connections=200");
        Run(Path.Combine(BinFolder, "pg_ctl"), ["-D", data, "-l", Path.Combine(root, "server.log"), "-o", options, "-w", "-t", "120", "start"], asRoot);
        started = true;

        await using var connection = new NpgsqlConnection(ConnectionString("postgres"));
        await connection.OpenAsync();
        await using var version = new NpgsqlCommand("SHOW server_version_num", connection);
        var number = int.Parse((string)(await version.ExecuteScalarAsync())!, CultureInfo.InvariantCulture);
        if (number / 10000 != 15)
        {
            throw new InvalidOperationException($"Expected PostgreSQL 15, found server_version_num {number}.");
        }
    }

    /// <summary>Makes an empty database of its own for one test and returns its connection string.</summary>
    public async Task<string> CreateDatabaseAsync()
    {
        var name = "archive_" + Guid.NewGuid().ToString("N");
        await using var connection = new NpgsqlConnection(ConnectionString("postgres"));
        await connection.OpenAsync();
        await using var create = new NpgsqlCommand($"CREATE DATABASE \"{name}\"", connection);
        await create.ExecuteNonQueryAsync();
        return ConnectionString(name);
    }

    public Task DisposeAsync()
    {
        NpgsqlConnection.ClearAllPools();
        try
        {
            if (started && data is not null)
            {
                Run(Path.Combine(BinFolder, "pg_ctl"), ["-D", data, "-m", "immediate", "-w", "stop"], Environment.UserName == "root" || GetEffectiveUserId() == 0);
            }
        }
        finally
        {
            if (root is not null)
            {
                Directory.Delete(root, recursive: true);
            }
        }

        return Task.CompletedTask;
    }

    private static void Run(string program, IReadOnlyList<string> arguments, bool asNobody)
    {
        var start = new ProcessStartInfo(asNobody ? "/usr/sbin/runuser" : program)
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            WorkingDirectory = "/",
        };
        if (asNobody)
        {
            foreach (var a in new[] { "-u", "nobody", "--", program })
            {
                start.ArgumentList.Add(a);
            }
        }

        foreach (var a in arguments)
        {
            start.ArgumentList.Add(a);
        }

        using var process = Process.Start(start) ?? throw new InvalidOperationException($"{program} did not start.");
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();
        process.WaitForExit();
        if (process.ExitCode != 0)
        {
            throw new InvalidOperationException($"{Path.GetFileName(program)} {string.Join(' ', arguments)} exited with {process.ExitCode}: {error.Result}{output.Result}");
        }
    }

    private static int FreeLoopbackPort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }

    private static uint GetEffectiveUserId()
    {
        // /proc/self/status: "Uid: real effective saved filesystem" (proc(5)).
        foreach (var line in File.ReadLines("/proc/self/status"))
        {
            if (line.StartsWith("Uid:", StringComparison.Ordinal))
            {
                return uint.Parse(line.Split('\t', StringSplitOptions.RemoveEmptyEntries)[2], CultureInfo.InvariantCulture);
            }
        }

        return uint.MaxValue;
    }
}

[CollectionDefinition(Name)]
public sealed class PostgreSqlGroup : ICollectionFixture<PostgreSqlServer>
{
    public const string Name = "postgresql";
}
