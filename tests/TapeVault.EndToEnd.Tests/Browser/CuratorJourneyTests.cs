using System.Diagnostics;
using System.IO.Compression;
using System.Security.Cryptography;
using System.Text;
using Microsoft.Playwright;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.EndToEnd.Tests;

/// <summary>
/// The whole job as a new curator does it, in a real browser against the app running as a real process. The app's
/// pages reload themselves (the tape's page after an upload, and once the jobs it follows are over); every step waits
/// for such a reload to land, or acts on a page that has none to come, so that no step straddles one.
/// </summary>
public sealed class CuratorJourneyTests(ITestOutputHelper log)
{
    private const string Collection = "Browser test shelf";
    private const string Accession = "WEB-0001";

    private static readonly IReadOnlyList<TapeFile> Files =
    [
        new("HELLO", Encoding.ASCII.GetBytes(string.Concat(Enumerable.Repeat("A TAPE READ IN A BROWSER TEST. ", 10)))),
    ];

    [Fact]
    public async Task CuratorGoesFromSignInToAPublishedCatalogue()
    {
        await using var app = await AppProcess.StartAsync();
        await using var browser = await Browser.StartAsync();
        var page = await browser.NewPageAsync();
        var captures = WriteCaptures(app.Root);

        await SignInAsync(page, app, "curator", app.CuratorPassword);
        await Browser.ShotAsync(page, "01-collections");

        await page.FillAsync("#name", Collection);
        await page.FillAsync("#description", "Made by the browser test.");
        await page.ClickAsync("button:has-text('Create collection')");
        await page.WaitForURLAsync("**/collections/*", Browser.Arrived);
        await page.FillAsync("#accession", Accession);
        await page.FillAsync("#title", "Browser test tape");
        await page.FillAsync("#condition", "Clean shell, no mould seen.");
        await page.ClickAsync("button:has-text('Add tape')");
        await page.WaitForURLAsync("**/items/*", Browser.Arrived);
        var itemUrl = page.Url;

        var storedCaptures = page.Locator("table.grid >> tbody >> tr:has(a[download])");
        for (int stored = 0; stored < captures.Count; stored++)
        {
            var capture = captures[stored];
            await page.SetInputFilesAsync("#file", capture);
            await page.FillAsync("#deck", "bench deck");

            // The form decodes with the whole bank unless told not to; this journey decodes by hand below.
            Assert.NotEqual(string.Empty, await page.InputValueAsync("#decodeProfile"));
            await page.SelectOptionAsync("#decodeProfile", string.Empty);

            // What the upload's progress line and bar say when it ends, read by the page itself the moment they change:
            // 1.2 s later the page reloads to list the new capture, so a look taken after that could find them gone.
            await page.EvaluateAsync(
                """
                () => {
                  const text = document.getElementById('upload-text');
                  window.uploadEnded = new Promise(resolve => new MutationObserver(() => {
                    if (/Stored as capture|Not stored|cut off/.test(text.textContent)) {
                      resolve([text.textContent, String(document.getElementById('upload-bar').value)]);
                    }
                  }).observe(text, { childList: true, characterData: true, subtree: true }));
                }
                """);
            var ended = page.EvaluateAsync<string[]>("() => window.uploadEnded");
            await page.ClickAsync("#upload button[type=submit]");
            var said = await ended.WaitAsync(Browser.StepTimeout);
            Assert.Contains("Stored as capture", said[0], StringComparison.Ordinal);
            Assert.Equal("100", said[1]);

            // The page's own reload lists the new capture; the screenshot and the steps below come after it.
            await storedCaptures.Nth(stored).WaitForAsync();
            await Browser.ShotAsync(page, $"02-uploaded-{Path.GetFileNameWithoutExtension(capture)}");
            await page.GotoAsync(itemUrl);

            // What the upload did stays on the tape's page, across the reload, until the curator dismisses it.
            var notice = page.Locator("#upload-notice .upload-message");
            Assert.Contains("Stored as capture", await notice.InnerTextAsync(), StringComparison.Ordinal);
            await page.GotoAsync(itemUrl);
            Assert.Contains("Stored as capture", await notice.InnerTextAsync(), StringComparison.Ordinal);
            await page.ClickAsync("#upload-notice button:has-text('Dismiss')");
            Assert.Equal(0, await notice.CountAsync());
            await page.GotoAsync(itemUrl);
            Assert.Equal(0, await notice.CountAsync());
        }

        Assert.Equal(2, await storedCaptures.CountAsync());

        // Decode each capture with the whole default bank (every setting ticked), one after the other: the tape's page
        // follows its running jobs and reloads itself when they end, which would undo a choice made on it meanwhile.
        int queued = 0;
        foreach (var option in await page.Locator("#captureId option").AllAsync())
        {
            await page.SelectOptionAsync("#captureId", (await option.GetAttributeAsync("value"))!);
            await page.SelectOptionAsync("#profile", "orrin-80");
            Assert.Equal(8, await page.Locator("fieldset input[type=checkbox]:checked").CountAsync());
            await page.ClickAsync("button:has-text('Start decode')");
            await WaitForJobsAsync(page, app, ++queued, $"03-jobs-decoded-{queued}");
            await page.GotoAsync(itemUrl);
        }

        // The tape timeline before a merge: both captures have lanes, and the settings that read nothing checkable
        // are folded away behind a count rather than drawn.
        await page.GotoAsync(itemUrl);
        Assert.Equal(1, await page.Locator("h2#timeline").CountAsync());
        var captureTitles = await page.Locator("h2#timeline ~ div.timeline-scroll svg.timeline text.tl-capture").AllTextContentsAsync();
        Assert.Equal(2, captureTitles.Count(t => t.StartsWith("Capture ", StringComparison.Ordinal)));
        Assert.True(await page.Locator("svg.timeline text.tl-lane").CountAsync() > 0);
        await Browser.ShotAsync(page, "04-timeline");

        // The capture page: the waveform, the zoom with the detector's decisions, the pulse lengths and the speed,
        // each a figure with a table behind it for those who cannot see the plot.
        // Its sections are counted once the whole document is parsed: the first heading appears while the rest of the
        // page (its plots) is still arriving.
        await page.ClickAsync("a[href$='/captures/1']");
        await page.WaitForURLAsync("**/captures/1", Browser.Arrived);
        await page.WaitForSelectorAsync("h2#overview");
        foreach (var section in new[] { "overview", "zoom", "pulses", "speed" })
        {
            Assert.True(await page.Locator($"h2#{section}").CountAsync() == 1, $"no {section} section");
        }

        Assert.True(await page.Locator("figure.plot svg").CountAsync() >= 4);
        Assert.True(await page.Locator("figure.plot details table").CountAsync() >= 4);
        await Browser.ShotAsync(page, "04b-capture-page");
        await page.GotoAsync(itemUrl);

        // Merge, then download the image and check its SHA-256 against the one the page shows.
        await page.ClickAsync("button:has-text('Merge all passes')");
        await WaitForJobsAsync(page, app, ++queued, "05-jobs-merged");
        await page.GotoAsync(itemUrl);
        var shown = (await page.InnerTextAsync("[data-image-sha256]")).Trim();
        var download = await page.RunAndWaitForDownloadAsync(() => page.ClickAsync("[data-image-download]"));
        var imagePath = Path.Combine(app.Root, "downloaded.tvimg");
        await download.SaveAsAsync(imagePath);
        Assert.Equal(shown, Convert.ToHexStringLower(SHA256.HashData(await File.ReadAllBytesAsync(imagePath))));
        Assert.Contains("0 missing", await page.InnerTextAsync("main"), StringComparison.Ordinal);
        await Browser.ShotAsync(page, "06-image");

        // After the merge the image is the timeline's top lane; a position opens its readings side by side.
        Assert.True(await page.Locator("svg.timeline a.tl-position").CountAsync() > 0);
        await page.Locator("svg.timeline a.tl-position").First.ClickAsync();
        await page.WaitForSelectorAsync("h2:has-text('Every reading of this block')");
        Assert.True(await page.Locator("table.grid tbody tr").CountAsync() >= 2);
        Assert.Contains("yes", await page.InnerTextAsync("table.grid tbody"), StringComparison.Ordinal);
        await Browser.ShotAsync(page, "06b-position");
        await page.GotoAsync(itemUrl);

        // Publish the catalogue, download it and open it from disk.
        await page.ClickAsync($"a:has-text('{Collection}')");
        await page.ClickAsync("button:has-text('Publish the catalogue')");
        await WaitForJobsAsync(page, app, ++queued, "07-jobs-published");
        await page.GotoAsync(new Uri(app.Address, "/collections/1").ToString());
        var zip = await page.RunAndWaitForDownloadAsync(() => page.ClickAsync("a[data-export=catalogue]"));
        var zipPath = Path.Combine(app.Root, "catalogue.zip");
        await zip.SaveAsAsync(zipPath);
        var site = Path.Combine(app.Root, "site");
        ZipFile.ExtractToDirectory(zipPath, site);
        await page.GotoAsync(new Uri(Path.Combine(site, "catalogue", "index.html")).AbsoluteUri);
        Assert.Equal(Collection, (await page.InnerTextAsync("h1")).Trim());
        await Browser.ShotAsync(page, "08-catalogue-index");
        await page.ClickAsync($"a:has-text('{Accession}')");
        Assert.Contains("clean", await page.InnerTextAsync("[data-count=clean] >> xpath=.."), StringComparison.Ordinal);
        Assert.Equal(shown, (await page.Locator("code").Filter(new LocatorFilterOptions { HasText = shown }).First.InnerTextAsync()).Trim());
        await Browser.ShotAsync(page, "09-catalogue-item");
    }

