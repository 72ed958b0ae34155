using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Options;
using TapeVault.Archive;
using TapeVault.Core.Formats;

namespace TapeVault.Cli;

/// <summary>The web app's archive opened from the command line: the same database, store and services, migrated first.</summary>
public sealed class ArchiveSession : IDisposable
{
    private readonly ServiceProvider services;
    private readonly IServiceScope scope;

    private ArchiveSession(ServiceProvider services)
    {
        this.services = services;
        scope = services.CreateScope();
    }

    public ArchiveOptions Options => Get<ArchiveOptions>();

    /// <summary>
    /// Opens the archive that the settings name, or the SQLite file (<paramref name="database"/>) or PostgreSQL
    /// database (<paramref name="connection"/>) and store given on the command line.
    /// </summary>
    public static ArchiveSession Open(string? database, string? store, CliSettings settings, string? connection = null)
    {
        ArgumentNullException.ThrowIfNull(settings);
        var options = settings.Archive;
        options.BaseFolder = ArchiveOptions.FindRepositoryRoot() ?? Directory.GetCurrentDirectory();
        ArchiveLocation.Apply(options, database, connection, store);

        var collection = new ServiceCollection();
        collection.AddLogging();
        collection.AddTapeVaultArchive(options, ProfileCatalog.WithUserFolder(settings.ProfilesFolder is { Length: > 0 } folder ? Path.GetFullPath(folder, options.BaseFolder) : null));
        var session = new ArchiveSession(collection.BuildServiceProvider());
        try
        {
            // The settings are checked here, as the web app checks them when it starts.
            _ = session.Options;
        }
        catch (OptionsValidationException problem)
        {
            session.Dispose();
            throw new UsageException($"appsettings.json: {string.Join(" ", problem.Failures)}");
        }

        ArchiveDatabase.MigrateAsync(session.Get<ArchiveDbContext>()).GetAwaiter().GetResult();
        return session;
    }

    public T Get<T>()
        where T : notnull => scope.ServiceProvider.GetRequiredService<T>();

    public static string Agent => $"cli:{Environment.UserName}";

    public void Dispose()
    {
        scope.Dispose();
        services.Dispose();
    }
}
