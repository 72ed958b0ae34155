using System.Net.Http.Headers;
using System.Text;
using Deque.AxeCore.Commons;
using Deque.AxeCore.Playwright;
using Microsoft.Playwright;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.EndToEnd.Tests;

/// <summary>
/// Every page of the app, filled with a tape that has captures, runs, an image, an audit and exports, audited with
/// axe-core (Deque's accessibility engine, from outside the project) against WCAG 2.0 and 2.1 levels A and AA.
/// No serious or critical violation is allowed on any page.
/// </summary>
public sealed class AccessibilityTests
{
    /// <summary>axe-core's tags for the WCAG 2.0 and 2.1 success criteria of levels A and AA (axe-core API documentation, "runOnly").</summary>
    private static readonly List<string> WcagTags = ["wcag2a", "wcag2aa", "wcag21a", "wcag21aa"];

    [Fact]
    public async Task EveryPage_HasNoSeriousOrCriticalWcag21AaViolation()
    {
        await using var app = await AppProcess.StartAsync();
        await using var browser = await Browser.StartAsync();
        await FillAsync(app);

        var anonymous = await browser.NewPageAsync();
        var findings = new List<string>();
        foreach (var path in new[] { "/signin", "/handling", "/denied", "/Error" })
        {
            await AuditAsync(anonymous, app, path, "anonymous", findings);
        }

        var page = await SignedInAsync(browser, app, "curator", app.CuratorPassword);

        string[] pages =
        [
            "/", "/collections/1", "/items/1", "/items/1/positions/0", "/captures/1", "/captures/1?scope=whole", "/captures/1/draft", "/runs/1", "/jobs", "/users", "/account/password", "/settings", "/handling",
        ];
        foreach (var path in pages)
        {
            await AuditAsync(page, app, path, "curator", findings);
        }

        // The folded settings and the plots' tables open, so what they hide is audited too.
        await page.GotoAsync(new Uri(app.Address, "/items/1").ToString());
        foreach (var details in await page.Locator("details").AllAsync())
        {
            await details.EvaluateAsync("d => d.open = true");
        }

        await AuditCurrentAsync(page, "/items/1 (details open)", "curator", findings);

        // A viewer's pages hold no write controls, so they are laid out differently: audited too.
        var viewer = await SignedInAsync(browser, app, ViewerName, ViewerPassword);
        foreach (var path in new[] { "/", "/collections/1", "/items/1", "/captures/1", "/jobs" })
        {
            await AuditAsync(viewer, app, path, "viewer", findings);
        }

        Assert.True(findings.Count == 0, "axe-core found serious or critical WCAG 2.1 AA violations:\n" + string.Join("\n", findings));
    }

    private const string ViewerName = "volunteer";

    private const string ViewerPassword = "Axe-Audit-Viewer-Passw0rd";

    private static async Task<IPage> SignedInAsync(Browser browser, AppProcess app, string user, string password)
    {
        var page = await browser.NewPageAsync();
        await page.GotoAsync(new Uri(app.Address, "/signin").ToString());
        await page.FillAsync("#userName", user);
        await page.FillAsync("#password", password);
        await page.ClickAsync("button:has-text('Sign in')");
        await page.WaitForSelectorAsync("h1:has-text('Collections')");
        return page;
    }

    private static async Task AuditAsync(IPage page, AppProcess app, string path, string who, List<string> findings)
    {
        await page.GotoAsync(new Uri(app.Address, path).ToString());
        await page.WaitForLoadStateAsync(LoadState.NetworkIdle);
        await AuditCurrentAsync(page, path, who, findings);
    }

    private static async Task AuditCurrentAsync(IPage page, string path, string who, List<string> findings)
    {
        var result = await page.RunAxe(new AxeRunOptions { RunOnly = new RunOnlyOptions { Type = "tag", Values = WcagTags } });
        var name = "axe-" + who + "-" + new string([.. path.Select(c => char.IsAsciiLetterOrDigit(c) ? c : '_')]);
        await Browser.ShotAsync(page, name);
        foreach (var violation in result.Violations.Where(v => v.Impact is "serious" or "critical"))
        {
            findings.Add($"{path} ({who}): {violation.Id} [{violation.Impact}] {violation.Help}: "
                + string.Join(" | ", violation.Nodes.Take(3).Select(n => n.Html)));
        }
    }

    /// <summary>A collection with one tape, one capture decoded and merged, an audit and a bag, made through the API.</summary>
    private static async Task FillAsync(AppProcess app)
    {
        using var api = await ApiSession.SignInAsync(app.Address, "curator", app.CuratorPassword);
        await api.PostJsonAsync("/api/users", new { userName = ViewerName, role = "viewer", password = ViewerPassword });
        await api.PostJsonAsync("/api/collections", new { name = "Audit shelf", description = "Tapes for the *accessibility* audit." });
        await api.PostJsonAsync("/api/collections/1/items", new { accessionNumber = "AX-0001", title = "Audited tape", labelText = "side A", conditionNotes = "No **mould** seen.", side = "A" });
        var path = Path.Combine(app.Root, "audit.wav");
        TapeFile[] files = [new("AUDIT", Encoding.ASCII.GetBytes(string.Concat(Enumerable.Repeat("AUDITED BY AXE. ", 12))))];
        CaptureSynthesizer.Write(path, ProfileCatalog.BuiltIn.Get("orrin-80"), files, new ChannelDamage { SnrDb = 24, Seed = 41 });
        using (var content = new ByteArrayContent(await File.ReadAllBytesAsync(path)))
        {
            content.Headers.ContentType = new MediaTypeHeaderValue("audio/wav");
            await api.UploadAsync(1, "audit.wav", content);
        }

        await api.PostJsonAsync("/api/captures/1/decode", new { profile = "orrin-80" });
        await api.WaitForJobsAsync(TimeSpan.FromMinutes(3));
        await api.PostJsonAsync("/api/items/1/merge");
        await api.WaitForJobsAsync(TimeSpan.FromMinutes(2));
        await api.PostJsonAsync("/api/fixity?collectionId=1");
        await api.PostJsonAsync("/api/items/1/bag");
        await api.WaitForJobsAsync(TimeSpan.FromMinutes(2));
    }
}
