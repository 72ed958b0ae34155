using Microsoft.AspNetCore.Antiforgery;
using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.DataProtection;
using Microsoft.AspNetCore.Identity;
using Microsoft.AspNetCore.Server.Kestrel.Core;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.FileProviders;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Export;
using TapeVault.Archive.Jobs;
using TapeVault.Core.Formats;
using TapeVault.Web.Accounts;
using TapeVault.Web.Api;
using TapeVault.Web.Startup;

namespace TapeVault.Web;

/// <summary>Builds the web app: the archive's services, accounts, pages, the JSON API and the job workers.</summary>
public static class WebApp
{
    /// <summary>Request bodies other than capture uploads are small JSON or forms.</summary>
    public const long MaxFormBytes = 1024 * 1024;

    public static WebApplication Build(string[] args)
    {
        var repository = ArchiveOptions.FindRepositoryRoot();
        var builder = WebApplication.CreateBuilder(new WebApplicationOptions
        {
            Args = args,
            WebRootPath = repository is not null ? Path.Combine(repository, "web") : Path.Combine(AppContext.BaseDirectory, "web"),
        });

        // The settings file lives at the top of the repository; the copy beside the program, then the one in the current folder.
        builder.Configuration.Sources.Insert(0, new Microsoft.Extensions.Configuration.Json.JsonConfigurationSource
        {
            Path = "appsettings.json",
            Optional = true,
            FileProvider = new PhysicalFileProvider(AppContext.BaseDirectory),
        });
        builder.Configuration.AddJsonFile(Path.Combine(repository ?? Directory.GetCurrentDirectory(), "appsettings.json"), optional: true);
        builder.Configuration.AddEnvironmentVariables();
        builder.Configuration.AddCommandLine(args);
        if (string.IsNullOrEmpty(builder.Configuration["urls"]))
        {
            builder.WebHost.UseUrls("http://127.0.0.1:5080");
        }

        var archive = builder.Configuration.GetSection(ArchiveOptions.Section).Get<ArchiveOptions>() ?? new ArchiveOptions();
        archive.BaseFolder = repository ?? Directory.GetCurrentDirectory();
        string? profilesFolder = builder.Configuration["TapeVault:ProfilesFolder"] is { Length: > 0 } folder ? Path.GetFullPath(folder, archive.BaseFolder) : null;
        var profiles = ProfileCatalog.WithUserFolder(profilesFolder);
        builder.Services.AddSingleton(new ProfilesFolder(profilesFolder));
        var web = builder.Configuration.GetSection(WebOptions.Section).Get<WebOptions>() ?? new WebOptions();
        builder.Services.AddSingleton(web);
        builder.Services.AddTapeVaultArchive(archive, profiles);

        // Sign-in cookies and antiforgery tokens must survive a restart, and with several web nodes be read by every
        // node: the keys live in a folder (TapeVault:Web:KeysFolder, one every web node mounts), by default beside the database.
        builder.Services.AddDataProtection()
            .SetApplicationName("TapeVault")
            .PersistKeysToFileSystem(new DirectoryInfo(web.FullKeysFolder(archive)));

        // The archive registered the account stores and password rules; the web app adds the sign-in scheme.
        builder.Services.AddIdentity<IdentityUser, IdentityRole>()
            .AddDefaultTokenProviders();

        // Every request checks the session's security stamp against the account's, so that signing out, a password
        // change, a reset and disabling end every session at once, copies of the cookie included.
        builder.Services.Configure<SecurityStampValidatorOptions>(stamp => stamp.ValidationInterval = TimeSpan.Zero);
        builder.Services.TryAddSingleton(TimeProvider.System);
        builder.Services.AddSingleton<SignInGuard>();
        builder.Services.AddTapeVaultRateLimits(web.SignIn, builder.Configuration.GetSection(RateLimitOptions.Section).Get<RateLimitOptions>() ?? new RateLimitOptions());
        builder.Services.ConfigureApplicationCookie(cookie =>
        {
            cookie.LoginPath = "/signin";
            cookie.LogoutPath = "/signout";
            cookie.AccessDeniedPath = "/denied";
            cookie.Cookie.Name = "tapevault.session";
            cookie.Cookie.HttpOnly = true;
            cookie.Cookie.SameSite = SameSiteMode.Strict;
            cookie.SlidingExpiration = true;
            cookie.ExpireTimeSpan = TimeSpan.FromHours(8);

            // The API answers with status codes; only pages redirect to the sign-in form.
            cookie.Events.OnRedirectToLogin = context => ApiOrRedirect(context.HttpContext, context.RedirectUri, StatusCodes.Status401Unauthorized);
            cookie.Events.OnRedirectToAccessDenied = context => ApiOrRedirect(context.HttpContext, context.RedirectUri, StatusCodes.Status403Forbidden);
        });
        builder.Services.AddAuthorizationBuilder()
            .AddPolicy(Roles.CuratorPolicy, p => p.RequireAuthenticatedUser().RequireRole(Roles.Curator))
            .AddPolicy(Roles.ReaderPolicy, p => p.RequireAuthenticatedUser().RequireRole(Roles.Curator, Roles.Viewer))
            .SetFallbackPolicy(new AuthorizationPolicyBuilder().RequireAuthenticatedUser().RequireRole(Roles.Curator, Roles.Viewer).Build());
        builder.Services.AddAntiforgery(a =>
        {
            a.HeaderName = ApiAntiforgery.HeaderName;
            a.Cookie.Name = "tapevault.antiforgery";
            a.Cookie.SameSite = SameSiteMode.Strict;
            a.Cookie.HttpOnly = true;
        });
        builder.Services.Configure<KestrelServerOptions>(k => k.Limits.MaxRequestBodySize = MaxFormBytes);
        builder.Services.AddRazorPages(pages =>
        {
            pages.Conventions.AllowAnonymousToPage("/Account/SignIn");
            pages.Conventions.AddPageRouteModelConvention("/Account/SignIn", model =>
            {
                foreach (var selector in model.Selectors)
                {
                    selector.EndpointMetadata.Add(new Microsoft.AspNetCore.RateLimiting.EnableRateLimitingAttribute(RateLimits.SignIn));
                }
            });
            pages.Conventions.AllowAnonymousToPage("/Account/Denied");
            pages.Conventions.AllowAnonymousToPage("/Error");
            pages.Conventions.AllowAnonymousToPage("/Handling");

            // The capture page draws a zoom and a histogram from the original on each view: the same limit as the plot API.
            pages.Conventions.AddPageApplicationModelConvention("/Captures/Detail", page =>
                page.EndpointMetadata.Add(new Microsoft.AspNetCore.RateLimiting.EnableRateLimitingAttribute(RateLimits.Plots)));
        }).AddMvcOptions(mvc => mvc.Filters.Add(new CuratorWritesFilter()));
        builder.Services.AddOpenApi();
        builder.Services.AddProblemDetails(problems => problems.CustomizeProblemDetails = context =>
        {
            // Refusals the framework makes before our code runs (a body that is not JSON, too big, an unknown address)
            // get a sentence that says what to do, not just the status's name (ours always end with a full stop).
            var details = context.ProblemDetails;
            if (details.Title is null || !details.Title.EndsWith('.'))
            {
                details.Title = details.Status switch
                {
                    StatusCodes.Status400BadRequest => "The request could not be read: send a JSON body of the documented shape (see /openapi/v1.json).",
                    StatusCodes.Status404NotFound => "There is nothing at this address.",
                    StatusCodes.Status405MethodNotAllowed => "This address does not accept that method.",
                    StatusCodes.Status413PayloadTooLarge => $"The request body is larger than the {MaxFormBytes / 1024} KiB allowed for anything but a capture upload.",
                    StatusCodes.Status415UnsupportedMediaType => "The request's content type is not accepted here; send JSON.",
                    _ => details.Title,
                };
            }
        });
        builder.Services.AddExceptionHandler<DiskFullHandler>();
        builder.Services.AddScoped<ArchiveQueries>();
        builder.Services.TryAddSingleton(new OperatorConsole(Console.Out));
        builder.Services.AddHostedService<ArchiveStartup>();
        builder.Services.AddTapeVaultJobs(
            archive,
            builder.Configuration.GetSection(JobsOptions.Section).Get<JobsOptions>() ?? new JobsOptions(),
            builder.Configuration.GetSection(FixityOptions.Section).Get<FixityOptions>() ?? new FixityOptions(),
            runJobs: web.Role != WebRole.Pages);

        var app = builder.Build();
        app.UseExceptionHandler("/Error");
        app.UseStatusCodePages();
        app.Use(SecurityHeaders.Add);
        app.UseStaticFiles();
        app.UseRouting();
        app.UseAuthentication();
        app.Use(PasswordChangeGate.Check);

        // After authentication, so that the plot limit can go by account; before authorization, so that a refused
        // sign-in never reaches the account checks.
        app.UseRateLimiter();
        app.UseAuthorization();
        app.UseAntiforgery();
        app.MapOpenApi().AllowAnonymous();
        app.MapRazorPages();
        app.MapTapeVaultApi();
        app.MapCaptureApi();
        app.MapImageFilesApi();
        return app;
    }

