using Microsoft.Extensions.DependencyInjection;
using Quartz;

namespace TapeVault.Archive.Jobs;

/// <summary>
/// The job engine: Quartz.NET with its persistent ADO.NET job store. The archive's job table stays the user's record
/// (progress, cancel, outcome); Quartz decides when and on which node a job runs, and hands a job back for recovery
/// when the node running it stops or dies. SQLite keeps the schedule in a file beside the archive's database for one
/// machine (Quartz refuses to cluster on SQLite); PostgreSQL keeps it clustered for several.
/// </summary>
public static class JobEngine
{
    /// <summary>The scheduler's name: every node of one archive shares it (it is the key of the schedule's rows).</summary>
    public const string SchedulerName = "TapeVault";

    public const string ArchiveGroup = "archive";
    public const string ScheduleGroup = "schedule";
    internal const string JobIdKey = "jobId";
    internal const string ResumeKey = "resume";

    /// <summary>Decodes first: a merge waits for its tape's decodes, so they should never queue behind it.</summary>
    private const int DecodePriority = 10;
    private const int OtherPriority = 5;

    public static JobKey KeyOf(int jobId) => new($"job-{jobId}", ArchiveGroup);

    public static readonly JobKey FixityAuditKey = new("fixity-audit", ScheduleGroup);
    public static readonly JobKey SweepKey = new("sweep", ScheduleGroup);

    internal static int PriorityOf(string kind) => kind == JobKinds.Decode ? DecodePriority : OtherPriority;

    /// <summary>
    /// The job engine and its schedule. With <paramref name="runJobs"/> false the node queues jobs for others (its
    /// scheduler is made but never started), which is what a web app does when workers run the jobs.
    /// </summary>
    public static IServiceCollection AddTapeVaultJobs(this IServiceCollection services, ArchiveOptions archive, JobsOptions jobs, FixityOptions fixity, bool runJobs)
    {
        ArgumentNullException.ThrowIfNull(archive);
        ArgumentNullException.ThrowIfNull(jobs);
        ArgumentNullException.ThrowIfNull(fixity);
        jobs.Validate();
        FixitySchedule.Validate(fixity);
        services.AddSingleton(jobs);
        services.AddSingleton(fixity);
        services.AddSingleton(new JobEngineRole(runJobs));
        services.AddSingleton<JobDispatcher>();
        services.AddTransient<ArchiveJobExecution>();
        services.AddTransient<FixityScheduleJob>();
        services.AddTransient<JobSweepJob>();
        services.AddQuartz(quartz =>
        {
            quartz.ConfigureScheduler(scheduler =>
            {
                scheduler.InstanceName = SchedulerName;
                scheduler.IdleWaitTime = TimeSpan.FromSeconds(jobs.PollSeconds);

                // A stop asks the running jobs to stop; a job that stops so is handed back to be run again
                // (RecoverFiringsCancelledByShutdown below): a restart neither loses nor repeats it.
                scheduler.ShutdownJobInterruption = ShutdownJobInterruption.Always;
            });
            quartz.UseDefaultThreadPool(Math.Max(1, archive.Workers));
            quartz.UsePersistentStore(store =>
            {
                store.ConfigureStore(options => options.RecoverFiringsCancelledByShutdown = true);

                // Quartz's own schema (its embedded create script, shipped in docs/schedule-schema/ too) is made when missing.
                store.ProvisionSchema();
                if (jobs.Store == ScheduleStoreKind.PostgreSql)
                {
                    store.UsePostgres(jobs.ConnectionString);
                    store.UseClustering(cluster =>
                    {
                        cluster.CheckinInterval = TimeSpan.FromSeconds(jobs.CheckinSeconds);
                        cluster.CheckinMisfireThreshold = TimeSpan.FromSeconds(jobs.CheckinSeconds * 2);
                    });
                }
                else
                {
                    string path = jobs.FullSchedulePath(archive);
                    Directory.CreateDirectory(Path.GetDirectoryName(path)!);
                    store.UseSqlite($"Data Source={path};Pooling=False");
                }
            });
        });
        services.AddHostedService<JobSchedules>();
        services.AddQuartzHostedService(hosted =>
        {
            hosted.AutoStart = runJobs;
            hosted.WaitForJobsToComplete = true;
        });
        return services;
    }
}

/// <summary>Whether this node runs jobs (a web app with workers elsewhere only queues them).</summary>
public sealed record JobEngineRole(bool RunsJobs);
