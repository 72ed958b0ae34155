using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.Filters;
using TapeVault.Archive.Accounts;

namespace TapeVault.Web;

/// <summary>
/// Every page handler that is not a GET changes something, so it needs a curator: one rule for all pages, so that a
/// new form cannot forget it. Signing in and out, and changing one's own password, are the only writes open to others.
/// </summary>
public sealed class CuratorWritesFilter : IAsyncPageFilter
{
    private static readonly HashSet<string> OpenPages = new(StringComparer.Ordinal) { "/Account/SignIn", "/Account/SignOut", "/Account/Password", "/Error" };

    public Task OnPageHandlerSelectionAsync(PageHandlerSelectedContext context) => Task.CompletedTask;

    public async Task OnPageHandlerExecutionAsync(PageHandlerExecutingContext context, PageHandlerExecutionDelegate next)
    {
        ArgumentNullException.ThrowIfNull(context);
        ArgumentNullException.ThrowIfNull(next);
        var http = context.HttpContext;
        if (!HttpMethods.IsGet(http.Request.Method) && !HttpMethods.IsHead(http.Request.Method)
            && !OpenPages.Contains(context.ActionDescriptor.ViewEnginePath)
            && !http.User.IsInRole(Roles.Curator))
        {
            context.Result = new ForbidResult();
            return;
        }

        await next().ConfigureAwait(false);
    }
}
