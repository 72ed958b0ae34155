using System.Buffers.Binary;
using System.Diagnostics;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Ingest;
using TapeVault.Tests.Shared;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// tapevault worker as a real process: SIGKILLed in the middle of a decode, the job is recovered by the next worker
/// started on the same archive and decoded exactly once. On SQLite this is recovery across a restart: Quartz.NET
/// refuses to cluster on SQLite, so no second worker can share the schedule while the first lives.
/// </summary>
public sealed class WorkerCrashTests
{
    [Fact]
    public async Task AWorkerKilledMidDecode_HasItsJobRecoveredByTheNextWorker_ExactlyOnce()
    {
        await using var archive = await JobArchive.CreateAsync();
        int captureId, jobId;
        using (var pages = archive.PagesNode())
        {
            await using var scope = pages.CreateAsyncScope();
            var actions = scope.ServiceProvider.GetRequiredService<CuratorActions>();
            int collection = (await actions.CreateCollectionAsync("Crash shelf", null, "tester")).Id;
            int item = (await actions.CreateItemAsync(collection, "KILL-1", "Killed tape", null, null, "A", "tester")).Id;

            // Thirty minutes of noise: long enough that the decode is still going when the worker is killed.
            await using (var wav = NoiseWav(frames: 22_050 * 1800, seed: 11))
            {
                captureId = (await scope.ServiceProvider.GetRequiredService<CaptureIngest>().IngestAsync(
                    wav, new IngestRequest { ItemId = item, FileName = "long.wav", ContentType = "audio/wav", Agent = "tester" })).Capture.Id;
            }

            jobId = (await actions.QueueDecodeAsync(captureId, "orrin-80", null, null, "tester")).Id;
            Assert.Equal(1, await pages.GetRequiredService<Jobs.JobDispatcher>().DispatchWaitingAsync());
        }

        using (var first = StartWorker(archive))
        {
            try
            {
                await archive.WaitAsync(jobId, j => j.State == JobState.Running && j.Progress > 0, "running with progress", seconds: 180);
            }
            finally
            {
                first.Kill(entireProcessTree: true);
                await first.WaitForExitAsync();
            }
        }

        var cut = await archive.JobAsync(jobId);
        Assert.Equal(JobState.Running, cut.State);
        Assert.Equal(1, cut.Attempts);

        using (var second = StartWorker(archive, "--until-idle"))
        {
            var output = second.StandardOutput.ReadToEndAsync();
            var error = second.StandardError.ReadToEndAsync();
            using var cap = new CancellationTokenSource(TimeSpan.FromMinutes(5));
            await second.WaitForExitAsync(cap.Token);
            Assert.True(second.ExitCode == 0, $"The second worker exited {second.ExitCode}: {await error}{await output}");
        }

        var done = await archive.JobAsync(jobId);
        Assert.True(done.State == JobState.Done, $"The job ended {done.State}: {done.Error}");
        Assert.Equal(2, done.Attempts);
        await using var db = archive.NewContext();
        Assert.Equal(1, await db.Runs.CountAsync(r => r.CaptureId == captureId));
        Assert.Equal(0, await db.Jobs.CountAsync(j => j.State == JobState.Queued || j.State == JobState.Running));
    }

    internal static Process StartWorker(JobArchive archive, params string[] more) => StartWorker(archive, new Dictionary<string, string>(), more);

    internal static Process StartWorker(JobArchive archive, IReadOnlyDictionary<string, string> environment, params string[] more) =>
        CliProcess.StartWorker(archive.Root, archive.CliArchiveArguments(), environment, more);

    /// <summary>A 16-bit mono PCM WAV of uniform noise (RIFF/WAVE layout as Microsoft's multimedia spec gives it).</summary>
    internal static MemoryStream NoiseWav(int frames, int seed)
    {
        var bytes = new byte[44 + (frames * 2)];
        var span = bytes.AsSpan();
        "RIFF"u8.CopyTo(span);
        BinaryPrimitives.WriteInt32LittleEndian(span[4..], bytes.Length - 8);
        "WAVEfmt "u8.CopyTo(span[8..]);
        BinaryPrimitives.WriteInt32LittleEndian(span[16..], 16);
        BinaryPrimitives.WriteInt16LittleEndian(span[20..], 1);
        BinaryPrimitives.WriteInt16LittleEndian(span[22..], 1);
        BinaryPrimitives.WriteInt32LittleEndian(span[24..], 22_050);
        BinaryPrimitives.WriteInt32LittleEndian(span[28..], 22_050 * 2);
        BinaryPrimitives.WriteInt16LittleEndian(span[32..], 2);
        BinaryPrimitives.WriteInt16LittleEndian(span[34..], 16);
        "data"u8.CopyTo(span[36..]);
        BinaryPrimitives.WriteInt32LittleEndian(span[40..], frames * 2);
        var random = new Random(seed);
        for (int i = 0; i < frames; i++)
        {
            BinaryPrimitives.WriteInt16LittleEndian(span[(44 + (2 * i))..], (short)random.Next(-8000, 8000));
        }

        return new MemoryStream(bytes, writable: false);
    }
}
