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


    public static int Run(CommandLine args, TextWriter output, TextReader input, CliSettings settings)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(output);
        ArgumentNullException.ThrowIfNull(input);
        ArgumentNullException.ThrowIfNull(settings);
        string verb = args.Positional.Count > 0 ? args.Positional[0] : throw new UsageException($"Say what to do: tapevault {Usage}.");
        return verb switch
        {
            "add" => Add(args, output, input, settings),
            "list" => List(args, output, settings),
            _ => throw new UsageException($"Unknown users command '{verb}'; use add or list."),
        };
    }

    private static int Add(CommandLine args, TextWriter output, TextReader input, CliSettings settings)
    {
        if (args.Positional.Count != 2)
        {
            throw new UsageException($"Give one user name: tapevault {Usage}.");
        }

        string name = args.Positional[1];
        string role = args.Required("role");
        bool fromStdin = args.Flag("password-stdin");
        ArchiveSession.DeclareOptions(args);
        args.RejectUnknown();
        string? password = fromStdin ? input.ReadLine() ?? throw new UsageException("--password-stdin was given but standard input is empty.") : null;

        using var session = ArchiveSession.Open(args, settings);
        var admin = session.Get<UserAdmin>();
        try
        {
            var (user, generated) = admin.AddAsync(name, role, password, ArchiveSession.Agent).GetAwaiter().GetResult();
            output.WriteLine($"Account '{user.UserName}' made with the {role} role in {session.Options.FullDatabasePath}.");
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

    private static int List(CommandLine args, TextWriter output, CliSettings settings)
    {
        ArchiveSession.DeclareOptions(args);
        args.RejectUnknown();
        using var session = ArchiveSession.Open(args, settings);
        var users = session.Get<UserManager<IdentityUser>>();
        foreach (var user in users.Users.OrderBy(u => u.UserName).ToList())
        {
            var roles = users.GetRolesAsync(user).GetAwaiter().GetResult();
            output.WriteLine($"{user.UserName,-24} {string.Join(",", roles)}");
        }

        return 0;
    }
}