    [Fact]
    public async Task ViewerSeesNoWriteControlAndTheApiRefusesTheirWrites()
    {
        await using var app = await AppProcess.StartAsync();
        await using var browser = await Browser.StartAsync();
        var curator = await browser.NewPageAsync();
        await SignInAsync(curator, app, "curator", app.CuratorPassword);
        await curator.FillAsync("#name", Collection);
        await curator.ClickAsync("button:has-text('Create collection')");
        await curator.WaitForURLAsync("**/collections/*", Browser.Arrived);
        await curator.FillAsync("#accession", Accession);
        await curator.FillAsync("#title", "Browser test tape");
        await curator.ClickAsync("button:has-text('Add tape')");
        await curator.WaitForURLAsync("**/items/*", Browser.Arrived);
        var itemUrl = curator.Url;

        await curator.GotoAsync(new Uri(app.Address, "/users").ToString());
        await curator.FillAsync("#userName", "volunteer");
        await curator.SelectOptionAsync("#role", "viewer");
        await curator.ClickAsync("button:has-text('Create account')");
        var password = (await curator.InnerTextAsync(".notice code")).Trim();
        await Browser.ShotAsync(curator, "10-account-made");

        // The shown password is for the first sign-in only: the form to choose one's own comes first.
        var viewer = await browser.NewPageAsync();
        await viewer.GotoAsync(app.Address.ToString());
        await viewer.WaitForURLAsync("**/signin**", Browser.Arrived);
        await viewer.FillAsync("#userName", "volunteer");
        await viewer.FillAsync("#password", password);
        await viewer.ClickAsync("button:has-text('Sign in')");
        await viewer.WaitForURLAsync("**/account/password", Browser.Arrived);
        await Browser.ShotAsync(viewer, "11-one-time-password");
        await viewer.FillAsync("#currentPassword", password);
        await viewer.FillAsync("#newPassword", "brass hinges on a cedar box");
        await viewer.FillAsync("#confirmPassword", "brass hinges on a cedar box");
        await viewer.ClickAsync("button:has-text('Change password')");
        await viewer.WaitForSelectorAsync(".notice:has-text('Your password was changed')");
        foreach (var path in new[] { "/", "/collections/1", itemUrl, "/jobs" })
        {
            await viewer.GotoAsync(path.StartsWith("http", StringComparison.Ordinal) ? path : new Uri(app.Address, path).ToString());
            // The only form a viewer sees is the one that signs them out.
            Assert.Equal(0, await viewer.Locator("main form").CountAsync());
            Assert.Equal(0, await viewer.Locator("main button").CountAsync());
        }

        await Browser.ShotAsync(viewer, "12-viewer-item");
        int status = await viewer.EvaluateAsync<int>(
            """
            async () => {
              const token = (await (await fetch('/api/antiforgery')).json()).token;
              const response = await fetch('/api/collections', {
                method: 'POST',
                headers: { 'Content-Type': 'application/json', 'X-TapeVault-Antiforgery': token },
                body: JSON.stringify({ name: 'not allowed' })
              });
              return response.status;
            }
            """);
        Assert.Equal(403, status);
    }

