using System.CommandLine;
using TapeVault.Archive.Accounts;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault users reset NAME: a new password for an account, which ends its sessions.</summary>
public sealed class UsersResetCommand : CliCommand
{
    private readonly Argument<string> name = new("NAME") { Description = "the account's user name" };
    private readonly Option<bool> passwordStdin = new("--password-stdin") { Description = "read the new password from standard input; default: a one-time password is made, shown once, and must be changed at the next sign-in" };
    private readonly ArchiveLocation archive = new();

    public UsersResetCommand()
        : base("reset", "Give an account a new password (by default a one-time password, shown once); its sessions end.")
    {
        Arguments.Add(name);
        Options.Add(passwordStdin);
        archive.AddTo(this);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        string userName = run.Value(name)!;
        string? password = run.Value(passwordStdin)
            ? Console.In.ReadLine() ?? throw new UsageException("--password-stdin was given but standard input is empty.")
            : null;

        using var session = archive.Open(run, CliSettings.Load());
        var admin = session.Get<UserAdmin>();
        string? generated = ArchiveWork.Run(() => admin.ResetPasswordAsync(userName, password, ArchiveSession.Agent));
        run.Output.WriteLine($"Account '{userName}' has a new password; its sessions were ended.");
        if (generated is not null)
        {
            run.Output.WriteLine($"One-time password (shown only now; it must be changed at the next sign-in): {generated}");
        }

        return 0;
    }
}
