using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Options;
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
    /// <summary>
    /// The archive as every host runs it (the web app, the command line, a worker): its settings, checked when the
    /// host starts; the clock; the database; the content store; ingest, curation, fixity, exports, jobs; and the
    /// accounts (Identity's user and role stores with the archive's password rules). The web app adds only its
    /// sign-in scheme on top.
    /// </summary>
    public static IServiceCollection AddTapeVaultArchive(this IServiceCollection services, ArchiveOptions options, ProfileCatalog profiles)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(profiles);
        services.AddSingleton<IValidateOptions<ArchiveOptions>, ArchiveOptionsValidation>();
        services.AddSingleton<IOptionsFactory<ArchiveOptions>>(s => new GivenOptionsFactory<ArchiveOptions>(options, s.GetServices<IValidateOptions<ArchiveOptions>>()));
        services.AddOptions<ArchiveOptions>().ValidateOnStart();
        services.AddSingleton(s => s.GetRequiredService<IOptions<ArchiveOptions>>().Value);
        services.TryAddSingleton(TimeProvider.System);
        services.AddScoped<FixityAudit>();
        services.AddScoped<BagExport>();
        services.AddScoped<OrganisationSettings>();
        services.AddScoped<CataloguePublisher>();
        services.AddScoped<ExportStore>();
        services.AddSingleton(profiles);
        services.AddSingleton(s => new ContentStore(s.GetRequiredService<ArchiveOptions>().FullStorePath));
        // A context asked for directly (Identity's stores, a request's scope) comes from the factory too, so it has the clock.
        services.AddScoped(s => s.GetRequiredService<IDbContextFactory<ArchiveDbContext>>().CreateDbContext());
        services.AddDbContextFactory<ArchiveDbContext, ArchiveDbContextFactory>((s, db) => ArchiveDatabase.Configure(db, s.GetRequiredService<ArchiveOptions>()));
        services.AddIdentityCore<IdentityUser>(ConfigureIdentity)
            .AddRoles<IdentityRole>()
            .AddEntityFrameworkStores<ArchiveDbContext>()
            .AddArchivePasswordPolicy();
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

    /// <summary>The archive's password rules (<see cref="PasswordPolicy"/>) on an Identity set-up.</summary>
    public static IdentityBuilder AddArchivePasswordPolicy(this IdentityBuilder identity)
    {
        ArgumentNullException.ThrowIfNull(identity);
        return identity.AddPasswordValidator<PasswordPolicy>();
    }

    /// <summary>Identity's password and lockout rules for the archive (shared by the web app and the CLI).</summary>
    public static void ConfigureIdentity(IdentityOptions identity)
    {
        ArgumentNullException.ThrowIfNull(identity);
        // No composition rules (NIST SP 800-63B-4 §3.1.1.2); PasswordPolicy checks length, blocklist and context, so
        // Identity's own validator is left asking only for something.
        identity.Password.RequiredLength = 1;
        identity.Password.RequireNonAlphanumeric = false;
        identity.Password.RequireUppercase = false;
        identity.Password.RequireLowercase = false;
        identity.Password.RequireDigit = false;
        // Failed sign-ins are slowed down by the web app's sign-in throttle, not by locking the account (which would
        // let anyone lock anyone out); a lock with no end is how an account is disabled (UserAdmin.DisableAsync).
        identity.Lockout.AllowedForNewUsers = true;
        identity.Lockout.MaxFailedAccessAttempts = int.MaxValue;
        identity.User.RequireUniqueEmail = false;
    }
}
