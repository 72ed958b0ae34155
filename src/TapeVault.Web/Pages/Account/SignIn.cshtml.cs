using System.Globalization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using TapeVault.Web.Accounts;

namespace TapeVault.Web.Pages.Account;

public sealed class SignInModel(SignInGuard guard) : PageModel
{
    [BindProperty]
    public string UserName { get; set; } = string.Empty;

    [BindProperty]
    public string Password { get; set; } = string.Empty;

    [BindProperty(SupportsGet = true)]
    public string? ReturnUrl { get; set; }

    /// <summary>Seconds to wait, when the rate limiter turned this address's attempts away.</summary>
    [BindProperty(SupportsGet = true)]
    public int? Wait { get; set; }

    public void OnGet()
    {
        if (Wait is > 0 and < 100_000)
        {
            ModelState.AddModelError(string.Empty, $"Too many sign-in attempts from this address; wait {Wait.Value.ToString(CultureInfo.InvariantCulture)} seconds and try again.");
        }
    }

    public async Task<IActionResult> OnPostAsync()
    {
        var (outcome, retryAfter) = await guard.SignInAsync(HttpContext, UserName, Password).ConfigureAwait(false);
        switch (outcome)
        {
            case SignInOutcome.SignedIn:
                return LocalRedirect(Url.IsLocalUrl(ReturnUrl) ? ReturnUrl! : "/");
            case SignInOutcome.SignedInMustChangePassword:
                return LocalRedirect(PasswordChangeGate.ChangePage);
            case SignInOutcome.Throttled:
                Response.Headers.RetryAfter = Math.Max(1, (int)Math.Ceiling(retryAfter.TotalSeconds)).ToString(CultureInfo.InvariantCulture);
                Response.StatusCode = StatusCodes.Status429TooManyRequests;
                ModelState.AddModelError(string.Empty, SignInGuard.ThrottledMessage(retryAfter));
                return Page();
            default:
                Response.StatusCode = StatusCodes.Status401Unauthorized;
                ModelState.AddModelError(string.Empty, SignInGuard.RefusedMessage);
                return Page();
        }
    }
}
