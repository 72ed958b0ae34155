using System.Diagnostics;
using System.Globalization;
using System.Text;
using System.Text.Json;
using Microsoft.Data.Sqlite;
using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Infrastructure;
using Microsoft.EntityFrameworkCore.Migrations;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Tests.PostgreSql;
using Xunit;

namespace TapeVault.Archive.Tests;

public sealed class EventChainTests
{
    [Fact]
    public void CanonicalContentIsRfc8785JsonAsPythonWritesItAndSha256sumGivesItsHash()
    {
        var e = new ArchiveEvent
        {
            Id = 12345,
            EventType = "ingest",
            OccurredUtc = new DateTimeOffset(2026, 12, 2, 23, 59, 58, TimeSpan.Zero).AddTicks(1_234_000),
            Agent = "cli:über \"quoted\" \\ back",
            ObjectType = "capture",
            ObjectId = "7",
            ItemId = 3,
            Outcome = "success",
            Detail = "line one\nline two\ttab \u0001 bell\u0007 form\f back\b cr\r del\u007f · ✓ 🎞 </script>",
        };
        string previous = new('a', 64);
        var ours = EventChain.CanonicalBytes(e, previous);

        // Outside reference: Python's json.dumps with sorted keys, no white space and ensure_ascii=False writes the
        // RFC 8785 (JSON Canonicalization Scheme) form for strings and integers (docs.python.org, json module).
        var input = JsonSerializer.Serialize(new Dictionary<string, object?>
        {
            ["version"] = EventChain.Version,
            ["id"] = e.Id,
            ["eventType"] = e.EventType,
            ["occurredUtc"] = "2026-12-02T23:59:58.1234000Z",
            ["agent"] = e.Agent,
            ["objectType"] = e.ObjectType,
            ["objectId"] = e.ObjectId,
            ["itemId"] = e.ItemId,
            ["outcome"] = e.Outcome,
            ["detail"] = e.Detail,
            ["previous"] = previous,
        });
        var python = Run("/usr/bin/python3", ["-c", "import json,sys; sys.stdout.buffer.write(json.dumps(json.loads(sys.stdin.read()), sort_keys=True, separators=(',', ':'), ensure_ascii=False).encode('utf-8'))"], input);
        Assert.Equal(Encoding.UTF8.GetString(python), Encoding.UTF8.GetString(ours));
        Assert.Equal(python, ours);

        // Outside reference: GNU coreutils sha256sum over the same bytes gives the event's hash.
        var file = Path.Combine(Path.GetTempPath(), $"tapevault-canonical-{Guid.NewGuid():N}");
        File.WriteAllBytes(file, ours);
        try
        {
            var sum = Encoding.ASCII.GetString(Run("/usr/bin/sha256sum", [file], null)).Split(' ')[0];
            Assert.Equal(sum, EventChain.HashOf(e, previous));
        }
        finally
        {
            File.Delete(file);
        }
    }

