using Microsoft.Data.Sqlite;
using Microsoft.EntityFrameworkCore;

namespace TapeVault.Archive;

/// <summary>Opening the SQLite database: one place for the connection string, the migrations assembly and WAL mode.</summary>
public static class ArchiveDatabase
{
    /// <summary>The migrations live in their own project under the top-level migrations/ folder.</summary>
    public const string MigrationsAssembly = "TapeVault.Migrations";

    public static string ConnectionString(string databasePath) => new SqliteConnectionStringBuilder
    {
        DataSource = databasePath,
        Mode = SqliteOpenMode.ReadWriteCreate,
        Cache = SqliteCacheMode.Private,
        Pooling = true,
        DefaultTimeout = 30,
    }.ToString();

    public static DbContextOptionsBuilder Configure(DbContextOptionsBuilder builder, string databasePath)
    {
        ArgumentNullException.ThrowIfNull(builder);
        return builder.UseSqlite(ConnectionString(databasePath), sqlite => sqlite.MigrationsAssembly(MigrationsAssembly));
    }

    /// <summary>The database the settings name.</summary>
    public static DbContextOptionsBuilder Configure(DbContextOptionsBuilder builder, ArchiveOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        return Configure(builder, options.FullDatabasePath);
    }

    public static ArchiveDbContext Open(string databasePath)
    {
        var options = new DbContextOptionsBuilder<ArchiveDbContext>();
        Configure(options, databasePath);
        return new ArchiveDbContext(options.Options);
    }

    /// <summary>
    /// Creates the folder, applies every pending migration, switches the file to write-ahead logging and, in a
    /// database made before the event log was chained, gives the existing events their hashes (recorded as an event).
    /// </summary>
    public static async Task MigrateAsync(ArchiveDbContext db, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        var path = db.Database.GetDbConnection().DataSource;
        if (!string.IsNullOrEmpty(path) && Path.GetDirectoryName(Path.GetFullPath(path)) is { Length: > 0 } folder)
        {
            Directory.CreateDirectory(folder);
        }

        await db.Database.MigrateAsync(cancellation).ConfigureAwait(false);

        // WAL lets page reads go on while a job writes; the mode is stored in the file, so once is enough.
        await db.Database.ExecuteSqlRawAsync("PRAGMA journal_mode=WAL;", cancellation).ConfigureAwait(false);
        await Events.EventChain.SealLegacyAsync(db, cancellation).ConfigureAwait(false);
    }
}
