using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.FileProviders;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using TapeVault.Core.Formats;

namespace TapeVault.Archive.Jobs;

/// <summary>
/// The archive as a decode worker: the job engine and the archive's services, no pages. Started by
/// <c>tapevault worker</c> and by the web app with <c>TapeVault:Web:Role = Worker</c>; it reads the same settings as
/// the web app.
/// </summary>
public static partial class JobWorker
{
    /// <summary>The web app's settings sources: appsettings.json beside the program, then the clone's (or the current folder's), environment variables, the command line.</summary>
    public static IConfigurationRoot ReadSettings(string[] args, string? repository)
    {
        return new ConfigurationBuilder()
            .Add(new Microsoft.Extensions.Configuration.Json.JsonConfigurationSource
            {
                Path = "appsettings.json",
                Optional = true,
                FileProvider = new PhysicalFileProvider(AppContext.BaseDirectory),
            })
            .AddJsonFile(Path.Combine(repository ?? Directory.GetCurrentDirectory(), "appsettings.json"), optional: true)
            .AddEnvironmentVariables()
            .AddCommandLine(args ?? [])
            .Build();
    }

    /// <summary>
    /// A worker host over the archive <paramref name="archive"/> names, with the jobs and fixity settings of
    /// <paramref name="settings"/>. <paramref name="configure"/> may add or replace services (tests give their own handlers).
    /// </summary>
    public static IHost Build(IConfiguration settings, ArchiveOptions archive, Action<IServiceCollection>? configure = null)
    {
        ArgumentNullException.ThrowIfNull(settings);
        ArgumentNullException.ThrowIfNull(archive);
        var builder = Host.CreateApplicationBuilder(new HostApplicationBuilderSettings { DisableDefaults = true, ContentRootPath = archive.BaseFolder });
        builder.Configuration.AddConfiguration(settings);
        builder.Logging.AddConfiguration(settings.GetSection("Logging"));
        builder.Logging.AddSimpleConsole(console => console.SingleLine = true);
        string? profilesFolder = settings["TapeVault:ProfilesFolder"] is { Length: > 0 } folder ? Path.GetFullPath(folder, archive.BaseFolder) : null;
        builder.Services.AddTapeVaultArchive(archive, ProfileCatalog.WithUserFolder(profilesFolder));
        builder.Services.AddHostedService<WorkerStartup>();
        builder.Services.AddTapeVaultJobs(
            archive,
            settings.GetSection(JobsOptions.Section).Get<JobsOptions>() ?? new JobsOptions(),
            settings.GetSection(FixityOptions.Section).Get<FixityOptions>() ?? new FixityOptions(),
            runJobs: true);
        configure?.Invoke(builder.Services);
        return builder.Build();
    }

    /// <summary>Stops the worker once the job table has nothing queued or running (<c>tapevault worker --until-idle</c>).</summary>
    public static void StopWhenIdle(IServiceCollection services)
    {
        ArgumentNullException.ThrowIfNull(services);
        services.AddHostedService<IdleStop>();
    }

    private sealed class IdleStop(JobQueue queue, JobsOptions jobs, IHostApplicationLifetime lifetime) : BackgroundService
    {
        protected override async Task ExecuteAsync(CancellationToken stoppingToken)
        {
            var started = new TaskCompletionSource();
            using (lifetime.ApplicationStarted.Register(() => started.TrySetResult()))
            {
                await started.Task.WaitAsync(stoppingToken).ConfigureAwait(false);
            }

            // Idle at two looks in a row: a job handed back to the queue between two looks is seen at the second.
            int idleLooks = 0;
            while (!stoppingToken.IsCancellationRequested && idleLooks < 2)
            {
                await Task.Delay(TimeSpan.FromSeconds(jobs.PollSeconds), stoppingToken).ConfigureAwait(false);
                idleLooks = (await queue.UnfinishedAsync(stoppingToken).ConfigureAwait(false)).Count == 0 ? idleLooks + 1 : 0;
            }

            lifetime.StopApplication();
        }
    }

    /// <summary>Before any job runs: the archive's schema is brought up to date (as the web app does at its start).</summary>
    private sealed partial class WorkerStartup(IDbContextFactory<ArchiveDbContext> contexts, ArchiveOptions archive, JobsOptions jobs, ILogger<WorkerStartup> logger) : IHostedService
    {
        public async Task StartAsync(CancellationToken cancellationToken)
        {
            await using var db = await contexts.CreateDbContextAsync(cancellationToken).ConfigureAwait(false);
            await ArchiveDatabase.MigrateAsync(db, cancellationToken).ConfigureAwait(false);
            string schedule = jobs.Store == ScheduleStoreKind.Sqlite ? jobs.FullSchedulePath(archive) : "PostgreSQL (clustered)";
            string database = archive.FullDatabasePath;
            string store = archive.FullStorePath;
            int workers = Math.Max(1, archive.Workers);
            LogStarted(logger, database, store, workers, schedule);
        }

        public Task StopAsync(CancellationToken cancellationToken) => Task.CompletedTask;

        [LoggerMessage(Level = LogLevel.Information, Message = "TapeVault worker: running the jobs of {Database} (store {Store}), {Workers} at once; schedule in {Schedule}. No pages are served. Stop with Ctrl+C.")]
        private static partial void LogStarted(ILogger logger, string database, string store, int workers, string schedule);
    }
}