    private static Task ApiOrRedirect(HttpContext context, string redirectUri, int status)
    {
        if (context.Request.Path.StartsWithSegments("/api", StringComparison.Ordinal))
        {
            context.Response.StatusCode = status;
            return Task.CompletedTask;
        }

        context.Response.Redirect(redirectUri);
        return Task.CompletedTask;
    }
}

/// <summary>The "TapeVault:Web" section of appsettings.json.</summary>
/// <summary>What one started web app does (TapeVault:Web:Role).</summary>
public enum WebRole
{
    /// <summary>Serves the pages and the API and runs the jobs: one machine.</summary>
    Full,

    /// <summary>Serves the pages and the API and queues jobs for workers, running none itself.</summary>
    Pages,

    /// <summary>Runs the jobs and serves nothing, as <c>tapevault worker</c> does.</summary>
    Worker,
}

/// <summary>Where the user's own profiles live (TapeVault:ProfilesFolder); null when none is configured.</summary>
public sealed record ProfilesFolder(string? Path);

public sealed class WebOptions
{
    public const string Section = "TapeVault:Web";

    /// <summary>Full: pages and jobs (the default); Pages: pages only, jobs run by workers; Worker: jobs only, no pages.</summary>
    public WebRole Role { get; set; } = WebRole.Full;

