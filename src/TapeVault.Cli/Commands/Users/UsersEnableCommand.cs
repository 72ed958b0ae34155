using System.CommandLine;
using TapeVault.Archive.Accounts;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault users enable NAME: a disabled account may sign in again with its password.</summary>
public sealed class UsersEnableCommand : CliCommand
{
    private readonly Argument<string> name = new("NAME") { Description = "the account's user name" };
    private readonly ArchiveLocation archive = new();

    public UsersEnableCommand()
        : base("enable", "Enable a disabled account again; its password is unchanged.")
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
            await admin.EnableAsync(userName, ArchiveSession.Agent).ConfigureAwait(false);
            return true;
        });
        run.Output.WriteLine($"Account '{userName}' is enabled.");
        return 0;
    }
}
