using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using TapeVault.Web.Api;

namespace TapeVault.Web.Pages.Account;

public sealed class SignOutModel : PageModel
{
    public void OnGet()
    {
    }

    public async Task<IActionResult> OnPostAsync()
    {
        // Every session of the account ends, so a copied cookie is worth nothing after signing out.
        await ArchiveApi.SignOutEverywhereAsync(HttpContext).ConfigureAwait(false);
        return Redirect("/signin");
    }
}