    /// <summary>Fill an empty archive with the demo collection at first start.</summary>
    public bool SeedDemo { get; set; } = true;

    /// <summary>At first start with no accounts, create this curator and print its one-time password once; empty for none.</summary>
    public string InitialCurator { get; set; } = "curator";

    /// <summary>
    /// The folder that holds the keys protecting sign-in cookies and antiforgery tokens (ASP.NET Core data protection);
    /// a relative path is taken from the archive's base folder. Empty: a "keys" folder beside the SQLite database. With
    /// several web nodes behind one address, every node must name the same folder (a shared mount), or a session
    /// begun on one node is refused by the others.
    /// </summary>
    public string KeysFolder { get; set; } = string.Empty;

    /// <summary>The keys folder in force for an archive.</summary>
    public string FullKeysFolder(ArchiveOptions archive)
    {
        ArgumentNullException.ThrowIfNull(archive);
        return KeysFolder.Length > 0
            ? Path.GetFullPath(KeysFolder, archive.BaseFolder)
            : Path.Combine(Path.GetDirectoryName(archive.FullDatabasePath)!, "keys");
    }

    /// <summary>Whether viewers may download original captures.</summary>
    public bool ViewersMayDownloadOriginals { get; set; } = true;

    /// <summary>How failed sign-ins are slowed down.</summary>
    public SignInThrottleOptions SignIn { get; set; } = new();
}
