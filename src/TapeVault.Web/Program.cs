using Microsoft.Extensions.Configuration;
using TapeVault.Archive;
using TapeVault.Archive.Jobs;
using TapeVault.Web;

// TapeVault:Web:Role = Worker starts the same app as a decode worker: the jobs, no pages.
var repository = ArchiveOptions.FindRepositoryRoot();
var settings = JobWorker.ReadSettings(args, repository);
if (settings.GetSection(WebOptions.Section).Get<WebOptions>()?.Role == WebRole.Worker)
{
    var archive = settings.GetSection(ArchiveOptions.Section).Get<ArchiveOptions>() ?? new ArchiveOptions();
    archive.BaseFolder = repository ?? Directory.GetCurrentDirectory();
    using var worker = JobWorker.Build(settings, archive);
    await worker.RunAsync();
    return;
}

var app = WebApp.Build(args);
await app.RunAsync();

/// <summary>The entry point's type, named so that tests can start the app with WebApplicationFactory.</summary>
public partial class Program;
