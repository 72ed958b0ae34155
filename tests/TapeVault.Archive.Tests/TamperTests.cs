using System.Globalization;
using System.Security.Cryptography;
using Microsoft.Data.Sqlite;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using Npgsql;
using TapeVault.Archive.Ingest;
using TapeVault.Cli;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// Edits made behind the archive's back, straight in the database (the SQLite file, or the PostgreSQL database on a
/// PostgreSQL run) and the store, as someone with the files (but
/// not the archive's code) would make them; <c>tapevault verify</c> must name each. The checks read only the command's
/// output and exit code.
/// </summary>
public sealed class TamperTests
{
    [Fact]
    public async Task UntouchedArchiveVerifiesCleanAndPrintsTheChainHeadThatIsInTheDatabase()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var (exit, output, _) = Verify(archive);
        Assert.Equal(0, exit);
        Assert.Contains("Event chain intact", output, StringComparison.Ordinal);
        var (id, sha) = Newest(archive);
        Assert.Contains($"Event chain head: event {id} sha256:{sha}", output, StringComparison.Ordinal);
    }

    [Fact]
    public async Task ReplacedOriginalWithItsFileRenamedAndRowsUpdatedIsFoundAndTheCaptureNamed()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var (captureId, oldSha, _) = Captures(archive)[0];

        // New bytes (one sample changed), the file renamed to their hash, and both rows pointed at it.
        var oldPath = archive.Store.PathOf(oldSha);
        var bytes = File.ReadAllBytes(oldPath);
        bytes[^2] ^= 0x40;
        string newSha = Convert.ToHexStringLower(SHA256.HashData(bytes));
        var newPath = archive.Store.PathOf(newSha);
        Directory.CreateDirectory(Path.GetDirectoryName(newPath)!);
        File.WriteAllBytes(newPath, bytes);
        File.SetAttributes(oldPath, FileAttributes.Normal);
        File.Delete(oldPath);
        Tamper(archive, $"""
            UPDATE "Objects" SET "Sha256" = '{newSha}', "Size" = {bytes.Length} WHERE "Sha256" = '{oldSha}';
            UPDATE "Captures" SET "Sha256" = '{newSha}', "Size" = {bytes.Length} WHERE "Id" = {captureId};
            """);

        var (exit, output, _) = Verify(archive);
        Assert.Equal(1, exit);
        var line = Assert.Single(Lines(output, "CONTRADICTION"));
        Assert.Contains($"capture {captureId} ", line, StringComparison.Ordinal);
        Assert.Contains($"ingested with SHA-256 {oldSha}", line, StringComparison.Ordinal);
        Assert.Contains("Event chain intact", output, StringComparison.Ordinal);
    }

    [Fact]
    public async Task CapturePointedAtAnotherCapturesOriginalIsFoundAndNamed()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var (firstId, firstSha, firstSize) = Captures(archive)[0];

        // A capture of a second item (the unique index allows one item only one capture per hash).
        int otherCapture;
        string otherSha;
        using (var scope = archive.Services.CreateScope())
        {
            var actions = scope.ServiceProvider.GetRequiredService<Curation.CuratorActions>();
            int item = (await actions.CreateItemAsync(archive.CollectionId, "TEST-0002", "Second tape", "", "", "A", "tester")).Id;
            var wav = Path.Combine(archive.Root, "other.wav");
            CaptureSynthesizer.Write(wav, ProfileCatalog.BuiltIn.Get("orrin-80"), [new Core.Blocks.TapeFile("OTHER", [1, 2, 3])], new ChannelDamage { SnrDb = 30, Seed = 5 });
            await using var source = File.OpenRead(wav);
            var ingested = await scope.ServiceProvider.GetRequiredService<CaptureIngest>().IngestAsync(source, new IngestRequest { ItemId = item, FileName = "other.wav", ContentType = "audio/wav", Agent = "tester" });
            otherCapture = ingested.Capture.Id;
            otherSha = ingested.Capture.Sha256;
        }

        Assert.Equal(0, Verify(archive).Exit);
        Tamper(archive, $"UPDATE \"Captures\" SET \"Sha256\" = '{firstSha}', \"Size\" = {firstSize} WHERE \"Id\" = {otherCapture};");

        var (exit, output, _) = Verify(archive);
        Assert.Equal(1, exit);
        var line = Assert.Single(Lines(output, "CONTRADICTION"));
        Assert.Contains($"capture {otherCapture} ", line, StringComparison.Ordinal);
        Assert.DoesNotContain($"capture {firstId} ", line, StringComparison.Ordinal);

        // Its own original is now used by nothing: that is named too.
        Assert.Contains(Lines(output, "UNREFERENCED"), l => l.Contains(otherSha, StringComparison.Ordinal));
    }

    [Fact]
    public async Task EventRewrittenWithTheTriggersDroppedAndRecreatedIsFoundAndTheFirstBrokenLinkNamed()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var (captureId, _, _) = Captures(archive)[1];
        long edited;
        await using (var db = archive.NewContext())
        {
            edited = await db.Events.Where(e => e.EventType == "ingest" && e.ObjectId == captureId.ToString(CultureInfo.InvariantCulture)).Select(e => e.Id).SingleAsync();
        }

        Assert.Equal(0, Verify(archive).Exit);
        TamperBehindTriggers(archive, $"UPDATE \"Events\" SET \"Agent\" = 'someone-else' WHERE \"Id\" = {edited};");

        var (exit, output, _) = Verify(archive);
        Assert.Equal(1, exit);
        Assert.Contains($"Event chain BROKEN at event {edited}:", output, StringComparison.Ordinal);
        Assert.Contains("edited", Assert.Single(Lines(output, "CHAIN-BROKEN")), StringComparison.Ordinal);
    }

    [Fact]
    public async Task EventRemovedWithTheTriggersDroppedIsFoundAtTheEventAfterIt()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        long removed, next;
        await using (var db = archive.NewContext())
        {
            var ids = await db.Events.OrderBy(e => e.Id).Select(e => e.Id).ToListAsync();
            removed = ids[ids.Count / 2];
            next = ids[(ids.Count / 2) + 1];
        }

        TamperBehindTriggers(archive, $"DELETE FROM \"Events\" WHERE \"Id\" = {removed};");

        var (exit, output, _) = Verify(archive);
        Assert.Equal(1, exit);
        Assert.Contains($"Event chain BROKEN at event {next}:", output, StringComparison.Ordinal);
    }

    [Fact]
    public async Task NewestEventsCutOffPassTheChainButNotAHeadKeptInABag()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var bag = Path.Combine(archive.Root, "kept-bag");
        Assert.Equal(0, Entry.Run(["export", "bag", "--item", ArchiveFixture.Accession, "--out", bag, .. archive.CliArchiveArguments()], new StringWriter(), new StringWriter()));
        string kept = File.ReadAllText(Path.Combine(bag, "event-chain-head.txt")).Trim();
        long keptId = long.Parse(kept.Split(' ')[1], CultureInfo.InvariantCulture);
        Assert.Equal(0, Verify(archive, "--expect-head", kept).Exit);

        // Everything from the kept head on is removed: what is left is a whole chain, just shorter.
        TamperBehindTriggers(archive, $"DELETE FROM \"Events\" WHERE \"Id\" >= {keptId};");
        var (alone, aloneOutput, _) = Verify(archive);
        Assert.Equal(0, alone);
        Assert.Contains("Event chain intact", aloneOutput, StringComparison.Ordinal);

        var (exit, output, _) = Verify(archive, "--expect-head", kept);
        Assert.Equal(1, exit);
        // The audit without the kept head added events of its own, so event N exists again, with another hash.
        var line = Assert.Single(Lines(output, "KEPT-HEAD"));
        Assert.Contains($"Event {keptId} now has SHA-256", line, StringComparison.Ordinal);
        Assert.Contains(kept.Split(':')[1], line, StringComparison.Ordinal);
    }

    [Fact]
    public async Task DeletedObjectRowLeavesTheFileInPlaceAndTheAuditNamesTheCaptureAndTheFile()
    {
        await using var archive = await ArchiveFixture.CreateAsync();
        var (captureId, sha, _) = Captures(archive)[0];
        Tamper(archive, $"DELETE FROM \"Objects\" WHERE \"Sha256\" = '{sha}';");

        var (exit, output, _) = Verify(archive);
        Assert.Equal(1, exit);
        Assert.Contains(Lines(output, "CONTRADICTION"), l => l.Contains($"capture {captureId} ", StringComparison.Ordinal) && l.Contains("no object row", StringComparison.Ordinal));

        // The file no row names is reported with its hash (GNU sha256sum's, outside the project) and the capture it holds.
        string actual = ArchiveFixture.Sha256Sum(archive.Store.PathOf(sha));
        Assert.Equal(sha, actual);
        Assert.Contains(Lines(output, "UNRECORDED"), l => l.Contains($"capture {captureId} ", StringComparison.Ordinal) && l.Contains($"SHA-256 {actual}", StringComparison.Ordinal));
        Assert.True(File.Exists(archive.Store.PathOf(sha)), "The audit must not move or remove the file.");
    }

    internal static (int Exit, string Output, string Error) Verify(ArchiveFixture archive, params string[] extra)
    {
        SqliteConnection.ClearAllPools();
        var output = new StringWriter();
        var error = new StringWriter();
        int exit = Entry.Run(["verify", .. archive.CliArchiveArguments(), .. extra], output, error);
        return (exit, output.ToString(), error.ToString());
    }

    /// <summary>
    /// Runs SQL on the database as an outside program would: its own connection, foreign keys off. On SQLite that is
    /// PRAGMA foreign_keys; on PostgreSQL a superuser's session_replication_role = replica, under which foreign keys
    /// (and other triggers) are not enforced for that session only (PostgreSQL 15 manual, "session_replication_role").
    /// Identifiers are double-quoted, which both read alike.
    /// </summary>
    internal static void Tamper(ArchiveFixture archive, string sql)
    {
        if (archive.Options.Provider == DatabaseProvider.PostgreSql)
        {
            using var pg = new NpgsqlConnection(new NpgsqlConnectionStringBuilder(archive.Options.ConnectionString) { Pooling = false }.ConnectionString);
            pg.Open();
            using var run = new NpgsqlCommand("SET session_replication_role = replica;\n" + sql, pg);
            run.ExecuteNonQuery();
            return;
        }

        SqliteConnection.ClearAllPools();
        using var connection = new SqliteConnection($"Data Source={archive.Options.FullDatabasePath};Pooling=False");
        connection.Open();
        using var command = connection.CreateCommand();
        command.CommandText = "PRAGMA foreign_keys = OFF;\n" + sql;
        command.ExecuteNonQuery();
    }

    /// <summary>
    /// Drops every trigger on Events, runs the edit, and puts the triggers back exactly as they were (on PostgreSQL:
    /// disables the table's own triggers for the edit, ALTER TABLE … DISABLE TRIGGER USER, and enables them again).
    /// </summary>
    internal static void TamperBehindTriggers(ArchiveFixture archive, string edit)
    {
        if (archive.Options.Provider == DatabaseProvider.PostgreSql)
        {
            using (var pg = new NpgsqlConnection(archive.Options.ConnectionString))
            {
                pg.Open();
                using var count = new NpgsqlCommand("SELECT count(*) FROM pg_trigger WHERE tgrelid = '\"Events\"'::regclass AND NOT tgisinternal", pg);
                Assert.Equal(4L, (long)count.ExecuteScalar()!);
            }

            // In a session of its own, with replication role origin, so the triggers would fire if they were enabled.
            using var connection = new NpgsqlConnection(new NpgsqlConnectionStringBuilder(archive.Options.ConnectionString) { Pooling = false }.ConnectionString);
            connection.Open();
            using var command = new NpgsqlCommand($"ALTER TABLE \"Events\" DISABLE TRIGGER USER;\n{edit}\nALTER TABLE \"Events\" ENABLE TRIGGER USER;", connection);
            command.ExecuteNonQuery();
            return;
        }

        var triggers = new List<(string Name, string Sql)>();
        SqliteConnection.ClearAllPools();
        using (var connection = new SqliteConnection($"Data Source={archive.Options.FullDatabasePath};Pooling=False"))
        {
            connection.Open();
            using var read = connection.CreateCommand();
            read.CommandText = "SELECT name, sql FROM sqlite_master WHERE type = 'trigger' AND tbl_name = 'Events'";
            using var reader = read.ExecuteReader();
            while (reader.Read())
            {
                triggers.Add((reader.GetString(0), reader.GetString(1)));
            }
        }

        Assert.Equal(3, triggers.Count);
        Tamper(archive, string.Concat(triggers.Select(t => $"DROP TRIGGER \"{t.Name}\";\n")) + edit + "\n" + string.Concat(triggers.Select(t => t.Sql + ";\n")));
    }

    private static List<(int Id, string Sha256, long Size)> Captures(ArchiveFixture archive)
    {
        using var db = archive.NewContext();
        return [.. db.Captures.AsNoTracking().OrderBy(c => c.Id).Select(c => new { c.Id, c.Sha256, c.Size }).AsEnumerable().Select(c => (c.Id, c.Sha256, c.Size))];
    }

    private static (long Id, string Sha256) Newest(ArchiveFixture archive)
    {
        using var db = archive.NewContext();
        var e = db.Events.AsNoTracking().OrderByDescending(e => e.Id).First();
        return (e.Id, e.Sha256!);
    }

    private static List<string> Lines(string output, string problem) =>
        [.. output.Split('\n').Where(l => l.StartsWith(problem, StringComparison.Ordinal))];
}
