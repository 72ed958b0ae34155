using TapeVault.Archive.Accounts;

namespace TapeVault.Web.Accounts;

/// <summary>
/// An account signed in with a one-time password (the first curator's, or one a curator reset) may do nothing but
/// change it or sign out: pages lead to the change form, the API answers 403 with the reason.
/// </summary>
public static class PasswordChangeGate
{
    public const string ChangePage = "/account/password";

    private static readonly string[] OpenPaths = [ChangePage, "/api/account/password", "/signout", "/api/signout", "/api/antiforgery", "/Error", "/denied"];

    public static Task Check(HttpContext context, Func<Task> next)
    {
        ArgumentNullException.ThrowIfNull(context);
        ArgumentNullException.ThrowIfNull(next);
        if (!context.User.HasClaim(c => c.Type == UserAdmin.MustChangePasswordClaim)
            || OpenPaths.Any(p => context.Request.Path.Equals(p, StringComparison.OrdinalIgnoreCase)))
        {
            return next();
        }

        if (context.Request.Path.StartsWithSegments("/api", StringComparison.Ordinal))
        {
            return Results.Problem(
                statusCode: StatusCodes.Status403Forbidden,
                title: "This account signed in with a one-time password; change it first (POST /api/account/password).").ExecuteAsync(context);
        }

        context.Response.Redirect(ChangePage);
        return Task.CompletedTask;
    }
}
