using Microsoft.Playwright;

namespace TapeVault.EndToEnd.Tests;

/// <summary>
/// Debian's Chromium driven by Playwright: headless, with a fresh user-data folder, never a browser download. When
/// Chromium is missing the tests fail (scripts/test installs it), they do not skip.
/// </summary>
public sealed class Browser : IAsyncDisposable
{
    public const string ChromiumPath = "/usr/bin/chromium";

    private static readonly string[] Flags =
        ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"];

    private readonly IPlaywright playwright;
    private readonly List<(IBrowserContext Context, string Profile)> contexts = [];

    private Browser(IPlaywright playwright) => this.playwright = playwright;

    /// <summary>
    /// How long one step waits (a page view, an element, an action): on two cores busy with a build or a bench beside
    /// the run, one page view of the app (a process started cold, its first views compiled by the JIT) has taken longer
    /// than 30 s. A page that never comes still fails the test.
    /// </summary>
    public static readonly TimeSpan StepTimeout = TimeSpan.FromSeconds(90);

    /// <summary>
    /// How a step that follows a form's redirect waits for the new page: until its document is parsed, not until every
    /// resource has loaded. The next step waits for the element it acts on anyway; the page's load event has once not
    /// been seen within <see cref="StepTimeout"/> on two cores at a load of 130, though all its requests had ended.
    /// </summary>
    public static PageWaitForURLOptions Arrived => new() { WaitUntil = WaitUntilState.DOMContentLoaded };

    /// <summary>Screenshots go here (the test results folder at the top of the repository), one per step, for people to look at.</summary>
    public static string ScreenshotFolder { get; } = Directory.CreateDirectory(Path.Combine(AppProcess.RepositoryRoot(), "TestResults", "browser")).FullName;

    public static async Task<Browser> StartAsync()
    {
        if (!File.Exists(ChromiumPath))
        {
            throw new InvalidOperationException($"{ChromiumPath} is missing: scripts/test installs Debian's chromium package.");
        }

        return new Browser(await Playwright.CreateAsync());
    }

    /// <summary>A new browser with its own empty profile (no cookies shared with any other).</summary>
    public async Task<IPage> NewPageAsync()
    {
        var profile = Directory.CreateTempSubdirectory("tapevault-chromium-").FullName;
        var context = await playwright.Chromium.LaunchPersistentContextAsync(profile, new BrowserTypeLaunchPersistentContextOptions
        {
            ExecutablePath = ChromiumPath,
            Headless = true,
            Args = Flags,
            AcceptDownloads = true,
            ViewportSize = new ViewportSize { Width = 1280, Height = 900 },
        });
        contexts.Add((context, profile));
        context.SetDefaultTimeout((float)StepTimeout.TotalMilliseconds);
        context.SetDefaultNavigationTimeout((float)StepTimeout.TotalMilliseconds);
        return context.Pages.Count > 0 ? context.Pages[0] : await context.NewPageAsync();
    }

    public static Task ShotAsync(IPage page, string name) =>
        page.ScreenshotAsync(new PageScreenshotOptions { Path = Path.Combine(ScreenshotFolder, $"{name}.png"), FullPage = true });

    public async ValueTask DisposeAsync()
    {
        foreach (var (context, profile) in contexts)
        {
            await context.CloseAsync();
            try
            {
                Directory.Delete(profile, recursive: true);
            }
            catch (IOException)
            {
                // Chromium may still hold a lock file for a moment; a leftover temporary profile is harmless.
            }
        }

        playwright.Dispose();
    }
}
