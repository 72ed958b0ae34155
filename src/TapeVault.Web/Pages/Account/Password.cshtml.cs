using Microsoft.AspNetCore.Identity;
using Microsoft.AspNetCore.Mvc;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;

namespace TapeVault.Web.Pages.Account;

/// <summary>Any signed-in account changes its own password here; one signed in with a one-time password is sent here first.</summary>
public sealed class PasswordModel(UserAdmin admin, UserManager<IdentityUser> users, SignInManager<IdentityUser> signIn) : ArchivePage
{
    [BindProperty]
    public string CurrentPassword { get; set; } = string.Empty;

    [BindProperty]
    public string NewPassword { get; set; } = string.Empty;

    [BindProperty]
    public string ConfirmPassword { get; set; } = string.Empty;

    public bool MustChange => User.HasClaim(c => c.Type == UserAdmin.MustChangePasswordClaim);

    /// <summary>Set on the page shown after a change.</summary>
    [BindProperty(SupportsGet = true)]
    public bool Changed { get; set; }

    public void OnGet()
    {
    }

    public Task<IActionResult> OnPostAsync() => TryAsync(
        async () =>
        {
            if (!string.Equals(NewPassword, ConfirmPassword, StringComparison.Ordinal))
            {
                throw new ArchiveInputException("The two new passwords differ; type the same one twice.");
            }

            await admin.ChangePasswordAsync(Agent, CurrentPassword, NewPassword, Agent).ConfigureAwait(false);
            var user = await users.FindByNameAsync(Agent).ConfigureAwait(false);
            await signIn.RefreshSignInAsync(user!).ConfigureAwait(false);
            return LocalRedirect("/account/password?changed=true");
        },
        () => Task.CompletedTask);
}
