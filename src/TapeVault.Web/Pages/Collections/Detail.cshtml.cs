using Microsoft.AspNetCore.Mvc;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Jobs;
using TapeVault.Web.Api;

namespace TapeVault.Web.Pages.Collections;

public sealed class CollectionModel(ArchiveQueries queries, CuratorActions actions, JobDispatcher jobs) : ArchivePage
{
    public CollectionDetail? Collection { get; private set; }

    [BindProperty]
    public NewItemForm Form { get; set; } = new();

    public IReadOnlyList<ExportView> Exports { get; private set; } = [];

    /// <summary>The newest fixity audits that covered this collection, newest first.</summary>
    public IReadOnlyList<JobView> Audits { get; private set; } = [];

    [TempData]
    public string? Message { get; set; }

    public Task<IActionResult> OnPostPublishAsync(int id) => QueueAsync(id, JobKinds.Publish, "Publishing the catalogue", "the download appears here when it is done");

    public Task<IActionResult> OnPostBagAsync(int id) => QueueAsync(id, JobKinds.Bag, "Making a bag of the whole collection", "the download appears here when it is done");

    public Task<IActionResult> OnPostFixityAsync(int id) => QueueAsync(id, JobKinds.Fixity, "Auditing the fixity of every stored file of the collection", "its result appears here under Fixity audits");

    /// <summary>How many tapes the page lists at a time (a collection of thousands comes in pages).</summary>
    public const int TapesPerPage = 200;

    /// <summary>The 0-based index of the first tape listed.</summary>
    public int TapesFrom { get; private set; }

    /// <summary>How many tapes the collection holds in all.</summary>
    public int TotalTapes { get; private set; }

    public Task<IActionResult> OnGetAsync(int id, [FromQuery(Name = "tapes")] int tapes = 0) => LoadOrNotFoundAsync(() => LoadAsync(id, tapes));

    public Task<IActionResult> OnPostAsync(int id) => TryAsync(
        async () =>
        {
            var item = await actions.CreateItemAsync(id, Form.AccessionNumber, Form.Title, Form.LabelText, Form.ConditionNotes, Form.Side, Agent).ConfigureAwait(false);
            return Redirect($"/items/{item.Id}");
        },
        () => LoadAsync(id));

    private async Task LoadAsync(int id, int tapes = 0)
    {
        TapesFrom = Math.Max(0, tapes) / TapesPerPage * TapesPerPage;
        (Collection, TotalTapes) = await queries.CollectionPageAsync(id, TapesFrom, TapesPerPage, HttpContext.RequestAborted).ConfigureAwait(false);
        if (TapesFrom > 0 && TapesFrom >= TotalTapes)
        {
            TapesFrom = Math.Max(0, TotalTapes - 1) / TapesPerPage * TapesPerPage;
            (Collection, TotalTapes) = await queries.CollectionPageAsync(id, TapesFrom, TapesPerPage, HttpContext.RequestAborted).ConfigureAwait(false);
        }

        Exports = await queries.ExportsAsync(id, null, HttpContext.RequestAborted).ConfigureAwait(false);
        Audits = await queries.FixityAuditsAsync(id, 3, HttpContext.RequestAborted).ConfigureAwait(false);
    }

    private Task<IActionResult> QueueAsync(int id, string kind, string what, string where) => TryAsync(
        async () =>
        {
            var job = await actions.QueueScopedAsync(kind, id, null, Agent).ConfigureAwait(false);
            await jobs.DispatchAsync(job, CancellationToken.None).ConfigureAwait(false);
            Message = $"{what}: job {job.Id}. Follow it on the Jobs page; {where}.";
            return Redirect($"/collections/{id}");
        },
        () => LoadAsync(id));

    public sealed class NewItemForm
    {
        public string AccessionNumber { get; set; } = string.Empty;

        public string Title { get; set; } = string.Empty;

        public string? LabelText { get; set; }

        public string? ConditionNotes { get; set; }

        public string? Side { get; set; }
    }
}
