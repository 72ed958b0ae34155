using System.Text.Json;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Export;
using TapeVault.Archive.Fixity;
using TapeVault.Archive.Runs;

namespace TapeVault.Archive.Jobs;

/// <summary>What a fixity, bag or catalogue job works on: a collection, an item, or (fixity only) everything.</summary>
public sealed record ScopeParameters(int? CollectionId, int? ItemId)
{
    public string ToJson() => JsonSerializer.Serialize(this, SettingsJson.Options);

    public static ScopeParameters FromJson(string json) =>
        JsonSerializer.Deserialize<ScopeParameters>(json, SettingsJson.Options) ?? throw new JobFailedException("The job's parameters are empty.");
}

/// <summary>The fixity audit as a background job; problems are listed in the job's summary and in the event log.</summary>
public sealed class FixityJob(IServiceScopeFactory scopes) : IJobHandler
{
    public string Kind => JobKinds.Fixity;

    public async Task<JobOutcome> RunAsync(JobRecord job, JobProgress progress, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(job);
        ArgumentNullException.ThrowIfNull(progress);
        var scope = ScopeParameters.FromJson(job.Parameters);
        await using var services = scopes.CreateAsyncScope();
        var audit = services.ServiceProvider.GetRequiredService<FixityAudit>();
        Task pending = Task.CompletedTask;
        var report = await audit.RunAsync(scope.CollectionId, job.CreatedBy, new InlineProgress<FixityProgress>(p =>
        {
            if (pending.IsCompleted && (p.Done % 10 == 0 || p.Done == p.Total))
            {
                pending = progress((double)p.Done / Math.Max(1, p.Total), $"Checked {p.Done} of {p.Total} stored objects.");
            }
        }), cancellation).ConfigureAwait(false);
        await pending.ConfigureAwait(false);
        string chain = report.Chain.FirstBreak is { } broken
            ? $"The event chain is broken at event {broken.EventId}: {broken.Reason}"
            : $"Event chain intact ({report.Chain.Events} events{(report.Chain.From is { } from ? $" walked from the last audit's checkpoint, {from}" : string.Empty)}); head now {report.HeadAfter?.ToString() ?? "none"}.";
        if (report.AllGood)
        {
            return new JobOutcome(null, $"Fixity audit: all {report.Checked} stored object(s) match their recorded SHA-256 and their records agree. {chain}");
        }

        var listed = string.Join(" ", report.Problems.Take(5).Select(p => $"{p.Problem}: {p.Kind} {p.File} of item {p.Item ?? "—"} in {p.Collection ?? "—"}."));
        return new JobOutcome(null, $"Fixity audit: {report.Problems.Count} problem(s) in {report.Checked} stored object(s), their records and the event log. {chain} {listed}{(report.Problems.Count > 5 ? " See the event log for the rest." : string.Empty)}");
    }
}

/// <summary>A bag of an item or a collection, made into the content store for download; recorded in the commit that ends the job.</summary>
public sealed class BagJob(IServiceScopeFactory scopes) : IJobHandler
{
    public string Kind => JobKinds.Bag;

    public async Task<JobOutcome> RunAsync(JobRecord job, JobProgress progress, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(job);
        ArgumentNullException.ThrowIfNull(progress);
        var scope = ScopeParameters.FromJson(job.Parameters);
        await progress(0.1, "Writing the bag.").ConfigureAwait(false);
        await using var services = scopes.CreateAsyncScope();
        var exports = services.ServiceProvider.GetRequiredService<ExportStore>();
        var record = await exports.StoreBagAsync(new BagScope(scope.ItemId, scope.CollectionId), job.CreatedBy, job, cancellation).ConfigureAwait(false);
        return new JobOutcome(record.Id, ExportStore.BagSummary(record));
    }
}

/// <summary>A collection's catalogue as a zip in the content store; recorded in the commit that ends the job.</summary>
public sealed class PublishJob(IServiceScopeFactory scopes) : IJobHandler
{
    public string Kind => JobKinds.Publish;

    public async Task<JobOutcome> RunAsync(JobRecord job, JobProgress progress, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(job);
        ArgumentNullException.ThrowIfNull(progress);
        var scope = ScopeParameters.FromJson(job.Parameters);
        int collectionId = scope.CollectionId ?? throw new JobFailedException("A catalogue is published for a collection.");
        await progress(0.1, "Writing the catalogue.").ConfigureAwait(false);
        await using var services = scopes.CreateAsyncScope();
        var exports = services.ServiceProvider.GetRequiredService<ExportStore>();
        var record = await exports.StoreCatalogueAsync(collectionId, job.CreatedBy, job, cancellation).ConfigureAwait(false);
        return new JobOutcome(record.Id, ExportStore.CatalogueSummary(record));
    }
}

/// <summary>Calls back on the reporting thread itself (Progress&lt;T&gt; would post to the pool and reorder reports).</summary>
public sealed class InlineProgress<T>(Action<T> report) : IProgress<T>
{
    public void Report(T value) => report(value);
}
