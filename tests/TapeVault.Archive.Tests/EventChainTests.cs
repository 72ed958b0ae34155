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
