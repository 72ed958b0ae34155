using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Quartz;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Jobs;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>The fixity audit's cron trigger follows TapeVault:Fixity:Schedule and queues one audit when it fires.</summary>
public sealed class FixityScheduleTests
{
    [Fact]
    public async Task TheCronTriggerFollowsTheSetting_KeptWhenUnchanged_ReplacedWhenChanged_RemovedWhenEmpty()
    {
        await using var archive = await JobArchive.CreateAsync();
        DateTimeOffset firstStart;
        using (var node = archive.Worker(fixitySchedule: "0 30 2 ? * MON"))
        {
            await node.StartAsync();
            var trigger = await CronTriggerAsync(node);
            Assert.Equal("0 30 2 ? * MON", trigger.CronExpressionString);

            // The next firing, counted with the BCL's calendar rather than Quartz's: the next Monday at 02:30 local time.
            Assert.Equal(NextLocal(DateTimeOffset.Now, DayOfWeek.Monday, new TimeSpan(2, 30, 0)), trigger.NextFireTimeUtc);
            firstStart = trigger.StartTimeUtc;
            await node.StopAsync();
        }

        using (var node = archive.Worker(fixitySchedule: "0 30 2 ? * MON"))
        {
            await node.StartAsync();
            Assert.Equal(firstStart, (await CronTriggerAsync(node)).StartTimeUtc);
            await node.StopAsync();
        }

        using (var node = archive.Worker(fixitySchedule: "0 0 4 ? * SAT"))
        {
            await node.StartAsync();
            var trigger = await CronTriggerAsync(node);
            Assert.Equal("0 0 4 ? * SAT", trigger.CronExpressionString);
            Assert.Equal(NextLocal(DateTimeOffset.Now, DayOfWeek.Saturday, new TimeSpan(4, 0, 0)), trigger.NextFireTimeUtc);
            await node.StopAsync();
        }

        using (var node = archive.Worker(fixitySchedule: string.Empty))
        {
            await node.StartAsync();
            var scheduler = await node.Services.GetRequiredService<ISchedulerFactory>().GetScheduler();
            Assert.False(await scheduler.Exists(JobEngine.FixityAuditKey));
            await node.StopAsync();
        }
    }

    [Fact]
    public async Task AScheduleThatIsNoCronExpressionIsRefusedAtStart_NamingTheSetting()
    {
        await using var archive = await JobArchive.CreateAsync();
        var refused = Assert.Throws<InvalidOperationException>(() => archive.Worker(fixitySchedule: "every sunday"));
        Assert.Contains("TapeVault:Fixity:Schedule", refused.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task WhenTheTriggerFires_OneAuditOfTheWholeStoreIsQueuedAndRun()
    {
        await using var archive = await JobArchive.CreateAsync();
        using var node = archive.Worker(fixitySchedule: "0 0 3 ? * SUN");
        await node.StartAsync();
        var scheduler = await node.Services.GetRequiredService<ISchedulerFactory>().GetScheduler();
        await scheduler.TriggerJob(JobEngine.FixityAuditKey);

        int id = 0;
        var deadline = DateTime.UtcNow.AddSeconds(60);
        while (id == 0)
        {
            Assert.True(DateTime.UtcNow < deadline, "The fired trigger queued no audit.");
            await Task.Delay(50);
            await using var db = archive.NewContext();
            id = await db.Jobs.Where(j => j.Kind == JobKinds.Fixity).Select(j => j.Id).FirstOrDefaultAsync();
        }

        var audit = await archive.WaitAsync(id, j => j.State == JobState.Done, "done");
        await node.StopAsync();
        Assert.Equal(FixityScheduleJob.Agent, audit.CreatedBy);
        Assert.Equal(new ScopeParameters(null, null), ScopeParameters.FromJson(audit.Parameters));
        Assert.StartsWith("Fixity audit: all 0 stored object(s) match", audit.ProgressText, StringComparison.Ordinal);
    }

    [Fact]
    public async Task AnAuditAlreadyWaitingIsNotQueuedTwice()
    {
        await using var archive = await JobArchive.CreateAsync();
        using var pages = archive.PagesNode();
        var schedule = pages.GetRequiredService<FixityScheduleJob>();
        Assert.True(await schedule.QueueAuditAsync(CancellationToken.None));
        Assert.False(await schedule.QueueAuditAsync(CancellationToken.None));
        await using var db = archive.NewContext();
        Assert.Equal(1, await db.Jobs.CountAsync(j => j.Kind == JobKinds.Fixity));
    }

    private static async Task<ICronTrigger> CronTriggerAsync(IHost node)
    {
        var scheduler = await node.Services.GetRequiredService<ISchedulerFactory>().GetScheduler();
        return Assert.IsAssignableFrom<ICronTrigger>(await scheduler.GetTrigger(FixitySchedule.TriggerKey));
    }

    /// <summary>The first moment after <paramref name="after"/> that falls on <paramref name="day"/> at <paramref name="time"/>, local time.</summary>
    private static DateTimeOffset NextLocal(DateTimeOffset after, DayOfWeek day, TimeSpan time)
    {
        var local = TimeZoneInfo.ConvertTime(after, TimeZoneInfo.Local);
        for (int add = 0; add <= 7; add++)
        {
            var date = local.Date.AddDays(add);
            if (date.DayOfWeek != day)
            {
                continue;
            }

            var candidate = date + time;
            var at = new DateTimeOffset(candidate, TimeZoneInfo.Local.GetUtcOffset(candidate));
            if (at > after)
            {
                return at.ToUniversalTime();
            }
        }

        throw new InvalidOperationException("No such day within a week.");
    }
}
