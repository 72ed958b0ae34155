using Microsoft.Data.Sqlite;
using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Infrastructure;
using Microsoft.EntityFrameworkCore.Migrations;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Options;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Events;
using TapeVault.Archive.Ingest;
using TapeVault.Cli;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Archive.Tests.PostgreSql;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>The archive as every host runs it: one registration, settings checked at start, one clock.</summary>
public sealed class HostShapeTests
{
    [Fact]
    public async Task A_host_with_a_wrong_archive_setting_refuses_to_start_and_names_the_setting()
    {
        var root = Directory.CreateTempSubdirectory("tapevault-host-").FullName;
        try
        {
            var builder = Host.CreateApplicationBuilder();
            builder.Services.AddTapeVaultArchive(new ArchiveOptions { BaseFolder = root, Workers = 0, AllowedExtensions = ["wav"] }, ProfileCatalog.BuiltIn);
            using var host = builder.Build();
            var refused = await Assert.ThrowsAsync<OptionsValidationException>(() => host.StartAsync());
            Assert.Contains(refused.Failures, f => f.Contains("Workers", StringComparison.Ordinal));
            Assert.Contains(refused.Failures, f => f.Contains("\"wav\"", StringComparison.Ordinal));
        }
        finally
        {
            Directory.Delete(root, recursive: true);
        }
    }

    [Fact]
    public async Task A_host_with_sound_settings_starts()
    {
        var root = Directory.CreateTempSubdirectory("tapevault-host-").FullName;
        using var database = TestArchiveDatabase.Create();
        try
        {
            var builder = Host.CreateApplicationBuilder();
            builder.Services.AddTapeVaultArchive(database.ApplyTo(new ArchiveOptions { BaseFolder = root }), ProfileCatalog.BuiltIn);
            using var host = builder.Build();
            await host.StartAsync();
            await host.StopAsync();
        }
        finally
        {
            SqliteConnection.ClearAllPools();
            Directory.Delete(root, recursive: true);
        }
    }

    [Fact]
    public void The_command_line_opens_the_archive_with_every_service_the_web_app_has()
    {
        var root = Directory.CreateTempSubdirectory("tapevault-host-").FullName;
        using var database = TestArchiveDatabase.Create();
        string? file = database.ConnectionString is null ? Path.Combine(root, "a.db") : null;
        try
        {
            using (var session = ArchiveSession.Open(file, Path.Combine(root, "store"), new CliSettings(), database.ConnectionString))
            {
                // Before, the command line registered a hand-picked subset without these.
                Assert.NotNull(session.Get<CuratorActions>());
                Assert.NotNull(session.Get<CaptureIngest>());
                Assert.NotNull(session.Get<TimeProvider>());
            }

            var settings = new CliSettings();
            settings.Archive.MaxAttempts = 0;
            var refused = Assert.Throws<UsageException>(() => ArchiveSession.Open(file, Path.Combine(root, "store"), settings, database.ConnectionString));
            Assert.Contains("MaxAttempts", refused.Message, StringComparison.Ordinal);
        }
        finally
        {
            SqliteConnection.ClearAllPools();
            Directory.Delete(root, recursive: true);
        }
    }