    /// <summary>
    /// Events reach the log three ways: the context's save (asynchronous and synchronous) and the bulk append of the
    /// fixity audit. All three go through one chaining step, and the bulk append writes the columns itself: the same
    /// event saved each way must be stored column for column alike (the time cut to the column's step, a lone
    /// surrogate made U+FFFD, no item as NULL), each linked to the one before, and the chain must verify. This checks
    /// the paths against each other; the canonical form itself is checked against Python and GNU sha256sum above.
    /// </summary>
    [Fact]
    public async Task EventSavedByTheContextAndAppendedInBulkIsStoredAndChainedAlike()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var when = new DateTimeOffset(2026, 12, 4, 1, 2, 3, TimeSpan.FromHours(2)).AddTicks(4_567);
        foreach (int? item in new int?[] { archive.ItemId, null })
        {
            await using var db = archive.NewContext();
            ArchiveEvent Make() => new()
            {
                EventType = "test-event",
                OccurredUtc = when,
                Agent = "curator \"ü\"",
                ObjectType = "object",
                ObjectId = "abc",
                ItemId = item,
                Outcome = "ok",
                Detail = "lone \uD800 surrogate, tab\t, bell\u0007, ✓",
            };

            var saved = Make();
            db.Events.Add(saved);
            await db.SaveChangesAsync();
            var savedSync = Make();
            db.Events.Add(savedSync);
            db.SaveChanges();
            var appended = Make();
            await TapeVault.Archive.Events.EventLog.AppendAsync(db, [appended]);

            Assert.Equal(saved.Id + 1, savedSync.Id);
            Assert.Equal(savedSync.Id + 1, appended.Id);
            Assert.Equal(saved.Sha256, savedSync.PreviousSha256);
            Assert.Equal(savedSync.Sha256, appended.PreviousSha256);

            var rows = new List<Dictionary<string, object?>>();
            foreach (long id in new[] { saved.Id, savedSync.Id, appended.Id })
            {
                rows.Add(await RawRowAsync(db, id));
            }

            foreach (var column in rows[0].Keys.Where(c => c is not ("Id" or "Sha256" or "PreviousSha256")))
            {
                Assert.Equal(rows[0][column], rows[1][column]);
                Assert.Equal(rows[0][column], rows[2][column]);
            }

            // What was hashed is what is stored: each event read back hashes to its own Sha256 after its predecessor.
            var back = await db.Events.AsNoTracking().Where(e => e.Id >= saved.Id && e.Id <= appended.Id).OrderBy(e => e.Id).ToListAsync();
            Assert.Equal(3, back.Count);
            Assert.All(back, e => Assert.Equal(e.Sha256, EventChain.HashOf(e, e.PreviousSha256!)));
            // The column keeps 1000-tick steps (docs/event-chain.md, "Two rules").
            Assert.Equal(new DateTimeOffset(when.UtcTicks - (when.UtcTicks % 1000), TimeSpan.Zero), back[0].OccurredUtc);
            Assert.Equal("lone \uFFFD surrogate, tab\t, bell\u0007, ✓", back[0].Detail);
            Assert.Equal(item, back[2].ItemId);
        }

