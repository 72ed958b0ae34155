using System.Buffers.Binary;
using System.Diagnostics;
using System.Text;
using System.Text.Json;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Export;
using TapeVault.Archive.Fixity;
using TapeVault.Archive.Ingest;
using TapeVault.Archive.Jobs;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// Broadcast WAV and FLAC captures through ingest, curation, decode jobs and bags: the file's own metadata is kept and
/// offered, a FLAC file is stored as it came, and a damaged one leaves nothing behind. Outside references: SoX writes
/// the audio, Debian's flac encodes it (RFC 9639), GNU sha256sum hashes the files and checks the bag.
/// </summary>
[Collection(SharedArchiveGroup.Name)]
public sealed class CaptureFileKindsTests(SharedArchive shared)
{
    [Fact]
    public async Task A_BroadcastWav_KeepsItsBextInTheRecordAndTheBag_AndTheCuratorTakesItsSuggestions()
    {
        var (itemId, folder) = await NewItemAsync("BWF-1");
        string wav = Tone(folder, "plain.wav");

        // A bext chunk laid out by EBU Tech 3285's field table: Description 256 bytes at 0, Originator 32 at 256,
        // OriginationDate 10 at 320, Version at 346, CodingHistory from 602.
        var bext = new byte[602 + 40];
        Encoding.ASCII.GetBytes("Pass 2, heads cleaned").CopyTo(bext, 0);
        Encoding.ASCII.GetBytes("A. Volunteer").CopyTo(bext, 256);
        Encoding.ASCII.GetBytes("2026-10-02").CopyTo(bext, 320);
        BinaryPrimitives.WriteUInt16LittleEndian(bext.AsSpan(346), 1);
        Encoding.ASCII.GetBytes("A=ANALOGUE,M=mono,T=Club deck B;\r\n").CopyTo(bext, 602);
        byte[] bytes = InsertBeforeData(File.ReadAllBytes(wav), "bext", bext);

        var result = await IngestAsync(itemId, bytes, "pass2.bwf", "audio/wav");
        Assert.Contains("deck 'Club deck B', operator 'A. Volunteer', date 2026-10-02, notes", result.Message, StringComparison.Ordinal);
        Assert.Equal(string.Empty, result.Capture.Deck);

        await using (var scope = shared.Archive.Services.CreateAsyncScope())
        {
            var capture = await scope.ServiceProvider.GetRequiredService<CuratorActions>().UseEmbeddedDetailsAsync(result.Capture.Id, "curator");
            Assert.Equal("Club deck B", capture.Deck);
            Assert.Equal("A. Volunteer", capture.Operator);
            Assert.Equal(new DateOnly(2026, 10, 2), capture.CapturedOn);
            Assert.Equal("Pass 2, heads cleaned", capture.Notes);
        }

        string bag = Path.Combine(folder, "bag");
        await using (var scope = shared.Archive.Services.CreateAsyncScope())
        {
            await using var sink = new FolderBagSink(bag);
            await scope.ServiceProvider.GetRequiredService<BagExport>().WriteAsync(BagScope.Item(itemId), sink);
        }

        // GNU sha256sum verifies the bag, and item.json carries the chunk's text.
        Assert.Equal(0, ArchiveFixture.Sha256SumCheck(bag, "manifest-sha256.txt").ExitCode);
        using var item = JsonDocument.Parse(File.ReadAllText(Directory.GetFiles(bag, "item.json", SearchOption.AllDirectories).Single()));
        var embedded = item.RootElement.GetProperty("captures")[0].GetProperty("embeddedMetadata");
        Assert.Equal("A=ANALOGUE,M=mono,T=Club deck B;", embedded.GetProperty("bext").GetProperty("codingHistory").GetString());
        Assert.Equal("Pass 2, heads cleaned", embedded.GetProperty("bext").GetProperty("description").GetString());
    }

