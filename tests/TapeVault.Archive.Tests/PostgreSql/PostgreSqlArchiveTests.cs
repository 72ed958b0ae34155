using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using Npgsql;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Events;
using TapeVault.Archive.Export;
using TapeVault.Archive.Fixity;
using TapeVault.Core.Image;
using Xunit;

namespace TapeVault.Archive.Tests.PostgreSql;

/// <summary>
/// The archive on a real PostgreSQL 15 server (<see cref="PostgreSqlServer"/>): the PostgreSQL migrations, ingest,
/// decoding and merging, the event log's chain and the triggers that keep it append-only, fixity, bags and accounts.
/// </summary>
[Collection(PostgreSqlGroup.Name)]
public sealed class PostgreSqlArchiveTests(PostgreSqlServer server)
{
    [Fact]
    public async Task Ingest_decode_and_merge_on_PostgreSql_recover_the_synthesised_files_and_chain_every_event()
    {
        await using var archive = await ArchiveFixture.CreateAsync(postgreSql: await server.CreateDatabaseAsync());
        await using var db = archive.NewContext();
        Assert.True(db.Database.IsNpgsql());
        Assert.Empty(await db.Database.GetPendingMigrationsAsync());

        // The bytes out are the bytes the channel model was given (the fixture's ground truth).
        var row = await db.Images.AsNoTracking().SingleAsync();
        TapeImage image;
        await using (var stream = File.OpenRead(archive.Store.PathOf(row.Sha256)))
        {
            image = TapeImageContainer.Read(stream);
        }

        var files = ImageFiles.Extract(image);
        foreach (var truth in archive.Files)
        {
            var file = Assert.Single(files, f => f.File.Name == truth.Name);
            Assert.Equal(truth.Content, file.Bytes.ToArray());
        }

        // Two ingests, two decodes, one merge, and the chain over them holds.
        Assert.Equal(2, await db.Events.CountAsync(e => e.EventType == EventTypes.Ingest));
        Assert.Equal(2, await db.Events.CountAsync(e => e.EventType == EventTypes.Decode));
        Assert.Equal(1, await db.Events.CountAsync(e => e.EventType == EventTypes.Merge));
        var chain = await EventChain.VerifyAsync(db);
        Assert.True(chain.Intact, chain.FirstBreak?.Reason);
        Assert.Equal(await db.Events.CountAsync(), chain.Events);
    }

    [Fact]
    public async Task The_event_log_on_PostgreSql_refuses_update_delete_truncate_and_unchained_rows()
    {
        await using var archive = await ArchiveFixture.CreateAsync(postgreSql: await server.CreateDatabaseAsync());
        long count;
        await using (var db = archive.NewContext())
        {
            count = await db.Events.LongCountAsync();
            Assert.True(count > 0);
        }

        await using var connection = new NpgsqlConnection(archive.Options.ConnectionString);
        await connection.OpenAsync();
        async Task<string> Refused(string sql)
        {
            await using var command = new NpgsqlCommand(sql, connection);
            return (await Assert.ThrowsAsync<PostgresException>(() => command.ExecuteNonQueryAsync())).MessageText;
        }

        // Straight SQL, past the application: the database itself says no.
        Assert.Contains("append-only", await Refused("""UPDATE "Events" SET "Detail" = 'rewritten' WHERE "Id" = 1"""), StringComparison.Ordinal);
        Assert.Contains("append-only", await Refused("""UPDATE "Events" SET "Sha256" = NULL, "PreviousSha256" = NULL WHERE "Id" = 1"""), StringComparison.Ordinal);
        Assert.Contains("append-only", await Refused("""DELETE FROM "Events" WHERE "Id" = 1"""), StringComparison.Ordinal);
        Assert.Contains("append-only", await Refused("""TRUNCATE "Events" """), StringComparison.Ordinal);
        Assert.Contains("chained", await Refused("""
            INSERT INTO "Events" ("Id", "EventType", "OccurredUtc", "Agent", "ObjectType", "ObjectId", "Outcome", "Detail")
            VALUES (1000000, 'create', 0, 'x', 'collection', '9', 'success', 'unchained')
            """), StringComparison.Ordinal);

        // The application refuses too, before the database is asked.
        await using (var db = archive.NewContext())
        {
            var first = await db.Events.OrderBy(e => e.Id).FirstAsync();
            first.Detail = "rewritten";
            await Assert.ThrowsAsync<InvalidOperationException>(() => db.SaveChangesAsync());
        }

        await using (var db = archive.NewContext())
        {
            Assert.Equal(count, await db.Events.LongCountAsync());
            Assert.True((await EventChain.VerifyAsync(db)).Intact);
        }
    }

