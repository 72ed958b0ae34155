using Microsoft.AspNetCore.Mvc;
using TapeVault.Archive.Jobs;
using TapeVault.Web.Api;

namespace TapeVault.Web.Pages;

public sealed class JobsModel(ArchiveQueries queries, JobQueue queue) : ArchivePage
{
    public IReadOnlyList<JobView> Jobs { get; private set; } = [];

    [TempData]
    public string? Message { get; set; }

    public async Task OnGetAsync() => Jobs = await queries.JobsAsync(200, HttpContext.RequestAborted).ConfigureAwait(false);

    public async Task<IActionResult> OnPostCancelAsync(int jobId)
    {
        var job = await queue.CancelAsync(jobId).ConfigureAwait(false);
        if (job is null)
        {
            return NotFound();
        }

        Message = $"Job {jobId}: {job.ProgressText}";
        return Redirect("/jobs");
    }
}
