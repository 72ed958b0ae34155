using Microsoft.Data.Sqlite;
using Microsoft.EntityFrameworkCore;

namespace TapeVault.Archive;

/// <summary>
/// Opening the database: one place for the provider, the connection string, the migrations assembly of each provider
/// and, on SQLite, WAL mode.
/// </summary>
public static class ArchiveDatabase
{
    /// <summary>The SQLite migrations live in their own project under the top-level migrations/ folder.</summary>
    public const string MigrationsAssembly = "TapeVault.Migrations";

    /// <summary>The PostgreSQL migrations, beside the SQLite ones (migrations/TapeVault.Migrations.PostgreSql).</summary>
    public const string PostgreSqlMigrationsAssembly = "TapeVault.Migrations.PostgreSql";

    public static string ConnectionString(string databasePath) => new SqliteConnectionStringBuilder
    {
        DataSource = databasePath,
        Mode = SqliteOpenMode.ReadWriteCreate,
        Cache = SqliteCacheMode.Private,
        Pooling = true,
        DefaultTimeout = 30,
    }.ToString();

    /// <summary>An SQLite file.</summary>
    public static DbContextOptionsBuilder Configure(DbContextOptionsBuilder builder, string databasePath)
    {
        ArgumentNullException.ThrowIfNull(builder);
        return builder.UseSqlite(ConnectionString(databasePath), sqlite => sqlite.MigrationsAssembly(MigrationsAssembly));
    }

    /// <summary>A PostgreSQL database.</summary>
    public static DbContextOptionsBuilder ConfigurePostgreSql(DbContextOptionsBuilder builder, string connectionString)
    {
        ArgumentNullException.ThrowIfNull(builder);
        return builder.UseNpgsql(connectionString, postgres => postgres.MigrationsAssembly(PostgreSqlMigrationsAssembly));
    }

    /// <summary>The database the settings name.</summary>
    public static DbContextOptionsBuilder Configure(DbContextOptionsBuilder builder, ArchiveOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        return options.Provider switch
        {
            DatabaseProvider.PostgreSql => ConfigurePostgreSql(builder, options.ConnectionString),
            _ => Configure(builder, options.FullDatabasePath),
        };
    }

    public static ArchiveDbContext Open(string databasePath)
    {
        var options = new DbContextOptionsBuilder<ArchiveDbContext>();
        Configure(options, databasePath);
        return new ArchiveDbContext(options.Options);
    }

    /// <summary>A context on the database the settings name, with the system clock (for tools and tests).</summary>
    public static ArchiveDbContext Open(ArchiveOptions settings)
    {
        var options = new DbContextOptionsBuilder<ArchiveDbContext>();
        Configure(options, settings);
        return new ArchiveDbContext(options.Options);
    }

    /// <summary>
    /// Applies every pending migration and, in a database made before the event log was chained, gives the existing
    /// events their hashes (recorded as an event). On SQLite it first creates the folder and afterwards switches the
    /// file to write-ahead logging.
    /// </summary>
    public static async Task MigrateAsync(ArchiveDbContext db, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        bool sqlite = db.Database.IsSqlite();
        if (sqlite)
        {
            var path = db.Database.GetDbConnection().DataSource;
            if (!string.IsNullOrEmpty(path) && Path.GetDirectoryName(Path.GetFullPath(path)) is { Length: > 0 } folder)
            {
                Directory.CreateDirectory(folder);
            }
        }

        await db.Database.MigrateAsync(cancellation).ConfigureAwait(false);

        if (sqlite)
        {
            // WAL lets page reads go on while a job writes; the mode is stored in the file, so once is enough.
            await db.Database.ExecuteSqlRawAsync("PRAGMA journal_mode=WAL;", cancellation).ConfigureAwait(false);
        }

        await Events.EventChain.SealLegacyAsync(db, cancellation).ConfigureAwait(false);
    }

    /// <summary>
    /// Takes the lock that lets one writer at a time add events, inside the current transaction: on SQLite every EF
    /// Core transaction already holds the database's write lock (it begins IMMEDIATE); on PostgreSQL the event table
    /// is locked against other writers until the transaction ends (readers go on).
    /// </summary>
    internal static void LockEventsForAppend(ArchiveDbContext db)
    {
        if (db.Database.IsNpgsql())
        {
            db.Database.ExecuteSqlRaw("LOCK TABLE \"Events\" IN EXCLUSIVE MODE;");
        }
    }

    internal static async Task LockEventsForAppendAsync(ArchiveDbContext db, CancellationToken cancellation)
    {
        if (db.Database.IsNpgsql())
        {
            await db.Database.ExecuteSqlRawAsync("LOCK TABLE \"Events\" IN EXCLUSIVE MODE;", cancellation).ConfigureAwait(false);
        }
    }

    /// <summary>
    /// A query's rows as a list, read synchronously on SQLite, asynchronously from a server: SQLite's provider has no
    /// asynchronous I/O (its asynchronous calls run synchronously), and reading row by row through them only adds EF
    /// Core's asynchronous machinery to every row (Microsoft.Data.Sqlite, "Async limitations").
    /// </summary>
    internal static async Task<List<T>> ListAsync<T>(ArchiveDbContext db, IQueryable<T> query, CancellationToken cancellation)
    {
        if (db.Database.IsSqlite())
        {
            cancellation.ThrowIfCancellationRequested();
            return query.ToList();
        }

        return await query.ToListAsync(cancellation).ConfigureAwait(false);
    }

    /// <summary>A query's rows one by one, read as <see cref="ListAsync"/> reads them (synchronously on SQLite).</summary>
    internal static async IAsyncEnumerable<T> RowsAsync<T>(ArchiveDbContext db, IQueryable<T> query, [System.Runtime.CompilerServices.EnumeratorCancellation] CancellationToken cancellation = default)
    {
        if (db.Database.IsSqlite())
        {
            foreach (var row in query.AsEnumerable())
            {
                cancellation.ThrowIfCancellationRequested();
                yield return row;
            }

            yield break;
        }

        await foreach (var row in query.AsAsyncEnumerable().WithCancellation(cancellation).ConfigureAwait(false))
        {
            yield return row;
        }
    }
}
