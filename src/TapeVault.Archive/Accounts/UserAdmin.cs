using System.Security.Cryptography;
using Microsoft.AspNetCore.Identity;
using TapeVault.Archive.Events;

namespace TapeVault.Archive.Accounts;

/// <summary>Creating accounts (from the CLI, the first start, or a curator's page), each recorded in the event log.</summary>
public sealed class UserAdmin(UserManager<IdentityUser> users, RoleManager<IdentityRole> roles, ArchiveDbContext db)
{
    public async Task EnsureRolesAsync()
    {
        foreach (var role in Roles.All)
        {
            if (!await roles.RoleExistsAsync(role).ConfigureAwait(false))
            {
                Check(await roles.CreateAsync(new IdentityRole(role)).ConfigureAwait(false));
            }
        }
    }

    /// <summary>Creates an account; with no password given, makes a random one and returns it (to be shown once).</summary>
    public async Task<(IdentityUser User, string? GeneratedPassword)> AddAsync(string userName, string role, string? password, string agent)
    {
        if (!Roles.All.Contains(role))
        {
            throw new ArchiveInputException($"The role must be '{Roles.Curator}' or '{Roles.Viewer}', not '{role}'.");
        }

        if (string.IsNullOrWhiteSpace(userName))
        {
            throw new ArchiveInputException("The user name is empty.");
        }

        if (await users.FindByNameAsync(userName).ConfigureAwait(false) is not null)
        {
            throw new ArchiveConflictException($"There is already an account named '{userName}'.");
        }

        await EnsureRolesAsync().ConfigureAwait(false);
        string? generated = password is null ? GeneratePassword() : null;
        var user = new IdentityUser(userName);
        Check(await users.CreateAsync(user, password ?? generated!).ConfigureAwait(false));
        Check(await users.AddToRoleAsync(user, role).ConfigureAwait(false));
        EventLog.Add(db, EventTypes.Account, agent, "user", userName, "success", $"Account '{userName}' created with the {role} role.");
        await db.SaveChangesAsync().ConfigureAwait(false);
        return (user, generated);
    }

    /// <summary>A password of 20 characters from an unambiguous alphabet, with every class Identity asks for.</summary>
    public static string GeneratePassword()
    {
        const string lower = "abcdefghijkmnpqrstuvwxyz";
        const string upper = "ABCDEFGHJKLMNPQRSTUVWXYZ";
        const string digits = "23456789";
        const string symbols = "-_.!";
        const string all = lower + upper + digits + symbols;
        var chars = new char[20];
        chars[0] = lower[RandomNumberGenerator.GetInt32(lower.Length)];
        chars[1] = upper[RandomNumberGenerator.GetInt32(upper.Length)];
        chars[2] = digits[RandomNumberGenerator.GetInt32(digits.Length)];
        chars[3] = symbols[RandomNumberGenerator.GetInt32(symbols.Length)];
        for (int i = 4; i < chars.Length; i++)
        {
            chars[i] = all[RandomNumberGenerator.GetInt32(all.Length)];
        }

        RandomNumberGenerator.Shuffle(chars.AsSpan());
        return new string(chars);
    }

    private static void Check(IdentityResult result)
    {
        if (!result.Succeeded)
        {
            throw new ArchiveInputException(string.Join(" ", result.Errors.Select(e => e.Description)));
        }
    }
}
