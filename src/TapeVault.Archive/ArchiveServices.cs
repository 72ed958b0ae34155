using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Export;
using TapeVault.Archive.Fixity;
using TapeVault.Archive.Ingest;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Seeding;
using TapeVault.Archive.Storage;
using TapeVault.Core.Formats;

namespace TapeVault.Archive;

public static class ArchiveServices
{
    /// <summary>The database, the content store, ingest, jobs and the Identity stores; the host adds its own sign-in scheme.</summary>
    public static IServiceCollection AddTapeVaultArchive(this IServiceCollection services, ArchiveOptions options, ProfileCatalog profiles)
    {
        ArgumentNullException.ThrowIfNull(options);
        services.AddSingleton(options);
        services.AddScoped<FixityAudit>();
        services.AddScoped<BagExport>();
        services.AddScoped<OrganisationSettings>();
        services.AddScoped<CataloguePublisher>();
        services.AddScoped<ExportStore>();
        services.AddSingleton(profiles);
        services.AddSingleton(new ContentStore(options.FullStorePath));
        services.AddDbContextFactory<ArchiveDbContext>(db => ArchiveDatabase.Configure(db, options.FullDatabasePath));
        services.AddScoped<CaptureIngest>();
        services.AddScoped<DemoSeeder>();
        services.AddScoped<UserAdmin>();
        services.AddScoped<Curation.CuratorActions>();
        services.AddSingleton<JobQueue>();
        services.AddSingleton<IJobHandler, DecodeJob>();
        services.AddSingleton<IJobHandler, MergeJob>();
        services.AddSingleton<IJobHandler, FixityJob>();
        services.AddSingleton<IJobHandler, BagJob>();
        services.AddSingleton<IJobHandler, PublishJob>();
        return services;
    }

    /// <summary>Identity's password and lockout rules for the archive (shared by the web app and the CLI).</summary>
    public static void ConfigureIdentity(IdentityOptions identity)
    {
        ArgumentNullException.ThrowIfNull(identity);
        // Length over character classes, after NIST SP 800-63B's advice on memorised secrets.
        identity.Password.RequiredLength = 12;
        identity.Password.RequireNonAlphanumeric = false;
        identity.Password.RequireUppercase = false;
        identity.Password.RequireLowercase = false;
        identity.Password.RequireDigit = false;
        identity.Lockout.MaxFailedAccessAttempts = 5;
        identity.Lockout.DefaultLockoutTimeSpan = TimeSpan.FromMinutes(10);
        identity.Lockout.AllowedForNewUsers = true;
        identity.User.RequireUniqueEmail = false;
    }
}
