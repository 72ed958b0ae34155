using System.Reflection;
using Microsoft.Data.Sqlite;
using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Migrations;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Events;
using TapeVault.Migrations;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

public sealed class MigrationTests
{
    [Fact]
    public async Task FirstStart_AppliesEveryMigration_ToAnEmptyDatabase_InWalMode_WithAppendOnlyEvents()
    {
        using var folder = new ArchiveFolder();
        Assert.False(File.Exists(folder.DatabasePath));
        await using var app = new ArchiveAppFactory(folder);
        _ = app.Services; // starts the host, whose startup applies the migrations

        // Every migration class in the migrations assembly, found by its attribute rather than through EF.
        var inAssembly = typeof(DesignTimeFactory).Assembly.GetTypes()
            .Where(t => typeof(Migration).IsAssignableFrom(t) && t.GetCustomAttribute<MigrationAttribute>() is not null)
            .Select(t => t.GetCustomAttribute<MigrationAttribute>()!.Id)
            .Order(StringComparer.Ordinal)
            .ToList();
        Assert.NotEmpty(inAssembly);

        await using var connection = new SqliteConnection(ArchiveDatabase.ConnectionString(folder.DatabasePath));
        await connection.OpenAsync();
        var applied = new List<string>();
        await using (var history = connection.CreateCommand())
        {
            history.CommandText = "SELECT MigrationId FROM __EFMigrationsHistory ORDER BY MigrationId";
            await using var reader = await history.ExecuteReaderAsync();
            while (await reader.ReadAsync())
            {
                applied.Add(reader.GetString(0));
            }
        }

        Assert.Equal(inAssembly, applied);
        await using (var scope = app.Scope())
        {
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            Assert.Empty(await db.Database.GetPendingMigrationsAsync());
            EventLog.Add(db, EventTypes.Create, "test", "collection", "1", "success", "Written to test the triggers.");
            await db.SaveChangesAsync();
        }

        // SQLite reports the journal mode of the file; WAL is stored in the file itself (sqlite.org, "PRAGMA journal_mode").
        Assert.Equal("wal", Scalar(connection, "PRAGMA journal_mode;"));

        // The database refuses to change or remove an event, whatever program opens the file.
        var update = Assert.Throws<SqliteException>(() => Scalar(connection, "UPDATE Events SET Detail = 'changed';"));
        Assert.Contains("append-only", update.Message, StringComparison.Ordinal);
        var delete = Assert.Throws<SqliteException>(() => Scalar(connection, "DELETE FROM Events;"));
        Assert.Contains("append-only", delete.Message, StringComparison.Ordinal);
        Assert.Equal("1", Scalar(connection, "SELECT COUNT(*) FROM Events WHERE Detail = 'Written to test the triggers.';"));
    }

    private static string? Scalar(SqliteConnection connection, string sql)
    {
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        return Convert.ToString(command.ExecuteScalar(), System.Globalization.CultureInfo.InvariantCulture);
    }
}
