using Microsoft.AspNetCore.Identity;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault users list: the web app's accounts with their roles.</summary>
public sealed class UsersListCommand : CliCommand
{
    private readonly ArchiveLocation archive = new();

    public UsersListCommand()
        : base("list", "List the web app's accounts and their roles.")
    {
        archive.AddTo(this);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        using var session = archive.Open(run, CliSettings.Load());
        var users = session.Get<UserManager<IdentityUser>>();
        foreach (var user in users.Users.OrderBy(u => u.UserName).ToList())
        {
            var roles = users.GetRolesAsync(user).GetAwaiter().GetResult();
            run.Output.WriteLine($"{user.UserName,-24} {string.Join(",", roles)}");
        }

        return 0;
    }
}
