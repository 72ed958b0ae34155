using Microsoft.AspNetCore.Identity;
using TapeVault.Archive.Accounts;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault users list: the web app's accounts with their roles and state.</summary>
public sealed class UsersListCommand : CliCommand
{
    private readonly ArchiveLocation archive = new();

    public UsersListCommand()
        : base("list", "List the web app's accounts, their roles, and whether each is disabled or has a one-time password.")
    {
        archive.AddTo(this);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        using var session = archive.Open(run, CliSettings.Load());
        var users = session.Get<UserManager<IdentityUser>>();
        var admin = session.Get<UserAdmin>();
        foreach (var user in users.Users.OrderBy(u => u.UserName).ToList())
        {
            var roles = users.GetRolesAsync(user).GetAwaiter().GetResult();
            string state = admin.IsDisabledAsync(user).GetAwaiter().GetResult() ? "disabled"
                : admin.MustChangePasswordAsync(user).GetAwaiter().GetResult() ? "one-time password" : "enabled";
            run.Output.WriteLine($"{user.UserName,-24} {string.Join(",", roles),-10} {state}");
        }

        return 0;
    }
}
