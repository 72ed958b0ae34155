using System.Data.Common;
using Microsoft.Data.Sqlite;
using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Infrastructure;
using Microsoft.EntityFrameworkCore.Metadata;
using Microsoft.EntityFrameworkCore.Storage;

namespace TapeVault.Archive;

/// <summary>
/// Opening the database: one place for the provider, the connection string, the migrations assembly of each provider
/// and, on SQLite, WAL mode; and the ways the archive writes that are the database's own business (waiting out
/// another writer's lock, many rows in one statement).
/// </summary>
public static class ArchiveDatabase
{
    /// <summary>
    /// How many more times a write refused SQLite's write lock is tried (<see cref="WhileBusyAsync"/>); the pause before
    /// each retry doubles from <see cref="FirstBusyPause"/>: 1 + 2 + 4 + 8 + 16 + 32 s, about a minute in all, beside the
    /// connection's own busy wait (<see cref="BusyWaitSeconds"/>) at every try: about four and a half minutes at most.
    /// </summary>
    public const int BusyRetries = 6;

    /// <summary>How long an SQLite connection waits for another writer's lock before the statement is refused.</summary>
    public const int BusyWaitSeconds = 30;

    private static readonly TimeSpan FirstBusyPause = TimeSpan.FromSeconds(1);

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
        DefaultTimeout = BusyWaitSeconds,
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

    /// <summary>
    /// Whether <paramref name="e"/>, or an exception it wraps, is SQLite refusing a statement the lock it needs: SQLITE_BUSY
    /// (5), another connection held the write lock past the busy wait, or SQLITE_LOCKED (6) (sqlite.org, "Result and
    /// Error Codes", from memory). Such a statement changed nothing.
    /// </summary>
    public static bool IsBusy(Exception e)
    {
        for (var inner = e; inner is not null; inner = inner.InnerException)
        {
            if (inner is SqliteException { SqliteErrorCode: 5 or 6 })
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>
    /// Runs <paramref name="write"/> and, when SQLite refused it the write lock (<see cref="IsBusy"/>: another writer held
    /// the lock longer than the busy wait), runs it again after a pause, at most <see cref="BusyRetries"/> more times
    /// with the pause doubling each time. For a write that is refused only before it changed anything: one statement,
    /// or a transaction that takes the lock as it begins (<see cref="BeginWriteAsync"/>). PostgreSQL refuses nothing so:
    /// its writers wait for each other's row locks.
    /// </summary>
    public static async Task<T> WhileBusyAsync<T>(TimeProvider clock, Func<Task<T>> write, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(clock);
        ArgumentNullException.ThrowIfNull(write);
        var pause = FirstBusyPause;
        for (int retry = 0; ; retry++)
        {
            try
            {
                return await write().ConfigureAwait(false);
            }
            catch (Exception e) when (retry < BusyRetries && IsBusy(e))
            {
                await Task.Delay(pause, clock, cancellation).ConfigureAwait(false);
                pause *= 2;
            }
        }
    }

    /// <summary>
    /// Begins a write transaction on <paramref name="db"/>, again after a pause while SQLite refuses it the write lock
    /// (<see cref="WhileBusyAsync"/>). An SQLite transaction of EF Core takes the write lock as it begins (BEGIN
    /// IMMEDIATE, Microsoft.Data.Sqlite's default), so once begun none of its statements waits for another writer.
    /// </summary>
    public static Task<IDbContextTransaction> BeginWriteAsync(ArchiveDbContext db, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        return WhileBusyAsync(db.Clock, () => db.Database.BeginTransactionAsync(cancellation), cancellation);
    }

    /// <summary>How many rows <see cref="InsertRowsAsync"/> sends in one batch where the provider takes batches.</summary>
    private const int RowsPerBatch = 500;

    /// <summary>
    /// Inserts <paramref name="rows"/> of one entity type inside the context's current transaction with one
    /// parameterised statement (in batches where the provider takes batches: PostgreSQL; prepared once and run row by
    /// row on SQLite, which runs in the process), instead of EF Core's change tracking, which costs about a
    /// millisecond a row on SQLite under load and holds the write lock all that time. The columns and their conversions
    /// are the model's own; the key is written when <paramref name="withKey"/> (the rows carry it), else the database
    /// numbers the rows and they are not read back.
    /// </summary>
    internal static async Task<int> InsertRowsAsync<T>(ArchiveDbContext db, IReadOnlyList<T> rows, bool withKey, CancellationToken cancellation)
        where T : class
    {
        var entity = db.Model.FindEntityType(typeof(T)) ?? throw new InvalidOperationException($"The model has no {typeof(T).Name}.");
        var table = StoreObjectIdentifier.Table(entity.GetTableName()!, entity.GetSchema());
        var sql = db.GetService<ISqlGenerationHelper>();
        var columns = entity.GetProperties().Where(p => withKey || !p.IsPrimaryKey()).ToArray();
        var getters = columns.Select(p => p.GetGetter()).ToArray();
        var converters = columns.Select(p => p.GetTypeMapping().Converter).ToArray();
        string text = $"INSERT INTO {sql.DelimitIdentifier(table.Name, table.Schema)} ({string.Join(", ", columns.Select(p => sql.DelimitIdentifier(p.GetColumnName(table)!)))}) "
            + $"VALUES ({string.Join(", ", columns.Select((_, i) => $"@p{i}"))})";
        var connection = db.Database.GetDbConnection();
        var transaction = (db.Database.CurrentTransaction ?? throw new InvalidOperationException("Rows are inserted inside a transaction.")).GetDbTransaction();

        void Fill(DbParameterCollection parameters, Func<DbParameter> make, T row)
        {
            for (int i = 0; i < columns.Length; i++)
            {
                object? value = getters[i].GetClrValue(row);
                if (value is not null && converters[i] is { } converter)
                {
                    value = converter.ConvertToProvider(value);
                }

                if (parameters.Count == i)
                {
                    var parameter = make();
                    parameter.ParameterName = $"@p{i}";
                    parameters.Add(parameter);
                }

                parameters[i].Value = value ?? DBNull.Value;
            }
        }

        int inserted = 0;
        if (connection.CanCreateBatch)
        {
            for (int start = 0; start < rows.Count; start += RowsPerBatch)
            {
                await using var batch = connection.CreateBatch();
                batch.Transaction = transaction;
                for (int r = start; r < Math.Min(rows.Count, start + RowsPerBatch); r++)
                {
                    var one = batch.CreateBatchCommand();
                    one.CommandText = text;
                    Fill(one.Parameters, one.CreateParameter, rows[r]);
                    batch.BatchCommands.Add(one);
                }

                inserted += await batch.ExecuteNonQueryAsync(cancellation).ConfigureAwait(false);
            }

            return inserted;
        }

        await using var command = connection.CreateCommand();
        command.Transaction = transaction;
        command.CommandText = text;
        bool sqlite = db.Database.IsSqlite();
        foreach (var row in rows)
        {
            Fill(command.Parameters, command.CreateParameter, row);
            if (sqlite)
            {
                // Microsoft.Data.Sqlite has no asynchronous I/O ("Async limitations"): its asynchronous call only adds work.
                cancellation.ThrowIfCancellationRequested();
                inserted += command.ExecuteNonQuery();
            }
            else
            {
                inserted += await command.ExecuteNonQueryAsync(cancellation).ConfigureAwait(false);
            }
        }

        return inserted;
    }
}
