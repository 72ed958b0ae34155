using Microsoft.AspNetCore.Identity;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;

namespace TapeVault.Web.Pages.Account;

public sealed class SignInModel(SignInManager<IdentityUser> signIn) : PageModel
{
    [BindProperty]
    public string UserName { get; set; } = string.Empty;

    [BindProperty]
    public string Password { get; set; } = string.Empty;

    [BindProperty(SupportsGet = true)]
    public string? ReturnUrl { get; set; }

    public void OnGet()
    {
    }

    public async Task<IActionResult> OnPostAsync()
    {
        var result = await signIn.PasswordSignInAsync(UserName, Password, isPersistent: false, lockoutOnFailure: true).ConfigureAwait(false);
        if (result.Succeeded)
        {
            return LocalRedirect(Url.IsLocalUrl(ReturnUrl) ? ReturnUrl! : "/");
        }

        ModelState.AddModelError(string.Empty, result.IsLockedOut
            ? "This account is locked for a few minutes after too many failed sign-ins."
            : "The user name or password is wrong.");
        return Page();
    }
}
