using Microsoft.AspNetCore.Mvc;
using TapeVault.Archive.Curation;
using TapeVault.Web.Api;

namespace TapeVault.Web.Pages.Collections;

public sealed class CollectionModel(ArchiveQueries queries, CuratorActions actions) : ArchivePage
{
    public CollectionDetail? Collection { get; private set; }

    [BindProperty]
    public NewItemForm Form { get; set; } = new();

    public Task<IActionResult> OnGetAsync(int id) => LoadOrNotFoundAsync(() => LoadAsync(id));

    public Task<IActionResult> OnPostAsync(int id) => TryAsync(
        async () =>
        {
            var item = await actions.CreateItemAsync(id, Form.AccessionNumber, Form.Title, Form.LabelText, Form.ConditionNotes, Form.Side, Agent).ConfigureAwait(false);
            return Redirect($"/items/{item.Id}");
        },
        () => LoadAsync(id));

    private async Task LoadAsync(int id) => Collection = await queries.CollectionAsync(id, HttpContext.RequestAborted).ConfigureAwait(false);

    public sealed class NewItemForm
    {
        public string AccessionNumber { get; set; } = string.Empty;

        public string Title { get; set; } = string.Empty;

        public string? LabelText { get; set; }

        public string? ConditionNotes { get; set; }

        public string? Side { get; set; }
    }
}
