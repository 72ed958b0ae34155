using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Events;
using TapeVault.Archive.Fixity;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Seeding;
using TapeVault.Archive.Storage;

namespace TapeVault.Web.Startup;

/// <summary>
/// Runs before the server listens: applies migrations, clears temporary files of interrupted uploads, makes the roles,
/// the first curator (its one-time password printed once) and, in an empty archive, the demo collection.
/// </summary>
public sealed partial class ArchiveStartup(IServiceProvider services, WebOptions web, ContentStore store, JobsOptions jobs, OperatorConsole console, ILogger<ArchiveStartup> logger) : IHostedService
{
    public async Task StartAsync(CancellationToken cancellationToken)
    {
        await using var scope = services.CreateAsyncScope();
        var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
        await ArchiveDatabase.MigrateAsync(db, cancellationToken).ConfigureAwait(false);
        // A store shared with workers on other machines (a clustered schedule) holds their work in progress too: only
        // temporary files a day old are taken for leftovers there.
        int swept = store.SweepTemporaryFiles(jobs.Store == ScheduleStoreKind.PostgreSql ? TimeSpan.FromDays(1) : null);
        if (swept > 0)
        {
            LogSwept(logger, swept);
        }

        // Files no row names are reported with their hash and left where they are: a missing row may be the damage.
        var unrecorded = await FixityAudit.UnrecordedNamesAsync(db, store, cancellationToken).ConfigureAwait(false);
        if (unrecorded.Count > 0)
        {
            foreach (var name in unrecorded)
            {
                LogUnrecorded(logger, store.RelativePath(name), name);
            }

            EventLog.Add(db, EventTypes.FixityCheck, EventLog.SystemAgent, "store", "objects", FixityAudit.Unrecorded,
                $"At start, {unrecorded.Count} file(s) in the store were named by no object row and were left in place: {string.Join(", ", unrecorded.Select(store.RelativePath))}. Run a fixity audit to see which captures they concern.");
            await db.SaveChangesAsync(cancellationToken).ConfigureAwait(false);
        }

        var admin = scope.ServiceProvider.GetRequiredService<UserAdmin>();
        await admin.EnsureRolesAsync().ConfigureAwait(false);
        var users = scope.ServiceProvider.GetRequiredService<UserManager<IdentityUser>>();
        if (!string.IsNullOrWhiteSpace(web.InitialCurator) && !users.Users.Any())
        {
            var (_, password) = await admin.AddAsync(web.InitialCurator, Roles.Curator, null, "system").ConfigureAwait(false);
            await console.SayAsync(
                $"""

                 TapeVault: first start. A curator account was made:
                   user name: {web.InitialCurator}
                   password:  {password}
                 This one-time password is shown only now and must be changed at the first sign-in
                 (or set one with 'tapevault users reset {web.InitialCurator} --password-stdin').

                """).ConfigureAwait(false);
        }

        // The organisation that holds the archive is named in every bag and catalogue: say where to set it.
        if (!(await OrganisationSettings.CurrentAsync(db, scope.ServiceProvider.GetRequiredService<ArchiveOptions>(), cancellationToken).ConfigureAwait(false)).IsSet)
        {
            await console.SayAsync(
                $"""

                 TapeVault: the archive's organisation is not set, so bags and catalogues name none.
                 To name it: {Organisation.WhereToSet}.

                """).ConfigureAwait(false);
        }

        if (web.SeedDemo)
        {
            var seeder = scope.ServiceProvider.GetRequiredService<DemoSeeder>();
            if (await seeder.SeedIfEmptyAsync(cancellationToken).ConfigureAwait(false))
            {
                LogSeeded(logger);
            }
        }
    }

    public Task StopAsync(CancellationToken cancellationToken) => Task.CompletedTask;

    [LoggerMessage(Level = LogLevel.Information, Message = "Removed {Count} temporary file(s) left by interrupted uploads.")]
    private static partial void LogSwept(ILogger logger, int count);

    [LoggerMessage(Level = LogLevel.Warning, Message = "The store holds {File} (named SHA-256 {Sha256}), which no object row names; it was left in place. Run a fixity audit.")]
    private static partial void LogUnrecorded(ILogger logger, string file, string sha256);

    [LoggerMessage(Level = LogLevel.Information, Message = "The archive was empty: the demo collection was made and its captures queued for decoding.")]
    private static partial void LogSeeded(ILogger logger);
}
