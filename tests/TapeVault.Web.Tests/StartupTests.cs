using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Jobs;
using TapeVault.Core.Synthesis;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

public sealed partial class StartupTests
{
    [Fact]
    public async Task InitialCurator_IsCreatedAtFirstStartOnly_WithAPasswordPrintedOnce()
    {
        using var folder = new ArchiveFolder();
        var settings = new Dictionary<string, string?> { ["TapeVault:Web:InitialCurator"] = "first-curator" };

        string printed = await StartAndStopAsync(folder, settings);
        var password = PrintedPassword().Match(printed);
        Assert.True(password.Success, $"No one-time password was printed: {printed}");

        printed = await StartAndStopAsync(folder, settings);
        Assert.DoesNotMatch(PrintedPassword(), printed);

        await using var app = new ArchiveAppFactory(folder, settings);
        await using (var scope = app.Scope())
        {
            var users = scope.ServiceProvider.GetRequiredService<UserManager<IdentityUser>>();
            Assert.Equal(["first-curator"], await users.Users.Select(u => u.UserName!).ToListAsync());
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            Assert.Equal(1, await db.Events.CountAsync(e => e.EventType == "account" && e.ObjectId == "first-curator"));
        }

        Assert.Equal([Roles.Curator], await app.RolesOfAsync("first-curator"));

        // The printed password signs in, and the account may write.
        using var client = new ApiClient(app.NewClient());
        await client.SignInAsync("first-curator", password.Groups["password"].Value);
        await client.NewItemAsync("FIRST-1");
    }

    [Fact]
    public async Task SeedDemo_OnAnEmptyArchive_MakesTheDemoCollection_WithItsItemsAndQueuedDecodes()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?>
        {
            ["TapeVault:Web:SeedDemo"] = "true",
            ["TapeVault:Archive:Workers"] = "1",
        });
        await using var scope = app.Scope();
        var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();

        // What is checked is the seeding itself, against the scenario's definition; no decode result is judged here.
        var collection = await db.Collections.Include(c => c.Items).ThenInclude(i => i.Captures).AsSplitQuery().SingleAsync();
        Assert.Contains(DemoTapes.Club, collection.Name, StringComparison.Ordinal);
        Assert.Equal(DemoTapes.All.Select(t => t.Accession).Order(StringComparer.Ordinal), collection.Items.Select(i => i.AccessionNumber).Order(StringComparer.Ordinal));
        foreach (var tape in DemoTapes.All)
        {
            var item = collection.Items.Single(i => i.AccessionNumber == tape.Accession);
            Assert.Equal(tape.Passes.Count, item.Captures.Count);
            Assert.Equal(tape.Passes.Count, item.Captures.Select(c => c.Sha256).Distinct().Count());
        }

        var captureIds = collection.Items.SelectMany(i => i.Captures).Select(c => c.Id).Order().ToList();
        var jobs = await db.Jobs.AsNoTracking().ToListAsync();
        Assert.All(jobs, j => Assert.Equal(JobKinds.Decode, j.Kind));
        Assert.Equal(captureIds, jobs.Select(j => j.CaptureId!.Value).Order().ToList());
        Assert.All(jobs, j => Assert.True(j.State is JobState.Queued or JobState.Running or JobState.Done, $"Job {j.Id} is {j.State}: {j.Error}"));
        Assert.Equal(captureIds.Count, app.Store.EnumerateHashes().Count());
        Assert.Empty(Directory.EnumerateFileSystemEntries(folder.TempFolder));
    }

    /// <summary>Starts the app once and returns what it printed to the console while starting.</summary>
    private static async Task<string> StartAndStopAsync(ArchiveFolder folder, Dictionary<string, string?> settings)
    {
        var original = Console.Out;
        using var captured = new StringWriter();
        Console.SetOut(TextWriter.Synchronized(captured));
        try
        {
            await using var app = new ArchiveAppFactory(folder, settings);
            _ = app.Services;
        }
        finally
        {
            Console.SetOut(original);
        }

        return captured.ToString();
    }

    [GeneratedRegex(@"user name: first-curator\s+password:\s+(?<password>\S+)")]
    private static partial Regex PrintedPassword();
}