    [Fact]
    public async Task A_Flac_IsStoredUnchanged_UnderItsOwnSha256_AndDecodes()
    {
        var (itemId, folder) = await NewItemAsync("FLAC-1");
        string flac = Flac(Tone(folder, "tone.wav"));
        byte[] bytes = File.ReadAllBytes(flac);

        var result = await IngestAsync(itemId, bytes, "tone.flac", "audio/flac");

        // sha256sum of the FLAC file is the capture's hash, and the stored object is those very bytes.
        Assert.Equal(Sha256Sum(flac), result.Capture.Sha256);
        Assert.Equal("flac", result.Capture.Container);
        Assert.Equal(bytes, File.ReadAllBytes(shared.Archive.Store.PathOf(result.Capture.Sha256)));

        var handler = shared.Archive.Services.GetServices<IJobHandler>().Single(h => h.Kind == JobKinds.Decode);
        var job = new JobRecord { Kind = JobKinds.Decode, Parameters = new DecodeJobParameters(result.Capture.Id, "kcs-300", null).ToJson(), CreatedBy = "tester" };
        await handler.RunAsync(job, (_, _) => Task.FromResult(false), CancellationToken.None);
        await using var db = shared.Archive.NewContext();
        Assert.Single(await db.Runs.Where(r => r.CaptureId == result.Capture.Id).ToListAsync());
        Assert.False(await db.Events.AnyAsync(e => e.ObjectId == result.Capture.Sha256 && e.EventType == EventTypes.FixityCheck));
    }

    [Theory]
    [InlineData("md5", "MD5")]
    [InlineData("crc16", "CRC-16")]
    [InlineData("cut", "cut off")]
    public async Task A_DamagedFlac_IsRefused_AndNothingIsStored(string damage, string expected)
    {
        var (itemId, folder) = await NewItemAsync($"FLAC-BAD-{damage}");
        byte[] bytes = File.ReadAllBytes(Flac(Tone(folder, "tone.wav")));
        switch (damage)
        {
            case "md5":
                bytes[8 + 18] ^= 0x01; // STREAMINFO's MD5 (RFC 9639, section 8.2)
                break;
            case "crc16":
                bytes[^1] ^= 0x01; // the last frame's CRC-16 is the file's last two bytes (RFC 9639, section 9.3)
                break;
            default:
                bytes = bytes[..(bytes.Length - 50)];
                break;
        }

        await using var db = shared.Archive.NewContext();
        int objects = await db.Objects.CountAsync();
        var error = await Assert.ThrowsAsync<ArchiveInputException>(() => IngestAsync(itemId, bytes, "bad.flac", "audio/flac"));
        Assert.Contains(expected, error.Message, StringComparison.Ordinal);
        Assert.Equal(objects, await db.Objects.CountAsync());
        Assert.False(await db.Captures.AnyAsync(c => c.ItemId == itemId));
        Assert.Empty(Directory.EnumerateFiles(shared.Archive.Store.TempFolder));
    }

    [Fact]
    public async Task A_Decode_RecordsAFixityFinding_WhenAStoredFlacsAudioNoLongerMatchesItsMd5()
    {
        // Ingest refuses such a file, so put one in the store the way an older archive might hold it.
        var (itemId, folder) = await NewItemAsync("FLAC-OLD");
        byte[] bytes = File.ReadAllBytes(Flac(Tone(folder, "tone.wav")));
        bytes[8 + 18] ^= 0x01;
        Capture capture;
        using (var staged = await shared.Archive.Store.StageAsync(new MemoryStream(bytes), long.MaxValue))
        {
            staged.Commit();
            await using var db = shared.Archive.NewContext();
            db.Objects.Add(new StoredObject { Sha256 = staged.Sha256, Size = staged.Size, Kind = ObjectKind.Original, StoredUtc = DateTimeOffset.UtcNow });
            capture = new Capture
            {
                ItemId = itemId, Sha256 = staged.Sha256, OriginalFileName = "old.flac", Size = staged.Size, SampleRate = 44_100, Channels = 1,
                BitsPerSample = 16, Encoding = "pcm", Container = "flac", DurationSeconds = 0.5, IngestedUtc = DateTimeOffset.UtcNow, IngestedBy = "tester",
            };
            db.Captures.Add(capture);
            await db.SaveChangesAsync();
        }

        var handler = shared.Archive.Services.GetServices<IJobHandler>().Single(h => h.Kind == JobKinds.Decode);
        var job = new JobRecord { Kind = JobKinds.Decode, Parameters = new DecodeJobParameters(capture.Id, "kcs-300", null).ToJson(), CreatedBy = "tester" };
        await handler.RunAsync(job, (_, _) => Task.FromResult(false), CancellationToken.None);

        await using var check = shared.Archive.NewContext();
        var finding = await check.Events.SingleAsync(e => e.ObjectId == capture.Sha256 && e.EventType == EventTypes.FixityCheck);
        Assert.Equal(FixityAudit.Mismatch, finding.Outcome);
        Assert.Contains("MD5", finding.Detail, StringComparison.Ordinal);
        Assert.Single(await check.Runs.Where(r => r.CaptureId == capture.Id).ToListAsync());
    }

