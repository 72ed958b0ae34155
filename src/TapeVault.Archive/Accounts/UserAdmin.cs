using System.Security.Claims;
using System.Security.Cryptography;
using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Events;

namespace TapeVault.Archive.Accounts;

/// <summary>
/// Accounts (from the CLI, the first start, or a curator's page): making them, changing and resetting passwords,
/// disabling and enabling, each recorded in the event log (never with a password in it). Every change of password or
/// of the account's state renews its security stamp, which ends the sessions signed in with the old one.
/// </summary>
public sealed class UserAdmin(UserManager<IdentityUser> users, RoleManager<IdentityRole> roles, ArchiveDbContext db)
{
    /// <summary>The claim an account carries while its password is a one-time password that must be changed at sign-in.</summary>
    public const string MustChangePasswordClaim = "tapevault:must-change-password";

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
        await using var transaction = await db.Database.BeginTransactionAsync().ConfigureAwait(false);
        Check(await users.CreateAsync(user, password ?? generated!).ConfigureAwait(false));
        Check(await users.AddToRoleAsync(user, role).ConfigureAwait(false));
        if (generated is not null)
        {
            // A password someone else has seen (printed, shown on a page) is for the first sign-in only.
            Check(await users.AddClaimAsync(user, new Claim(MustChangePasswordClaim, "true")).ConfigureAwait(false));
        }

