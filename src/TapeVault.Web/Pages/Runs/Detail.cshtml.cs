using Microsoft.AspNetCore.Mvc;
using TapeVault.Web.Api;

namespace TapeVault.Web.Pages.Runs;

public sealed class RunModel(ArchiveQueries queries) : ArchivePage
{
    public RunDetail? Run { get; private set; }

    public Task<IActionResult> OnGetAsync(int id) =>
        LoadOrNotFoundAsync(async () => Run = await queries.RunAsync(id, HttpContext.RequestAborted).ConfigureAwait(false));
}