    private static async Task SignInAsync(IPage page, AppProcess app, string user, string password)
    {
        await page.GotoAsync(app.Address.ToString());
        await page.WaitForURLAsync("**/signin**", Browser.Arrived);
        await page.FillAsync("#userName", user);
        await page.FillAsync("#password", password);
        await page.ClickAsync("button:has-text('Sign in')");
        await page.WaitForSelectorAsync("h1:has-text('Collections')");
    }

    /// <summary>
    /// Opens the jobs page and watches the live progress until it lists the <paramref name="count"/> jobs the journey
    /// has queued so far and each has ended (done, failed or cancelled); then each must be done at 100 %, or the test
    /// fails with what the job said.
    /// </summary>
    private async Task WaitForJobsAsync(IPage page, AppProcess app, int count, string shot)
    {
        var jobsPage = new Uri(app.Address, "/jobs").ToString();
        var clock = Stopwatch.StartNew();
        await page.GotoAsync(jobsPage);

        // The wait is on the jobs' own state, within one step's timeout (each wait took 2–5 s at a load average of 70
        // on 2 cores, 8–22 s at 100); a job that fails ends the wait at once and the checks below say why. Polled on a
        // timer, not on animation frames.
        await page.WaitForFunctionAsync(
            """
            count => {
              const states = [...document.querySelectorAll('tr[data-job] .job-state')].map(s => s.textContent.trim());
              return states.length >= count && states.every(s => s === 'done' || s === 'failed' || s === 'cancelled');
            }
            """,
            count,
            new PageWaitForFunctionOptions { PollingInterval = 250 });
        log.WriteLine($"{shot}: {count} job(s) ended {clock.Elapsed.TotalSeconds:0.0} s after the jobs page was asked for");

        // The page reloads itself once its jobs are over; open it afresh (again if that reload cut in) so the
        // screenshot and the checks below see a settled page.
        for (int attempt = 0; ; attempt++)
        {
            try
            {
                await page.GotoAsync(jobsPage);
                break;
            }
            catch (PlaywrightException) when (attempt < 3)
            {
                await Task.Delay(500);
            }
        }

        await Browser.ShotAsync(page, shot);
        var rows = await page.Locator("tr[data-job]").AllAsync();
        Assert.Equal(count, rows.Count);
        foreach (var row in rows)
        {
            string state = (await row.Locator(".job-state").InnerTextAsync()).Trim();
            string text = (await row.Locator(".job-text").InnerTextAsync()).Trim();
            Assert.True(state == "done", $"job {await row.GetAttributeAsync("data-job")} ended {state}: {text}");
            Assert.Equal(1.0, await row.Locator("progress").EvaluateAsync<double>("bar => bar.value"));
        }
    }

    /// <summary>Two passes of one orrin-80 tape from the channel model (the written bytes are the ground truth).</summary>
    private static List<string> WriteCaptures(string folder)
    {
        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");
        var paths = new List<string>();
        var damage = new[] { new ChannelDamage { SnrDb = 26, Seed = 31 }, new ChannelDamage { SnrDb = 20, Speed = 1.02, Seed = 32 } };
        for (int i = 0; i < damage.Length; i++)
        {
            var path = Path.Combine(folder, $"web-pass{i + 1}.wav");
            CaptureSynthesizer.Write(path, profile, Files, damage[i]);
            paths.Add(path);
        }

        return paths;
    }
}
