using System.CommandLine;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault users add NAME --role curator|viewer: an account of the web app, for the first curator and for scripts.</summary>
public sealed class UsersAddCommand : CliCommand
{
    private readonly Argument<string> name = new("NAME") { Description = "the new account's user name" };
    private readonly Option<string> role = new("--role") { HelpName = "curator|viewer", Description = "the new user's role (required)", Required = true };
    private readonly Option<bool> passwordStdin = new("--password-stdin") { Description = "read the password from standard input instead of making one; default: a password is made and shown once" };
    private readonly ArchiveLocation archive = new();

    public UsersAddCommand()
        : base("add", "Add an account to the web app, with a password made for it and shown once.")
    {
        role.CompletionSources.Add("curator", "viewer");
        Arguments.Add(name);
        Options.Add(role);
        Options.Add(passwordStdin);
        archive.AddTo(this);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        string userName = run.Value(name)!;
        string userRole = run.Value(role)!;
        string? password = run.Value(passwordStdin)
            ? Console.In.ReadLine() ?? throw new UsageException("--password-stdin was given but standard input is empty.")
            : null;

        using var session = archive.Open(run, CliSettings.Load());
        var admin = session.Get<UserAdmin>();
        var (user, generated) = ArchiveWork.Run(() => admin.AddAsync(userName, userRole, password, ArchiveSession.Agent));
        run.Output.WriteLine($"Account '{user.UserName}' made with the {userRole} role in {session.Options.FullDatabasePath}.");
        if (generated is not null)
        {
            run.Output.WriteLine($"Password (shown only now): {generated}");
        }

        return 0;
    }
}
