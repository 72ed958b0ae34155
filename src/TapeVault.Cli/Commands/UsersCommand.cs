using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;

namespace TapeVault.Cli.Commands;

/// <summary>Accounts of the web app's archive, for the first curator and for scripts: <c>users add</c> and <c>users list</c>.</summary>
public static class UsersCommand
{
    public const string Usage = "users add NAME --role curator|viewer [--password-stdin] [--database FILE] | users list [--database FILE]";

    public static IReadOnlySet<string> Flags { get; } = new HashSet<string>(StringComparer.Ordinal) { "password-stdin" };

    public static int Run(CommandLine args, TextWriter output, TextReader input, CliSettings settings)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(output);
        ArgumentNullException.ThrowIfNull(input);
        ArgumentNullException.ThrowIfNull(settings);
        string verb = args.Positional.Count > 0 ? args.Positional[0] : throw new UsageException($"Say what to do: tapevault {Usage}.");
        var options = settings.Archive;
        options.BaseFolder = ArchiveOptions.FindRepositoryRoot() ?? Directory.GetCurrentDirectory();
        if (args.Value("database") is { } database)
        {
            options.DatabasePath = Path.GetFullPath(database);
        }

        return verb switch
        {
            "add" => Add(args, output, input, options),
            "list" => List(args, output, options),
            _ => throw new UsageException($"Unknown users command '{verb}'; use add or list."),
        };
    }

    private static int Add(CommandLine args, TextWriter output, TextReader input, ArchiveOptions options)
    {
        if (args.Positional.Count != 2)
        {
            throw new UsageException($"Give one user name: tapevault {Usage}.");
        }

        string name = args.Positional[1];
        string role = args.Required("role");
        bool fromStdin = args.Flag("password-stdin");
        args.RejectUnknown();
        string? password = fromStdin ? input.ReadLine() ?? throw new UsageException("--password-stdin was given but standard input is empty.") : null;

        using var services = Services(options);
        Migrate(services);
        using var scope = services.CreateScope();
        var admin = scope.ServiceProvider.GetRequiredService<UserAdmin>();
        try
        {
            var (user, generated) = admin.AddAsync(name, role, password, $"cli:{Environment.UserName}").GetAwaiter().GetResult();
            output.WriteLine($"Account '{user.UserName}' made with the {role} role in {options.FullDatabasePath}.");
            if (generated is not null)
            {
                output.WriteLine($"Password (shown only now): {generated}");
            }
        }
        catch (Exception e) when (e is ArchiveInputException or ArchiveConflictException)
        {
            throw new UsageException(e.Message);
        }

        return 0;
    }

    private static int List(CommandLine args, TextWriter output, ArchiveOptions options)
    {
        args.RejectUnknown();
        using var services = Services(options);
        Migrate(services);
        using var scope = services.CreateScope();
        var users = scope.ServiceProvider.GetRequiredService<UserManager<IdentityUser>>();
        foreach (var user in users.Users.OrderBy(u => u.UserName).ToList())
        {
            var roles = users.GetRolesAsync(user).GetAwaiter().GetResult();
            output.WriteLine($"{user.UserName,-24} {string.Join(",", roles)}");
        }

        return 0;
    }

    private static ServiceProvider Services(ArchiveOptions options)
    {
        var services = new ServiceCollection();
        services.AddLogging();
        services.AddDbContext<ArchiveDbContext>(db => ArchiveDatabase.Configure(db, options.FullDatabasePath));
        services.AddIdentityCore<IdentityUser>(ArchiveServices.ConfigureIdentity)
            .AddRoles<IdentityRole>()
            .AddEntityFrameworkStores<ArchiveDbContext>();
        services.AddScoped<UserAdmin>();
        return services.BuildServiceProvider();
    }

    private static void Migrate(ServiceProvider services)
    {
        using var scope = services.CreateScope();
        ArchiveDatabase.MigrateAsync(scope.ServiceProvider.GetRequiredService<ArchiveDbContext>()).GetAwaiter().GetResult();
    }
}
