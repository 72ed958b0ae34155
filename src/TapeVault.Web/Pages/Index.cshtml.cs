using Microsoft.AspNetCore.Mvc;
using TapeVault.Archive;
using TapeVault.Archive.Curation;
using TapeVault.Web.Api;

namespace TapeVault.Web.Pages;

public sealed class IndexModel(ArchiveQueries queries, CuratorActions actions, OrganisationSettings organisation) : ArchivePage
{
    /// <summary>The archive's organisation, for the curators' reminder while it is not set.</summary>
    public Organisation Organisation { get; private set; } = new();

    public IReadOnlyList<CollectionSummary> Collections { get; private set; } = [];

    [BindProperty]
    public string Name { get; set; } = string.Empty;

    [BindProperty]
    public string? Description { get; set; }

    public async Task OnGetAsync()
    {
        Collections = await queries.CollectionsAsync(HttpContext.RequestAborted).ConfigureAwait(false);
        Organisation = await organisation.CurrentAsync(HttpContext.RequestAborted).ConfigureAwait(false);
    }

    public Task<IActionResult> OnPostAsync() => TryAsync(
        async () =>
        {
            var created = await actions.CreateCollectionAsync(Name, Description, Agent).ConfigureAwait(false);
            return Redirect($"/collections/{created.Id}");
        },
        OnGetAsync);
}
