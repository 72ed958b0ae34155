using Microsoft.EntityFrameworkCore;
using TapeVault.Archive;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;
using TapeVault.Archive.Jobs;

namespace TapeVault.Web.Startup;

/// <summary>The "TapeVault:Fixity" section of appsettings.json.</summary>
public sealed class FixityOptions
{
    public const string Section = "TapeVault:Fixity";

    /// <summary>Hours between scheduled audits of the whole store; 0 turns the schedule off.</summary>
    public double IntervalHours { get; set; } = 168;
}

/// <summary>Queues a fixity audit of the whole store when the last one finished more than the configured interval ago.</summary>
public sealed class FixityScheduler(IDbContextFactory<ArchiveDbContext> contexts, FixityOptions options, JobRunner runner) : BackgroundService
{
    private static readonly TimeSpan Check = TimeSpan.FromMinutes(5);

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        if (options.IntervalHours <= 0)
        {
            return;
        }

        var interval = TimeSpan.FromHours(options.IntervalHours);
        while (!stoppingToken.IsCancellationRequested)
        {
            await QueueIfDueAsync(interval, stoppingToken).ConfigureAwait(false);
            try
            {
                await Task.Delay(Check < interval ? Check : interval, stoppingToken).ConfigureAwait(false);
            }
            catch (OperationCanceledException)
            {
                return;
            }
        }
    }

    /// <summary>Queues an audit when none is waiting or running and the last finished one is older than <paramref name="interval"/>; true when it queued one.</summary>
    public async Task<bool> QueueIfDueAsync(TimeSpan interval, CancellationToken cancellation)
    {
        await using var db = await contexts.CreateDbContextAsync(cancellation).ConfigureAwait(false);
        var fixity = db.Jobs.Where(j => j.Kind == JobKinds.Fixity);
        if (await fixity.AnyAsync(j => j.State == JobState.Queued || j.State == JobState.Running, cancellation).ConfigureAwait(false))
        {
            return false;
        }

        var last = await fixity.Where(j => j.FinishedUtc != null).OrderByDescending(j => j.FinishedUtc).Select(j => j.FinishedUtc).FirstOrDefaultAsync(cancellation).ConfigureAwait(false);
        if (last is { } finished && DateTimeOffset.UtcNow - finished < interval)
        {
            return false;
        }

        if (!await db.Objects.AnyAsync(cancellation).ConfigureAwait(false))
        {
            return false;
        }

        JobQueue.Enqueue(db, JobKinds.Fixity, new ScopeParameters(null, null).ToJson(), $"{EventLog.SystemAgent}:schedule");
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        runner.Nudge();
        return true;
    }
}
