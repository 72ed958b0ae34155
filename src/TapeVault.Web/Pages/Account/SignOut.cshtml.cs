using Microsoft.AspNetCore.Identity;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;

namespace TapeVault.Web.Pages.Account;

public sealed class SignOutModel(SignInManager<IdentityUser> signIn) : PageModel
{
    public void OnGet()
    {
    }

    public async Task<IActionResult> OnPostAsync()
    {
        await signIn.SignOutAsync().ConfigureAwait(false);
        return Redirect("/signin");
    }
}
