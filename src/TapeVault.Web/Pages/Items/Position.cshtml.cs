using Microsoft.AspNetCore.Mvc;
using TapeVault.Web.Api;

namespace TapeVault.Web.Pages.Items;

/// <summary>One position of a tape's newest image with every reading of it, side by side.</summary>
public sealed class PositionModel(ArchiveQueries queries) : ArchivePage
{
    public PositionReadings? Readings { get; private set; }

    public Task<IActionResult> OnGetAsync(int id, int position) =>
        LoadOrNotFoundAsync(async () => Readings = await queries.PositionAsync(id, position, HttpContext.RequestAborted).ConfigureAwait(false));
}
