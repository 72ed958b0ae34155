using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Hosting;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Tests.PostgreSql;
using TapeVault.Core.Formats;

namespace TapeVault.Archive.Tests;

/// <summary>
/// An empty, migrated archive in a temporary folder (on the test run's provider: an SQLite file there, or a fresh
/// PostgreSQL database, <see cref="TestDatabase"/>), and job-engine nodes (worker hosts) over it. The schedule stays
/// in its SQLite file beside the archive's database either way: one machine.
/// </summary>
public sealed class JobArchive : IAsyncDisposable
{
    private JobArchive(string root, string? postgreSql)
    {
        Root = root;
        PostgreSql = postgreSql;
    }

    public string Root { get; }

    /// <summary>The archive's PostgreSQL database on a PostgreSQL run, else null.</summary>
    public string? PostgreSql { get; }

    public string DatabasePath => Path.Combine(Root, "archive.db");

    public string StorePath => Path.Combine(Root, "store");

    public string SchedulePath => Path.Combine(Root, "archive.schedule.db");

    public static async Task<JobArchive> CreateAsync()
    {
        var archive = new JobArchive(Directory.CreateTempSubdirectory("tapevault-jobs-test-").FullName, TestDatabase.IsPostgreSql ? await TestDatabase.CreateAsync() : null);
        await using var db = archive.NewContext();
        await ArchiveDatabase.MigrateAsync(db);
        return archive;
    }

    public ArchiveOptions Options(int workers = 1, int maxAttempts = 3) => new()
    {
        BaseFolder = Root,
        DatabasePath = DatabasePath,
        StorePath = StorePath,
        Workers = workers,
        MaxAttempts = maxAttempts,
        Provider = PostgreSql is null ? DatabaseProvider.Sqlite : DatabaseProvider.PostgreSql,
        ConnectionString = PostgreSql ?? string.Empty,
    };

    public ArchiveDbContext NewContext() => ArchiveDatabase.Open(Options());

    /// <summary>The arguments that point the command line at this archive's database and store.</summary>
    public string[] CliArchiveArguments() => PostgreSql is null
        ? ["--database", DatabasePath, "--store", StorePath]
        : ["--connection", PostgreSql, "--store", StorePath];

    /// <summary>A worker node over this archive; <paramref name="handlers"/> replace the built-in job handlers when given.</summary>
    public IHost Worker(IEnumerable<IJobHandler>? handlers = null, int workers = 1, int maxAttempts = 3, string fixitySchedule = "", Action<IServiceCollection>? more = null) =>
        JobWorker.Build(Settings(fixitySchedule), Options(workers, maxAttempts), services =>
        {
            if (handlers is not null)
            {
                services.RemoveAll<IJobHandler>();
                foreach (var handler in handlers)
                {
                    services.AddSingleton(handler);
                }
            }

            more?.Invoke(services);
        });

    /// <summary>A node that serves pages only: it queues jobs into the schedule and runs none (its scheduler never starts).</summary>
    public ServiceProvider PagesNode(JobsOptions? jobs = null)
    {
        var services = new ServiceCollection();
        services.AddLogging();
        var options = Options();
        services.AddTapeVaultArchive(options, ProfileCatalog.BuiltIn);
        services.AddSingleton<IHostApplicationLifetime, NoLifetime>();
        services.AddTapeVaultJobs(options, jobs ?? new JobsOptions(), new FixityOptions { Schedule = string.Empty }, runJobs: false);
        return services.BuildServiceProvider();
    }

    public static IConfiguration Settings(string fixitySchedule = "") => new ConfigurationBuilder().AddInMemoryCollection(new Dictionary<string, string?>
    {
        ["TapeVault:Fixity:Schedule"] = fixitySchedule,
        ["TapeVault:Jobs:PollSeconds"] = "1",
        ["Logging:LogLevel:Default"] = "Warning",
        ["Logging:LogLevel:Quartz"] = "Warning",
    }).Build();

    public async Task<int> EnqueueAsync(string kind, string parameters = "{}", int? itemId = null)
    {
        await using var db = NewContext();
        var job = JobQueue.Enqueue(db, kind, parameters, "tester", itemId);
        await db.SaveChangesAsync();
        return job.Id;
    }

    public async Task<JobRecord> JobAsync(int id)
    {
        await using var db = NewContext();
        return await db.Jobs.AsNoTracking().SingleAsync(j => j.Id == id);
    }

    /// <summary>Polls the job's row until <paramref name="until"/> holds (a cap, not a timing claim: the test fails with the row's state if it never does).</summary>
    public async Task<JobRecord> WaitAsync(int id, Func<JobRecord, bool> until, string what, int seconds = 120)
    {
        var deadline = DateTime.UtcNow.AddSeconds(seconds);
        while (true)
        {
            var job = await JobAsync(id);
            if (until(job))
            {
                return job;
            }

            if (DateTime.UtcNow > deadline)
            {
                throw new Xunit.Sdk.XunitException($"Job {id} never got to {what}: it is {job.State}, attempt {job.Attempts}, '{job.ProgressText}', error '{job.Error}'.");
            }

            await Task.Delay(50);
        }
    }

    public async ValueTask DisposeAsync()
    {
        if (PostgreSql is not null)
        {
            TestDatabase.Drop(PostgreSql);
        }

        // A node's last journal file may still be going away as the test ends: try the clean-up a few times.
        for (int attempt = 1; ; attempt++)
        {
            Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
            try
            {
                Directory.Delete(Root, recursive: true);
                return;
            }
            catch (IOException) when (attempt < 10)
            {
                await Task.Delay(200);
            }
        }
    }

    private sealed class NoLifetime : IHostApplicationLifetime
    {
        public CancellationToken ApplicationStarted => CancellationToken.None;

        public CancellationToken ApplicationStopping => CancellationToken.None;

        public CancellationToken ApplicationStopped => CancellationToken.None;

        public void StopApplication()
        {
        }
    }
}

/// <summary>Counts the times it was run; with a gate, reports progress and then waits for the gate (or a cancel).</summary>
public sealed class CountingHandler(string kind, TaskCompletionSource? gate = null) : IJobHandler
{
    private int runs;

    public string Kind => kind;

    public int Runs => Volatile.Read(ref runs);

    public async Task<JobOutcome> RunAsync(JobRecord job, JobProgress progress, CancellationToken cancellation)
    {
        Interlocked.Increment(ref runs);
        if (gate is not null)
        {
            await progress(0.25, "Holding.");
            await gate.Task.WaitAsync(cancellation);
        }

        return new JobOutcome(null, $"Done on run {Runs}.");
    }
}

/// <summary>Fails with an exception that is no job failure (as a bug or a disk fault would).</summary>
public sealed class ThrowingHandler : IJobHandler
{
    public const string KindName = "test-throwing";

    public string Kind => KindName;

    public Task<JobOutcome> RunAsync(JobRecord job, JobProgress progress, CancellationToken cancellation) =>
        throw new NotSupportedException("the disk said no");
}
