using System.CommandLine;
using TapeVault.Archive.Accounts;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault users disable NAME: the account cannot sign in, and its sessions end.</summary>
public sealed class UsersDisableCommand : CliCommand
{
    private readonly Argument<string> name = new("NAME") { Description = "the account's user name" };
    private readonly ArchiveLocation archive = new();

    public UsersDisableCommand()
        : base("disable", "Disable an account: it cannot sign in and its sessions end (the last enabled curator stays).")
    {
        Arguments.Add(name);
        archive.AddTo(this);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        string userName = run.Value(name)!;
        using var session = archive.Open(run, CliSettings.Load());
        var admin = session.Get<UserAdmin>();
        ArchiveWork.Run(async () =>
        {
            await admin.DisableAsync(userName, ArchiveSession.Agent).ConfigureAwait(false);
            return true;
        });
        run.Output.WriteLine($"Account '{userName}' is disabled; its sessions were ended.");
        return 0;
    }
}
