using System.CommandLine;
using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.Hosting;
using TapeVault.Archive;
using TapeVault.Archive.Jobs;

namespace TapeVault.Cli.Commands;

/// <summary>
/// tapevault worker: runs the web app's archive's jobs (decodes, merges, audits, bags, catalogues) with no pages,
/// until stopped, or until the queue is empty with --until-idle. Reads the web app's settings (appsettings.json,
/// then TapeVault__… environment variables); several workers on several machines need the schedule in PostgreSQL.
/// </summary>
public sealed class WorkerCommand : CliCommand
{
    private readonly ArchiveLocation archive = new();
    private readonly Option<double?> workers = CommonOptions.OptionalNumber("--workers", "N", "how many jobs this worker runs at once; default: TapeVault:Archive:Workers in appsettings.json, else 2", 1, 64);
    private readonly Option<bool> untilIdle = new("--until-idle") { Description = "stop once no job is queued or running, instead of waiting for more; default: run until stopped (Ctrl+C or SIGTERM)" };

    public WorkerCommand()
        : base("worker", "Run the archive's jobs as a worker, with no pages: decodes, merges, audits, bags and catalogues.")
    {
        archive.AddTo(this);
        Options.Add(workers);
        Options.Add(untilIdle);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        string? repository = ArchiveOptions.FindRepositoryRoot();
        var settings = JobWorker.ReadSettings([], repository);
        var options = settings.GetSection(ArchiveOptions.Section).Get<ArchiveOptions>() ?? new ArchiveOptions();
        options.BaseFolder = repository ?? Directory.GetCurrentDirectory();
        archive.ApplyTo(run, options);

        if (run.Value(workers) is { } count)
        {
            if (count != Math.Floor(count))
            {
                throw new UsageException($"The option --workers takes a whole number, not {count}.");
            }

            options.Workers = (int)count;
        }

        IHost host;
        try
        {
            host = JobWorker.Build(settings, options, run.Value(untilIdle) ? JobWorker.StopWhenIdle : null);
        }
        catch (InvalidOperationException e)
        {
            throw new UsageException(e.Message);
        }

        using (host)
        {
            try
            {
                host.Run();
            }
            catch (ScheduleInUseException e)
            {
                run.Error.WriteLine($"tapevault: {e.Message}");
                return 1;
            }
        }

        return 0;
    }
}