    private async Task<(int ItemId, string Folder)> NewItemAsync(string accession)
    {
        await using var scope = shared.Archive.Services.CreateAsyncScope();
        var actions = scope.ServiceProvider.GetRequiredService<CuratorActions>();
        var collection = await actions.CreateCollectionAsync($"Files {accession}", null, "tester");
        var item = await actions.CreateItemAsync(collection.Id, accession, "File kinds", null, null, "A", "tester");
        return (item.Id, Directory.CreateDirectory(Path.Combine(shared.Archive.Root, "kinds-" + accession)).FullName);
    }

    private async Task<IngestResult> IngestAsync(int itemId, byte[] bytes, string name, string type)
    {
        await using var scope = shared.Archive.Services.CreateAsyncScope();
        using var body = new MemoryStream(bytes);
        return await scope.ServiceProvider.GetRequiredService<CaptureIngest>().IngestAsync(body, new IngestRequest { ItemId = itemId, FileName = name, ContentType = type, Agent = "tester" });
    }

    private static string Tone(string folder, string name)
    {
        string path = Path.Combine(folder, name);
        Run("/usr/bin/sox", "-n", "-r", "44100", "-b", "16", "-c", "1", path, "synth", "0.5", "sine", "1200", "vol", "0.5");
        return path;
    }

    private static string Flac(string wav)
    {
        string flac = Path.ChangeExtension(wav, ".flac");
        Run("/usr/bin/flac", "--silent", "--force", "-5", "-o", flac, wav);
        return flac;
    }

    private static string Sha256Sum(string path) => Run("/usr/bin/sha256sum", "-b", path).Split(' ', 2)[0].TrimStart('\\');

    private static string Run(string program, params string[] arguments)
    {
        Assert.True(File.Exists(program), $"{program} is missing: run scripts/test, which installs sox and flac.");
        var start = new ProcessStartInfo(program) { RedirectStandardOutput = true, RedirectStandardError = true };
        foreach (string argument in arguments)
        {
            start.ArgumentList.Add(argument);
        }

        using var process = Process.Start(start)!;
        string output = process.StandardOutput.ReadToEnd();
        string error = process.StandardError.ReadToEnd();
        process.WaitForExit();
        Assert.True(process.ExitCode == 0, $"{program} failed: {error}");
        return output;
    }

    private static byte[] InsertBeforeData(byte[] wav, string id, byte[] body)
    {
        int at = 12;
        while (Encoding.ASCII.GetString(wav, at, 4) != "data")
        {
            at += 8 + BinaryPrimitives.ReadInt32LittleEndian(wav.AsSpan(at + 4));
        }

        var chunk = new byte[8 + body.Length];
        Encoding.ASCII.GetBytes(id).CopyTo(chunk, 0);
        BinaryPrimitives.WriteInt32LittleEndian(chunk.AsSpan(4), body.Length);
        body.CopyTo(chunk, 8);
        byte[] result = [.. wav[..at], .. chunk, .. wav[at..]];
        BinaryPrimitives.WriteUInt32LittleEndian(result.AsSpan(4), (uint)(result.Length - 8));
        return result;
    }
}