    [Fact]
    public void The_command_line_names_an_SQLite_file_or_a_PostgreSQL_database_and_each_chooses_its_provider()
    {
        var onServer = new ArchiveOptions { Provider = DatabaseProvider.PostgreSql, ConnectionString = "Host=db.example.org;Database=tapevault" };
        ArchiveLocation.Apply(onServer, "local.db", null, null);
        Assert.Equal(DatabaseProvider.Sqlite, onServer.Provider);
        Assert.Equal(Path.GetFullPath("local.db"), onServer.DatabasePath);

        var inFile = new ArchiveOptions();
        ArchiveLocation.Apply(inFile, null, "Host=127.0.0.1;Database=archive", null);
        Assert.Equal(DatabaseProvider.PostgreSql, inFile.Provider);
        Assert.Equal("Host=127.0.0.1;Database=archive", inFile.ConnectionString);

        var both = Assert.Throws<UsageException>(() => ArchiveLocation.Apply(new ArchiveOptions(), "local.db", "Host=127.0.0.1", null));
        Assert.Contains("--database and --connection", both.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Rows_and_events_are_stamped_by_the_host_clock()
    {
        var root = Directory.CreateTempSubdirectory("tapevault-host-").FullName;
        var at = new DateTimeOffset(2031, 4, 5, 6, 7, 8, TimeSpan.Zero);
        using var database = TestArchiveDatabase.Create();
        try
        {
            var services = new ServiceCollection();
            services.AddLogging();
            services.AddSingleton<TimeProvider>(new FixedClock(at));
            services.AddTapeVaultArchive(database.ApplyTo(new ArchiveOptions { BaseFolder = root }), ProfileCatalog.BuiltIn);
            await using var provider = services.BuildServiceProvider();
            await using (var db = provider.GetRequiredService<IDbContextFactory<ArchiveDbContext>>().CreateDbContext())
            {
                await ArchiveDatabase.MigrateAsync(db);
            }

            await using (var scope = provider.CreateAsyncScope())
            {
                var made = await scope.ServiceProvider.GetRequiredService<CuratorActions>().CreateCollectionAsync("Clock shelf", null, "tester");
                Assert.Equal(at, made.CreatedUtc);
            }

            await using (var db = provider.GetRequiredService<IDbContextFactory<ArchiveDbContext>>().CreateDbContext())
            {
                var created = await db.Events.AsNoTracking().Where(e => e.EventType == EventTypes.Create).SingleAsync();
                Assert.Equal(at, created.OccurredUtc);
                Assert.True((await EventChain.VerifyAsync(db)).Intact);
            }
        }
        finally
        {
            SqliteConnection.ClearAllPools();
            Directory.Delete(root, recursive: true);
        }
    }

    [SqliteOnlyFact("a data migration of SQLite databases made by an earlier release; the PostgreSQL schema began with the status stored as the enum")]
    public async Task Readings_stored_by_their_lower_case_word_read_back_as_the_status_enum_after_the_migration()
    {
        var root = Directory.CreateTempSubdirectory("tapevault-host-").FullName;
        var path = Path.Combine(root, "archive.db");
        try
        {
            // A database as the previous release left it, with one reading of each status in the old form.
            await using (var db = ArchiveDatabase.Open(path))
            {
                var all = db.Database.GetMigrations().ToList();
                int byName = all.FindIndex(m => m.EndsWith("_CandidateStatusByName", StringComparison.Ordinal));
                Assert.True(byName > 0);
                await db.GetService<IMigrator>().MigrateAsync(all[byName - 1]);
            }

            await using (var connection = new SqliteConnection(ArchiveDatabase.ConnectionString(path)))
            {
                await connection.OpenAsync();
                await using var insert = connection.CreateCommand();
                insert.CommandText = """
                    PRAGMA foreign_keys = OFF;
                    INSERT INTO Candidates (RunId, Position, SettingIndex, SettingName, IdentityKey, Ordinal, Status, Confidence, MinimumMargin, MeanMargin,
                        Decisions, AmbiguousDecisions, FramingErrors, LevelDbfs, SnrDb, Speed, StartSeconds, EndSeconds, Truncated, Doubts, PayloadLength,
                        PayloadSha256, Header, Payload, ByteMargins, ByteErrorOdds, ByteSeconds)
                    SELECT 1, p, 0, 's', 'k' || p, 0, w, 0.5, 0, 0, 0, 0, 0, 0, 0, 1, 0, 0, 0, 0, 0, '', x'', x'', x'', x'', x''
                    FROM (SELECT 0 AS p, 'clean' AS w UNION ALL SELECT 1, 'failed' UNION ALL SELECT 2, 'unchecked');
                    """;
                await insert.ExecuteNonQueryAsync();
            }

            SqliteConnection.ClearAllPools();
            await using (var db = ArchiveDatabase.Open(path))
            {
                await ArchiveDatabase.MigrateAsync(db);
                var statuses = await db.Candidates.AsNoTracking().OrderBy(c => c.Position).Select(c => c.Status).ToListAsync();
                Assert.Equal([BlockStatus.Clean, BlockStatus.Failed, BlockStatus.Unchecked], statuses);
                Assert.Equal(1, await db.Candidates.CountAsync(c => c.Status == BlockStatus.Clean));
            }
        }
        finally
        {
            SqliteConnection.ClearAllPools();
            Directory.Delete(root, recursive: true);
        }
    }

    private sealed class FixedClock(DateTimeOffset at) : TimeProvider
    {
        public override DateTimeOffset GetUtcNow() => at;
    }
}
