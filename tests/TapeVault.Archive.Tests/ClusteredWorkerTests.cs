using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using Npgsql;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Ingest;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Tests.PostgreSql;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// Two tapevault worker processes on one clustered PostgreSQL schedule (Quartz.NET clusters only on a real database;
/// the temporary PostgreSQL 15 cluster of the "postgresql" collection): one is SIGKILLed mid-decode, the other takes
/// its job over.
/// </summary>
[Collection(PostgreSqlGroup.Name)]
public sealed class ClusteredWorkerTests(PostgreSqlServer server)
{
    [Fact]
    public async Task AWorkerKilledMidDecode_HasItsJobTakenOverByTheOtherLiveWorker_ExactlyOnce()
    {
        string schedule = await server.CreateDatabaseAsync();
        await RunAsync(new NpgsqlConnectionStringBuilder(schedule) { Pooling = false }.ConnectionString);
    }

    private static async Task RunAsync(string schedule)
    {
        await using var archive = await JobArchive.CreateAsync();
        var jobs = new JobsOptions { Store = ScheduleStoreKind.PostgreSql, ConnectionString = schedule, CheckinSeconds = 2 };
        var captures = new int[2];
        var ids = new int[2];
        using (var pages = archive.PagesNode(jobs))
        {
            await using var scope = pages.CreateAsyncScope();
            var actions = scope.ServiceProvider.GetRequiredService<CuratorActions>();
            int collection = (await actions.CreateCollectionAsync("Cluster shelf", null, "tester")).Id;
            int item = (await actions.CreateItemAsync(collection, "CLUSTER-1", "Shared tape", null, null, "A", "tester")).Id;
            for (int i = 0; i < 2; i++)
            {
                // Thirty minutes of noise each, different bytes: long enough that both decodes run when one node dies.
                await using var wav = WorkerCrashTests.NoiseWav(frames: 22_050 * 1800, seed: 21 + i);
                captures[i] = (await scope.ServiceProvider.GetRequiredService<CaptureIngest>().IngestAsync(
                    wav, new IngestRequest { ItemId = item, FileName = $"pass{i + 1}.wav", ContentType = "audio/wav", Agent = "tester" })).Capture.Id;
                ids[i] = (await actions.QueueDecodeAsync(captures[i], "orrin-80", null, null, "tester")).Id;
            }

            Assert.Equal(2, await pages.GetRequiredService<JobDispatcher>().DispatchWaitingAsync());
        }

        var environment = new Dictionary<string, string>
        {
            ["TapeVault__Jobs__Store"] = "PostgreSql",
            ["TapeVault__Jobs__ConnectionString"] = schedule,
            ["TapeVault__Jobs__CheckinSeconds"] = "2",
        };

        // One job each: with one worker thread per node, two running jobs are on two nodes.
        using var doomed = WorkerCrashTests.StartWorker(archive, environment);
        using var survivor = WorkerCrashTests.StartWorker(archive, environment, "--until-idle");
        try
        {
            foreach (int id in ids)
            {
                await archive.WaitAsync(id, j => j.State == JobState.Running && j.Progress > 0, "running with progress", seconds: 180);
            }
        }
        finally
        {
            doomed.Kill(entireProcessTree: true);
            await doomed.WaitForExitAsync();
        }

        var output = survivor.StandardOutput.ReadToEndAsync();
        var error = survivor.StandardError.ReadToEndAsync();
        using (var cap = new CancellationTokenSource(TimeSpan.FromMinutes(8)))
        {
            await survivor.WaitForExitAsync(cap.Token);
        }

        Assert.True(survivor.ExitCode == 0, $"The surviving worker exited {survivor.ExitCode}: {await error}{await output}");
        var ends = new List<JobRecord>();
        foreach (int id in ids)
        {
            ends.Add(await archive.JobAsync(id));
        }

        Assert.All(ends, j => Assert.True(j.State == JobState.Done, $"Job {j.Id} ended {j.State}: {j.Error}"));

        // The job the dead node held was run again once (its second attempt), the other once; one run per capture.
        Assert.Equal([1, 2], ends.Select(j => j.Attempts).Order().ToArray());
        await using var db = archive.NewContext();
        foreach (int capture in captures)
        {
            Assert.Equal(1, await db.Runs.CountAsync(r => r.CaptureId == capture));
        }
    }
}
