using System.Buffers.Binary;
using System.Net;
using System.Security.Cryptography;
using System.Text.Json;
using Microsoft.Data.Sqlite;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.EndToEnd.Tests.Crashes;

/// <summary>
/// Kills the app with SIGKILL during an upload, a decode and a merge, starts it again on the same folder, and checks
/// the promise to users: the database is sound, nothing is half-stored, every stored file still has its SHA-256, and
/// every job ends done or failed with a reason.
/// </summary>
public sealed class CrashRecoveryTests
{
    [Fact]
    public async Task KilledDuringUploadDecodeAndMergeTheArchiveComesBackWhole()
    {
        var root = Directory.CreateTempSubdirectory("tapevault-crash-").FullName;
        try
        {
            string password;
            int itemId;
            await using (var app = await AppProcess.StartAsync(root))
            {
                password = app.CuratorPassword;
                using var api = await ApiSession.SignInAsync(app.Address, "curator", password);
                var collection = await api.PostJsonAsync("/api/collections", new { name = "Crash shelf" });
                itemId = (await api.PostJsonAsync($"/api/collections/{collection.GetProperty("id").GetInt32()}/items", new { accessionNumber = "CRASH-1", title = "Crash tape" })).GetProperty("id").GetInt32();

                // A small real capture that is decoded and stored before any kill: it must survive all of them.
                var good = Path.Combine(root, "good.wav");
                CaptureSynthesizer.Write(good, ProfileCatalog.BuiltIn.Get("orrin-80"), [new TapeFile("KEEP", new byte[200])], new ChannelDamage { SnrDb = 30, Seed = 3 });
                var stored = await api.UploadAsync(itemId, "good.wav", new ByteArrayContent(await File.ReadAllBytesAsync(good)));
                await api.PostJsonAsync($"/api/captures/{stored.GetProperty("capture").GetProperty("id").GetInt32()}/decode", new { profile = "orrin-80" });
                await api.WaitForJobsAsync(TimeSpan.FromSeconds(60));

                // 1. Kill in the middle of an upload: the body is streaming and half of it is in the store's temporary folder.
                var upload = api.UploadAsync(itemId, "cut.wav", new SlowWavContent(seconds: 600));
                await WaitUntilAsync(() => Directory.EnumerateFiles(Path.Combine(root, "store", "tmp"), "*.part").Any(f => new FileInfo(f).Length > 4_000_000), "a half-written upload");
                await app.KillAsync();
                await Assert.ThrowsAnyAsync<Exception>(() => upload);
            }

            await AssertWholeAsync(root, password, expectCaptures: 1);

            // 2. Kill while a decode runs (a ten-minute capture keeps the decoder busy for a while).
            await using (var app = await AppProcess.StartAsync(root))
            {
                using var api = await ApiSession.SignInAsync(app.Address, "curator", password);
                var path = Path.Combine(root, "long.wav");
                await using (var file = File.Create(path))
                {
                    await new SlowWavContent(seconds: 600, delay: false).CopyToAsync(file);
                }

                var capture = await api.UploadAsync(itemId, "long.wav", new StreamContent(File.OpenRead(path)));
                int captureId = capture.GetProperty("capture").GetProperty("id").GetInt32();
                var job = await api.PostJsonAsync($"/api/captures/{captureId}/decode", new { profile = "orrin-80" });
                int jobId = job.GetProperty("id").GetInt32();
                await WaitUntilAsync(async () => (await api.GetJsonAsync($"/api/jobs/{jobId}")).GetProperty("state").GetString() == "running", "the decode to start");
                await app.KillAsync();
            }

            var afterDecode = await AssertWholeAsync(root, password, expectCaptures: 2);
            Assert.Contains(afterDecode, j => j.GetProperty("kind").GetString() == "decode" && j.GetProperty("attempts").GetInt32() >= 2);

            // 3. Kill just after a merge is queued: wherever it was, it ends done or failed with a reason, and an image row always has its file.
            await using (var app = await AppProcess.StartAsync(root))
            {
                using var api = await ApiSession.SignInAsync(app.Address, "curator", password);
                await api.PostJsonAsync($"/api/items/{itemId}/merge");
                await Task.Delay(150);
                await app.KillAsync();
            }

            await AssertWholeAsync(root, password, expectCaptures: 2);
        }
        finally
        {
            SqliteConnection.ClearAllPools();
            Directory.Delete(root, recursive: true);
        }
    }