    [Fact]
    public async Task Writers_adding_events_at_the_same_time_on_PostgreSql_all_succeed_and_the_chain_never_forks()
    {
        await using var archive = await ArchiveFixture.CreateAsync(postgreSql: await server.CreateDatabaseAsync());
        const int writers = 8;
        const int eventsEach = 5;
        long before;
        await using (var db = archive.NewContext())
        {
            before = await db.Events.LongCountAsync();
        }

        // Each writer reads the chain's head and appends after it; without the table lock two would read the same head.
        using var go = new ManualResetEventSlim();
        var tasks = Enumerable.Range(0, writers).Select(w => Task.Run(async () =>
        {
            go.Wait();
            for (int i = 0; i < eventsEach; i++)
            {
                await using var db = archive.NewContext();
                EventLog.Add(db, EventTypes.Settings, $"writer-{w}", "test", $"{w}-{i}", "success", "concurrent append");
                await db.SaveChangesAsync();
            }
        })).ToList();
        go.Set();
        await Task.WhenAll(tasks);

        await using (var db = archive.NewContext())
        {
            Assert.Equal(before + (writers * eventsEach), await db.Events.LongCountAsync());
            var chain = await EventChain.VerifyAsync(db);
            Assert.True(chain.Intact, chain.FirstBreak?.Reason);
        }
    }

    [Fact]
    public async Task Fixity_bags_and_accounts_work_on_PostgreSql()
    {
        await using var archive = await ArchiveFixture.CreateAsync(postgreSql: await server.CreateDatabaseAsync());
        using var scope = archive.Services.CreateScope();
        var report = await scope.ServiceProvider.GetRequiredService<FixityAudit>().RunAsync(null, "tester");
        Assert.True(report.AllGood);
        Assert.True(report.Chain.Intact);

        // A bag of the item, checked by GNU sha256sum (outside the project) against its own manifest.
        var export = await scope.ServiceProvider.GetRequiredService<ExportStore>().StoreBagAsync(BagScope.Item(archive.ItemId), "tester");
        var folder = Path.Combine(archive.Root, "bag");
        System.IO.Compression.ZipFile.ExtractToDirectory(archive.Store.PathOf(export.Sha256), folder);
        var bag = Directory.GetFiles(folder, "manifest-sha256.txt", SearchOption.AllDirectories).Single();
        var (exit, output) = ArchiveFixture.Sha256SumCheck(Path.GetDirectoryName(bag)!, "manifest-sha256.txt");
        Assert.True(exit == 0, output);

        // Identity's tables on PostgreSQL, with the archive's password rules.
        var admin = scope.ServiceProvider.GetRequiredService<UserAdmin>();
        await admin.EnsureRolesAsync();
        var (user, password) = await admin.AddAsync("pg-curator", Roles.Curator, null, "tester");
        Assert.NotNull(password);
        var users = scope.ServiceProvider.GetRequiredService<UserManager<IdentityUser>>();
        Assert.True(await users.CheckPasswordAsync(user, password!));
        Assert.True(await users.IsInRoleAsync(user, Roles.Curator));
        await admin.AddAsync("pg-viewer", Roles.Viewer, null, "tester");
        await admin.DisableAsync("pg-viewer", "tester");
        Assert.True(await admin.IsDisabledAsync((await users.FindByNameAsync("pg-viewer"))!));
        Assert.False(await admin.IsDisabledAsync(user));
    }
}