        await using var check = archive.NewContext();
        var report = await EventChain.VerifyAsync(check);
        Assert.True(report.Intact, report.FirstBreak?.Reason);
    }

    private static async Task<Dictionary<string, object?>> RawRowAsync(ArchiveDbContext db, long id)
    {
        await db.Database.OpenConnectionAsync();
        var connection = db.Database.GetDbConnection();
        await using var command = connection.CreateCommand();
        command.CommandText = $"SELECT * FROM \"Events\" WHERE \"Id\" = {id.ToString(CultureInfo.InvariantCulture)}";
        await using var reader = await command.ExecuteReaderAsync();
        Assert.True(await reader.ReadAsync());
        var row = new Dictionary<string, object?>(StringComparer.Ordinal);
        for (int i = 0; i < reader.FieldCount; i++)
        {
            row[reader.GetName(i)] = reader.IsDBNull(i) ? null : reader.GetValue(i);
        }

        return row;
    }

    // The PostgreSQL schema began with the chain, so no PostgreSQL database has unsealed events; its triggers are
    // checked by PostgreSqlArchiveTests.The_event_log_on_PostgreSql_refuses_update_delete_truncate_and_unchained_rows.
    [SqliteOnlyFact("seals the events of an SQLite database made by a release before the event chain")]
    public async Task EventsOfADatabaseMadeBeforeTheChainAreSealedAtFirstStartAndThatIsRecorded()
    {
        var root = Directory.CreateTempSubdirectory("tapevault-legacy-").FullName;
        var path = Path.Combine(root, "archive.db");
        try
        {
            // A database as the previous release left it: every migration up to the one before the chain, and events.
            await using (var db = ArchiveDatabase.Open(path))
            {
                var migrator = db.GetService<IMigrator>();
                var all = db.Database.GetMigrations().ToList();
                int chain = all.FindIndex(m => m.EndsWith("_EventChain", StringComparison.Ordinal));
                Assert.True(chain > 0);
                await migrator.MigrateAsync(all[chain - 1]);
            }

            await using (var connection = new SqliteConnection(ArchiveDatabase.ConnectionString(path)))
            {
                await connection.OpenAsync();
                for (int i = 1; i <= 3; i++)
                {
                    await using var insert = connection.CreateCommand();
                    insert.CommandText = "INSERT INTO Events (EventType, OccurredUtc, Agent, ObjectType, ObjectId, ItemId, Outcome, Detail) VALUES ('create', $t, 'old', 'collection', $id, NULL, 'success', $d)";
                    insert.Parameters.AddWithValue("$t", (long)i << 20);
                    insert.Parameters.AddWithValue("$id", i.ToString(CultureInfo.InvariantCulture));
                    insert.Parameters.AddWithValue("$d", $"legacy event {i}");
                    await insert.ExecuteNonQueryAsync();
                }
            }

            SqliteConnection.ClearAllPools();
            await using (var db = ArchiveDatabase.Open(path))
            {
                await ArchiveDatabase.MigrateAsync(db);
                var events = await db.Events.AsNoTracking().OrderBy(e => e.Id).ToListAsync();
                Assert.Equal(4, events.Count);
                Assert.All(events, e => Assert.NotNull(e.Sha256));
                Assert.Equal(EventChain.SealedEventType, events[^1].EventType);
                Assert.Contains("3 event(s)", events[^1].Detail, StringComparison.Ordinal);
                var report = await EventChain.VerifyAsync(db);
                Assert.True(report.Intact, report.FirstBreak?.Reason);
                Assert.Equal(events[^1].Id, report.Head!.EventId);

                // A second start seals nothing again.
                await ArchiveDatabase.MigrateAsync(db);
                Assert.Equal(4, await db.Events.CountAsync());
            }

            // Once sealed, a row's chain columns cannot be changed, and a row without them cannot be added.
            await using (var connection = new SqliteConnection(ArchiveDatabase.ConnectionString(path)))
            {
                await connection.OpenAsync();
                await using var update = connection.CreateCommand();
                update.CommandText = "UPDATE Events SET Sha256 = NULL, PreviousSha256 = NULL WHERE Id = 1";
                Assert.Contains("append-only", Assert.Throws<SqliteException>(() => update.ExecuteNonQuery()).Message, StringComparison.Ordinal);
                await using var insert = connection.CreateCommand();
                insert.CommandText = "INSERT INTO Events (EventType, OccurredUtc, Agent, ObjectType, ObjectId, Outcome, Detail) VALUES ('create', 0, 'x', 'collection', '9', 'success', 'unchained')";
                Assert.Contains("chained", Assert.Throws<SqliteException>(() => insert.ExecuteNonQuery()).Message, StringComparison.Ordinal);
            }
        }
        finally
        {
            SqliteConnection.ClearAllPools();
            Directory.Delete(root, recursive: true);
        }
    }

    private static byte[] Run(string program, IReadOnlyList<string> arguments, string? input)
    {
        var start = new ProcessStartInfo(program) { RedirectStandardOutput = true, RedirectStandardError = true, RedirectStandardInput = true };
        foreach (var a in arguments)
        {
            start.ArgumentList.Add(a);
        }

        using var process = Process.Start(start)!;
        if (input is not null)
        {
            process.StandardInput.Write(input);
        }

        process.StandardInput.Close();
        using var output = new MemoryStream();
        process.StandardOutput.BaseStream.CopyTo(output);
        string error = process.StandardError.ReadToEnd();
        process.WaitForExit();
        Assert.True(process.ExitCode == 0, $"{program} failed: {error}");
        return output.ToArray();
    }
}
