using System.Net.Http.Json;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Jobs;
using TapeVault.Core.Synthesis;
using TapeVault.Web.Api;
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

        // The printed password signs in, but must be changed before anything else; then the account may write.
        using var client = new ApiClient(app.NewClient());
        await client.SignInAsync("first-curator", password.Groups["password"].Value);
        using (var refused = await client.Http.PostAsJsonAsync("/api/collections", new NewCollection("Too early", null), ApiClient.Json))
        {
            Assert.Equal(System.Net.HttpStatusCode.Forbidden, refused.StatusCode);
        }

        using (var changed = await client.Http.PostAsJsonAsync("/api/account/password", new PasswordChange(password.Groups["password"].Value, "Brackenfield Spools In Winter 9"), ApiClient.Json))
        {
            Assert.Equal(System.Net.HttpStatusCode.NoContent, changed.StatusCode);
        }

        await client.NewItemAsync("FIRST-1");
    }

    [Fact]
    public async Task FirstStart_SaysWhereToSetTheOrganisation_OnlyWhileItIsNotSet()
    {
        using var folder = new ArchiveFolder();
        string unset = await StartAndStopAsync(folder, []);
        Assert.Contains("organisation is not set", unset, StringComparison.Ordinal);
        Assert.Contains("/settings", unset, StringComparison.Ordinal);
        Assert.Contains("TapeVault:Archive:Organisation", unset, StringComparison.Ordinal);

        using var other = new ArchiveFolder();
        string set = await StartAndStopAsync(other, new() { ["TapeVault:Archive:Organisation:Name"] = "Riverside Sound Archive" });
        Assert.DoesNotContain("organisation is not set", set, StringComparison.Ordinal);
    }

    [Fact]
    public async Task SeedDemo_OnAnEmptyArchive_MakesTheDemoCollection_WhoseTapesArriveDecodedAndMerged()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?>
        {
            ["TapeVault:Web:SeedDemo"] = "true",
            ["TapeVault:Archive:Workers"] = "2",
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
        var decodes = jobs.Where(j => j.Kind == JobKinds.Decode).ToList();
        Assert.Equal(captureIds, decodes.Select(j => j.CaptureId!.Value).Order().ToList());
        Assert.All(jobs, j => Assert.True(j.State is JobState.Queued or JobState.Running or JobState.Done, $"Job {j.Id} is {j.State}: {j.Error}"));

        // One merge per tape, queued after its decodes; with two workers it may be claimed while the tape's last
        // decode still runs, and must wait for it, so that every demo tape arrives with an image of all its passes.
        foreach (var item in collection.Items)
        {
            var merge = Assert.Single(jobs, j => j.Kind == JobKinds.Merge && j.ItemId == item.Id);
            Assert.All(decodes.Where(d => d.ItemId == item.Id), d => Assert.True(d.Id < merge.Id));
        }

        var deadline = DateTime.UtcNow.AddMinutes(4);
        while (await db.Jobs.AsNoTracking().AnyAsync(j => j.State == JobState.Queued || j.State == JobState.Running) && DateTime.UtcNow < deadline)
        {
            await Task.Delay(250);
        }

        var finished = await db.Jobs.AsNoTracking().ToListAsync();
        Assert.All(finished, j => Assert.True(j.State == JobState.Done, $"Job {j.Id} ({j.Kind}) is {j.State}: {j.Error}"));

        // Nothing is left half-written once the work is done (a job still running may have a file on its way in).
        Assert.Empty(Directory.EnumerateFileSystemEntries(folder.TempFolder));
        foreach (var item in collection.Items)
        {
            var image = await db.Images.AsNoTracking().SingleAsync(i => i.ItemId == item.Id);
            var runsOfImage = image.SourceRunIds.Split(',').Select(int.Parse).ToList();
            var capturesOfImage = await db.Runs.AsNoTracking().Where(r => runsOfImage.Contains(r.Id)).Select(r => r.CaptureId).ToListAsync();
            Assert.Equal(item.Captures.Select(c => c.Id).Order(), capturesOfImage.Order());
        }
    }

    /// <summary>Starts the app once and returns what it printed to the console while starting.</summary>
    private static async Task<string> StartAndStopAsync(ArchiveFolder folder, Dictionary<string, string?> settings)
    {
        // This app's own console: tests that start apps side by side must not hear each other's words.
        using var captured = new StringWriter();
        await using (var app = new ArchiveAppFactory(folder, settings, console: TextWriter.Synchronized(captured)))
        {
            _ = app.Services;
        }

        return captured.ToString();
    }

    [GeneratedRegex(@"user name: first-curator\s+password:\s+(?<password>\S+)")]
    private static partial Regex PrintedPassword();
}