    /// <summary>Starts the app on the folder again, lets its jobs finish, and checks everything stored.</summary>
    private static async Task<List<JsonElement>> AssertWholeAsync(string root, string password, int expectCaptures)
    {
        List<JsonElement> jobs;
        await using (var app = await AppProcess.StartAsync(root))
        {
            using var api = await ApiSession.SignInAsync(app.Address, "curator", password);
            jobs = await api.WaitForJobsAsync(TimeSpan.FromSeconds(120));
        }

        Assert.All(jobs, j =>
        {
            var state = j.GetProperty("state").GetString();
            Assert.True(state is "done" or "failed" or "cancelled", $"job {j}");
            if (state == "failed")
            {
                Assert.False(string.IsNullOrWhiteSpace(j.GetProperty("error").GetString()), $"failed without a reason: {j}");
            }
        });

        using var db = new SqliteConnection($"Data Source={Path.Combine(root, "archive.db")}");
        db.Open();
        Assert.Equal("ok", Scalar(db, "PRAGMA integrity_check"));
        Assert.Equal(expectCaptures, Convert.ToInt32(Scalar(db, "SELECT COUNT(*) FROM Captures"), System.Globalization.CultureInfo.InvariantCulture));

        // Rows and files agree one to one, and every file still hashes to its name (SHA-256 by .NET, FIPS 180-4).
        var rows = new HashSet<string>(StringComparer.Ordinal);
        using (var command = db.CreateCommand())
        {
            command.CommandText = "SELECT Sha256 FROM Objects";
            using var reader = command.ExecuteReader();
            while (reader.Read())
            {
                rows.Add(reader.GetString(0));
            }
        }

        var files = Directory.EnumerateFiles(Path.Combine(root, "store", "objects"), "*", SearchOption.AllDirectories).ToList();
        Assert.Equal(rows, files.Select(f => Path.GetFileName(f)!).ToHashSet(StringComparer.Ordinal));
        foreach (var file in files)
        {
            Assert.Equal(Path.GetFileName(file), Convert.ToHexStringLower(SHA256.HashData(File.ReadAllBytes(file))));
        }

        Assert.Empty(Directory.EnumerateFiles(Path.Combine(root, "store", "tmp"), "*.part"));
        Assert.Equal(0L, (long)Scalar(db, "SELECT COUNT(*) FROM Images WHERE Sha256 NOT IN (SELECT Sha256 FROM Objects)")!);
        return jobs;
    }

    private static object? Scalar(SqliteConnection db, string sql)
    {
        using var command = db.CreateCommand();
        command.CommandText = sql;
        return command.ExecuteScalar();
    }

    private static Task WaitUntilAsync(Func<bool> condition, string what) => WaitUntilAsync(() => Task.FromResult(condition()), what);

    private static async Task WaitUntilAsync(Func<Task<bool>> condition, string what)
    {
        var deadline = DateTime.UtcNow.AddSeconds(60);
        while (!await condition())
        {
            if (DateTime.UtcNow > deadline)
            {
                throw new TimeoutException($"Waited 60 s for {what}.");
            }

            await Task.Delay(20);
        }
    }

    /// <summary>
    /// A mono 16-bit 44.1 kHz WAV of a 1 kHz square wave, written in pieces (slowly when <c>delay</c>, so that a kill
    /// lands mid-upload). The 44-byte header follows the canonical RIFF/WAVE layout (common practice).
    /// </summary>
    private sealed class SlowWavContent(int seconds, bool delay = true) : HttpContent
    {
        private const int Rate = 44_100;

        protected override async Task SerializeToStreamAsync(Stream stream, TransportContext? context)
        {
            int dataBytes = seconds * Rate * 2;
            var header = new byte[44];
            "RIFF"u8.CopyTo(header);
            BinaryPrimitives.WriteInt32LittleEndian(header.AsSpan(4), 36 + dataBytes);
            "WAVEfmt "u8.CopyTo(header.AsSpan(8));
            BinaryPrimitives.WriteInt32LittleEndian(header.AsSpan(16), 16);
            BinaryPrimitives.WriteInt16LittleEndian(header.AsSpan(20), 1);
            BinaryPrimitives.WriteInt16LittleEndian(header.AsSpan(22), 1);
            BinaryPrimitives.WriteInt32LittleEndian(header.AsSpan(24), Rate);
            BinaryPrimitives.WriteInt32LittleEndian(header.AsSpan(28), Rate * 2);
            BinaryPrimitives.WriteInt16LittleEndian(header.AsSpan(32), 2);
            BinaryPrimitives.WriteInt16LittleEndian(header.AsSpan(34), 16);
            "data"u8.CopyTo(header.AsSpan(36));
            BinaryPrimitives.WriteInt32LittleEndian(header.AsSpan(40), dataBytes);
            await stream.WriteAsync(header);
            var second = new byte[Rate * 2];
            for (int i = 0; i < Rate; i++)
            {
                BinaryPrimitives.WriteInt16LittleEndian(second.AsSpan(i * 2), (short)((i / 22) % 2 == 0 ? 12_000 : -12_000));
            }

            for (int s = 0; s < seconds; s++)
            {
                await stream.WriteAsync(second);
                if (delay && s % 20 == 19)
                {
                    await Task.Delay(50);
                }
            }
        }

        protected override bool TryComputeLength(out long length)
        {
            length = 44 + ((long)seconds * Rate * 2);
            return true;
        }
    }
}
