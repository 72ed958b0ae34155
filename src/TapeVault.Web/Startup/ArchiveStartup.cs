using Microsoft.AspNetCore.Identity;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Seeding;
using TapeVault.Archive.Storage;

namespace TapeVault.Web.Startup;

/// <summary>
/// Runs before the server listens: applies migrations, clears temporary files of interrupted uploads, makes the roles,
/// the first curator (its one-time password printed once) and, in an empty archive, the demo collection.
/// </summary>
public sealed partial class ArchiveStartup(IServiceProvider services, WebOptions web, ContentStore store, ILogger<ArchiveStartup> logger) : IHostedService
{
    public async Task StartAsync(CancellationToken cancellationToken)
    {
        await using var scope = services.CreateAsyncScope();
        var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
        await ArchiveDatabase.MigrateAsync(db, cancellationToken).ConfigureAwait(false);
        int swept = store.SweepTemporaryFiles();
        if (swept > 0)
        {
            LogSwept(logger, swept);
        }

        var admin = scope.ServiceProvider.GetRequiredService<UserAdmin>();
        await admin.EnsureRolesAsync().ConfigureAwait(false);
        var users = scope.ServiceProvider.GetRequiredService<UserManager<IdentityUser>>();
        if (!string.IsNullOrWhiteSpace(web.InitialCurator) && !users.Users.Any())
        {
            var (_, password) = await admin.AddAsync(web.InitialCurator, Roles.Curator, null, "system").ConfigureAwait(false);
            await Console.Out.WriteLineAsync(
                $"""

                 TapeVault: first start. A curator account was made:
                   user name: {web.InitialCurator}
                   password:  {password}
                 This password is shown only now; sign in and keep it safe, or add accounts with 'tapevault users add'.

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

    [LoggerMessage(Level = LogLevel.Information, Message = "The archive was empty: the demo collection was made and its captures queued for decoding.")]
    private static partial void LogSeeded(ILogger logger);
}
