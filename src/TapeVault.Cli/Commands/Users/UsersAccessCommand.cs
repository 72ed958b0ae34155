using System.CommandLine;
using TapeVault.Archive.Accounts;

namespace TapeVault.Cli.Commands;

/// <summary>
/// tapevault users disable NAME / users enable NAME: whether an account may sign in. Both commands differ only in the
/// account change they make and what they say after it, so one class holds them.
/// </summary>
public sealed class UsersAccessCommand : CliCommand
{
    private readonly Argument<string> name = new("NAME") { Description = "the account's user name" };
    private readonly ArchiveLocation archive = new();
    private readonly Func<UserAdmin, string, Task> change;
    private readonly string doneFormat;

    private UsersAccessCommand(string verb, string description, Func<UserAdmin, string, Task> change, string doneFormat)
        : base(verb, description)
    {
        this.change = change;
        this.doneFormat = doneFormat;
        Arguments.Add(name);
        archive.AddTo(this);
    }

    /// <summary>The account cannot sign in, and its sessions end.</summary>
    public static UsersAccessCommand Disable() => new(
        "disable",
        "Disable an account: it cannot sign in and its sessions end (the last enabled curator stays).",
        (admin, user) => admin.DisableAsync(user, ArchiveSession.Agent),
        "Account '{0}' is disabled; its sessions were ended.");

    /// <summary>A disabled account may sign in again with its password.</summary>
    public static UsersAccessCommand Enable() => new(
        "enable",
        "Enable a disabled account again; its password is unchanged.",
        (admin, user) => admin.EnableAsync(user, ArchiveSession.Agent),
        "Account '{0}' is enabled.");

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        string userName = run.Value(name)!;
        using var session = archive.Open(run, CliSettings.Load());
        var admin = session.Get<UserAdmin>();
        ArchiveWork.Run(async () =>
        {
            await change(admin, userName).ConfigureAwait(false);
            return true;
        });
        run.Output.WriteLine(string.Format(System.Globalization.CultureInfo.InvariantCulture, doneFormat, userName));
        return 0;
    }
}