        EventLog.Add(db, EventTypes.Account, agent, "user", userName, "success",
            $"Account '{userName}' created with the {role} role{(generated is null ? "" : "; its one-time password must be changed at the first sign-in")}.");
        await db.SaveChangesAsync().ConfigureAwait(false);
        await transaction.CommitAsync().ConfigureAwait(false);
        return (user, generated);
    }

    /// <summary>The account's holder changes its password, giving the current one; a one-time password stops being one.</summary>
    public async Task ChangePasswordAsync(string userName, string currentPassword, string newPassword, string agent)
    {
        ArgumentNullException.ThrowIfNull(currentPassword);
        ArgumentNullException.ThrowIfNull(newPassword);
        var user = await FindAsync(userName).ConfigureAwait(false);
        if (!await users.CheckPasswordAsync(user, currentPassword).ConfigureAwait(false))
        {
            throw new ArchiveInputException("The current password is wrong.");
        }

        if (string.Equals(currentPassword, newPassword, StringComparison.Ordinal))
        {
            throw new ArchiveInputException("The new password is the same as the current one; choose another.");
        }

        await using var transaction = await db.Database.BeginTransactionAsync().ConfigureAwait(false);
        Check(await users.ChangePasswordAsync(user, currentPassword, newPassword).ConfigureAwait(false));
        await ClearMustChangeAsync(user).ConfigureAwait(false);
        EventLog.Add(db, EventTypes.Account, agent, "user", user.UserName!, "success", $"Account '{user.UserName}' changed its password; its other sessions were ended.");
        await db.SaveChangesAsync().ConfigureAwait(false);
        await transaction.CommitAsync().ConfigureAwait(false);
    }

    /// <summary>
    /// Gives the account a new password and ends its sessions: with none given, a one-time password (returned, to be
    /// shown once) that must be changed at the next sign-in; with one given (the command line, from standard input), that one.
    /// </summary>
    public async Task<string?> ResetPasswordAsync(string userName, string? password, string agent)
    {
        var user = await FindAsync(userName).ConfigureAwait(false);
        string? generated = password is null ? GeneratePassword() : null;
        string chosen = password ?? generated!;
        foreach (var validator in users.PasswordValidators)
        {
            Check(await validator.ValidateAsync(users, user, chosen).ConfigureAwait(false));
        }

        await using var transaction = await db.Database.BeginTransactionAsync().ConfigureAwait(false);
        Check(await users.RemovePasswordAsync(user).ConfigureAwait(false));
        Check(await users.AddPasswordAsync(user, chosen).ConfigureAwait(false));
        await ClearMustChangeAsync(user).ConfigureAwait(false);
        if (generated is not null)
        {
            Check(await users.AddClaimAsync(user, new Claim(MustChangePasswordClaim, "true")).ConfigureAwait(false));
        }

        Check(await users.UpdateSecurityStampAsync(user).ConfigureAwait(false));
        EventLog.Add(db, EventTypes.Account, agent, "user", user.UserName!, "success",
            generated is null
                ? $"Account '{user.UserName}' was given a new password; its sessions were ended."
                : $"Account '{user.UserName}' was given a one-time password, to be changed at the next sign-in; its sessions were ended.");
        await db.SaveChangesAsync().ConfigureAwait(false);
        await transaction.CommitAsync().ConfigureAwait(false);
        return generated;
    }

    /// <summary>Disables an account (it cannot sign in, and its sessions end at their next request); the last curator stays.</summary>
    public async Task DisableAsync(string userName, string agent)
    {
        var user = await FindAsync(userName).ConfigureAwait(false);
        if (string.Equals(user.UserName, agent, StringComparison.Ordinal))
        {
            throw new ArchiveConflictException("You cannot disable the account you are signed in with; ask another curator.");
        }

        if (await IsDisabledAsync(user).ConfigureAwait(false))
        {
            throw new ArchiveConflictException($"The account '{user.UserName}' is already disabled.");
        }

        if (await users.IsInRoleAsync(user, Roles.Curator).ConfigureAwait(false))
        {
            int enabledCurators = 0;
            foreach (var curator in await users.GetUsersInRoleAsync(Roles.Curator).ConfigureAwait(false))
            {
                enabledCurators += await IsDisabledAsync(curator).ConfigureAwait(false) ? 0 : 1;
            }

            if (enabledCurators <= 1)
            {
                throw new ArchiveConflictException($"The account '{user.UserName}' is the last enabled curator; enable or add another curator first.");
            }
        }

        await using var transaction = await db.Database.BeginTransactionAsync().ConfigureAwait(false);
        Check(await users.SetLockoutEnabledAsync(user, true).ConfigureAwait(false));
        Check(await users.SetLockoutEndDateAsync(user, DateTimeOffset.MaxValue).ConfigureAwait(false));
        Check(await users.UpdateSecurityStampAsync(user).ConfigureAwait(false));
        EventLog.Add(db, EventTypes.Account, agent, "user", user.UserName!, "success", $"Account '{user.UserName}' was disabled; its sessions were ended.");
        await db.SaveChangesAsync().ConfigureAwait(false);
        await transaction.CommitAsync().ConfigureAwait(false);
    }

    /// <summary>Enables a disabled account again (its password is unchanged).</summary>
    public async Task EnableAsync(string userName, string agent)
    {
        var user = await FindAsync(userName).ConfigureAwait(false);
        if (!await IsDisabledAsync(user).ConfigureAwait(false))
        {
            throw new ArchiveConflictException($"The account '{user.UserName}' is not disabled.");
        }

        await using var transaction = await db.Database.BeginTransactionAsync().ConfigureAwait(false);
        Check(await users.SetLockoutEndDateAsync(user, null).ConfigureAwait(false));
        Check(await users.ResetAccessFailedCountAsync(user).ConfigureAwait(false));
        EventLog.Add(db, EventTypes.Account, agent, "user", user.UserName!, "success", $"Account '{user.UserName}' was enabled.");
        await db.SaveChangesAsync().ConfigureAwait(false);
        await transaction.CommitAsync().ConfigureAwait(false);
    }

    /// <summary>Whether the account is disabled: Identity's lock with no end is how this archive disables one.</summary>
    public async Task<bool> IsDisabledAsync(IdentityUser user) =>
        await users.GetLockoutEndDateAsync(user).ConfigureAwait(false) is { } end && end > db.Clock.GetUtcNow();

    /// <summary>Whether the account's password is a one-time password that must be changed before anything else.</summary>
    public async Task<bool> MustChangePasswordAsync(IdentityUser user) =>
        (await users.GetClaimsAsync(user).ConfigureAwait(false)).Any(c => c.Type == MustChangePasswordClaim);

    private async Task ClearMustChangeAsync(IdentityUser user)
    {
        var claims = (await users.GetClaimsAsync(user).ConfigureAwait(false)).Where(c => c.Type == MustChangePasswordClaim).ToList();
        if (claims.Count > 0)
        {
            Check(await users.RemoveClaimsAsync(user, claims).ConfigureAwait(false));
        }
    }

    private async Task<IdentityUser> FindAsync(string userName)
    {
        if (string.IsNullOrWhiteSpace(userName))
        {
            throw new ArchiveInputException("The user name is empty.");
        }

        return await users.FindByNameAsync(userName).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no account named '{userName}'.");
    }

    /// <summary>
    /// A password of 20 characters from an unambiguous alphabet (about 118 bits), one the password policy accepts.
    /// </summary>
    public static string GeneratePassword()
    {
        string password;
        do
        {
            password = RandomPassword();
        }
        while (PasswordPolicy.Problem(password, null) is not null);
        return password;
    }

    private static string RandomPassword()
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
