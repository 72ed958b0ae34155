using System.Data.Common;
using System.Reflection;
using Microsoft.Data.Sqlite;
using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Migrations;
using Microsoft.Extensions.DependencyInjection;
using Npgsql;
using TapeVault.Archive;
using TapeVault.Archive.Events;
using TapeVault.Archive.Tests.PostgreSql;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

public sealed class MigrationTests
{
    [Fact]
    public async Task FirstStart_AppliesEveryMigration_ToAnEmptyDatabase_WithAppendOnlyEvents_AndOnSqliteInWalMode()
    {
        // On a PostgreSQL run the database exists but has no tables, as a new server's database would.
        using var folder = new ArchiveFolder(emptyDatabase: true);
        bool postgreSql = folder.PostgreSql is not null;
        Assert.Equal(TestDatabase.IsPostgreSql, postgreSql);
        Assert.False(File.Exists(folder.DatabasePath));
        await using var app = new ArchiveAppFactory(folder);
        _ = app.Services; // starts the host, whose startup applies the migrations

        // Every migration class in the provider's migrations assembly, found by its attribute rather than through EF.
        var assembly = postgreSql ? typeof(TapeVault.Migrations.PostgreSql.DesignTimeFactory).Assembly : typeof(TapeVault.Migrations.DesignTimeFactory).Assembly;
        var inAssembly = assembly.GetTypes()
            .Where(t => typeof(Migration).IsAssignableFrom(t) && t.GetCustomAttribute<MigrationAttribute>() is not null)
            .Select(t => t.GetCustomAttribute<MigrationAttribute>()!.Id)
            .Order(StringComparer.Ordinal)
            .ToList();
        Assert.NotEmpty(inAssembly);

        await using DbConnection connection = postgreSql
            ? new NpgsqlConnection(folder.PostgreSql)
            : new SqliteConnection(ArchiveDatabase.ConnectionString(folder.DatabasePath));
        await connection.OpenAsync();
        var applied = new List<string>();
        await using (var history = connection.CreateCommand())
        {
            history.CommandText = "SELECT \"MigrationId\" FROM \"__EFMigrationsHistory\"";
            await using var reader = await history.ExecuteReaderAsync();
            while (await reader.ReadAsync())
            {
                applied.Add(reader.GetString(0));
            }
        }

        Assert.Equal(inAssembly, applied.Order(StringComparer.Ordinal));
        await using (var scope = app.Scope())
        {
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            Assert.Equal(postgreSql, db.Database.IsNpgsql());
            Assert.Empty(await db.Database.GetPendingMigrationsAsync());
            EventLog.Add(db, EventTypes.Create, "test", "collection", "1", "success", "Written to test the triggers.");
            await db.SaveChangesAsync();
        }

        if (!postgreSql)
        {
            // SQLite reports the journal mode of the file; WAL is stored in the file itself (sqlite.org, "PRAGMA
            // journal_mode"). PostgreSQL has no such mode to set: it always writes ahead (its manual, "Write-Ahead Logging").
            Assert.Equal("wal", Scalar(connection, "PRAGMA journal_mode;"));
        }

        // The database refuses to change or remove an event, whatever program connects to it.
        var update = Assert.ThrowsAny<DbException>(() => Scalar(connection, "UPDATE \"Events\" SET \"Detail\" = 'changed';"));
        Assert.Contains("append-only", update.Message, StringComparison.Ordinal);
        var delete = Assert.ThrowsAny<DbException>(() => Scalar(connection, "DELETE FROM \"Events\";"));
        Assert.Contains("append-only", delete.Message, StringComparison.Ordinal);
        Assert.Equal("1", Scalar(connection, "SELECT COUNT(*) FROM \"Events\" WHERE \"Detail\" = 'Written to test the triggers.';"));
    }

    [SqliteOnlyFact("the plan is read with SQLite's EXPLAIN QUERY PLAN")]
    public async Task The_newest_fixity_audits_are_read_through_the_index_on_kind_and_id_not_by_reading_every_job()
    {
        using var folder = new ArchiveFolder(emptyDatabase: true);
        await using var app = new ArchiveAppFactory(folder);
        await using var scope = app.Scope();
        var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();

        // The collection page's query as EF sends it (its parameters left unbound: the plan does not depend on them).
        string sql = TapeVault.Web.Api.ArchiveQueries.NewestFixityAudits(db).ToQueryString();
        string select = sql[sql.IndexOf("SELECT", StringComparison.Ordinal)..];
        await using var connection = new SqliteConnection(ArchiveDatabase.ConnectionString(folder.DatabasePath));
        await connection.OpenAsync();
        await using var command = connection.CreateCommand();
        command.CommandText = "EXPLAIN QUERY PLAN " + select;
        var plan = new List<string>();
        await using (var reader = await command.ExecuteReaderAsync())
        {
            while (await reader.ReadAsync())
            {
                plan.Add(reader.GetString(3));
            }
        }

        // sqlite.org, "EXPLAIN QUERY PLAN": a row "SEARCH t USING INDEX i (a=?)" reads the rows the index gives; "SCAN t"
        // reads the whole table, and "USE TEMP B-TREE FOR ORDER BY" sorts what it read.
        string all = string.Join(" | ", plan);
        Assert.Contains(plan, row => row.Contains("SEARCH", StringComparison.Ordinal) && row.Contains("IX_Jobs_Kind_Id", StringComparison.Ordinal));
        Assert.DoesNotContain("TEMP B-TREE", all, StringComparison.Ordinal);
    }

    private static string? Scalar(DbConnection connection, string sql)
    {
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        return Convert.ToString(command.ExecuteScalar(), System.Globalization.CultureInfo.InvariantCulture);
    }
}
