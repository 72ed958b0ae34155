using Microsoft.AspNetCore.Identity;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Export;
using TapeVault.Archive.Fixity;
using TapeVault.Archive.Storage;
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

    /// <summary>Opens the archive that the settings name, or the database and store given on the command line.</summary>
    public static ArchiveSession Open(string? database, string? store, CliSettings settings)
    {
        ArgumentNullException.ThrowIfNull(settings);
        var options = settings.Archive;
        options.BaseFolder = ArchiveOptions.FindRepositoryRoot() ?? Directory.GetCurrentDirectory();
        if (database is not null)
        {
            options.DatabasePath = Path.GetFullPath(database);
        }

        if (store is not null)
        {
            options.StorePath = Path.GetFullPath(store);
        }

        var collection = new ServiceCollection();
        collection.AddLogging();
        collection.AddSingleton(options);
        collection.AddSingleton(ProfileCatalog.WithUserFolder(settings.ProfilesFolder is { Length: > 0 } folder ? Path.GetFullPath(folder, options.BaseFolder) : null));
        collection.AddSingleton(new ContentStore(options.FullStorePath));
        collection.AddDbContext<ArchiveDbContext>(db => ArchiveDatabase.Configure(db, options.FullDatabasePath));
        collection.AddIdentityCore<IdentityUser>(ArchiveServices.ConfigureIdentity)
            .AddRoles<IdentityRole>()
            .AddEntityFrameworkStores<ArchiveDbContext>();
        collection.AddScoped<UserAdmin>();
        collection.AddScoped<FixityAudit>();
        collection.AddScoped<BagExport>();
        collection.AddScoped<CataloguePublisher>();
        var session = new ArchiveSession(collection.BuildServiceProvider());
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
