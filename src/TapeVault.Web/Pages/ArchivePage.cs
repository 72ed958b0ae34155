using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;

namespace TapeVault.Web.Pages;

/// <summary>What every archive page shares: who is asking, and turning the archive's refusals into messages on the page.</summary>
public abstract class ArchivePage : PageModel
{
    public bool IsCurator => User.IsInRole(Roles.Curator);

    public string Agent => User.Identity?.Name ?? "anonymous";

    /// <summary>Whether this user may have originals' bytes: their downloads and the bags that carry them.</summary>
    public bool MayDownloadOriginals => Api.ArchiveApi.MayDownloadOriginals(HttpContext.RequestServices.GetRequiredService<WebOptions>(), User);

    /// <summary>Whether this user may download an export (bags carry originals; catalogues do not).</summary>
    public bool MayDownload(Api.ExportView export)
    {
        ArgumentNullException.ThrowIfNull(export);
        return export.Kind != "bag" || MayDownloadOriginals;
    }

    /// <summary>Runs a change; a refusal becomes a message on the page (and status 400/404/409) instead of an error page.</summary>
    protected async Task<IActionResult> TryAsync(Func<Task<IActionResult>> change, Func<Task> reload)
    {
        ArgumentNullException.ThrowIfNull(change);
        ArgumentNullException.ThrowIfNull(reload);
        int status;
        try
        {
            return await change().ConfigureAwait(false);
        }
        catch (ArchiveInputException e)
        {
            ModelState.AddModelError(string.Empty, e.Message);
            status = StatusCodes.Status400BadRequest;
        }
        catch (ArchiveConflictException e)
        {
            ModelState.AddModelError(string.Empty, e.Message);
            status = StatusCodes.Status409Conflict;
        }
        catch (ArchiveNotFoundException)
        {
            return NotFound();
        }

        await reload().ConfigureAwait(false);
        Response.StatusCode = status;
        return Page();
    }

    protected async Task<IActionResult> LoadOrNotFoundAsync(Func<Task> load)
    {
        ArgumentNullException.ThrowIfNull(load);
        try
        {
            await load().ConfigureAwait(false);
            return Page();
        }
        catch (ArchiveNotFoundException)
        {
            return NotFound();
        }
    }
}
