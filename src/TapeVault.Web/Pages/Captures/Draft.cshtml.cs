using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using Microsoft.AspNetCore.Mvc;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive;
using TapeVault.Archive.Storage;
using TapeVault.Core.Audio;
using TapeVault.Core.Drafting;
using TapeVault.Core.Formats;

namespace TapeVault.Web.Pages.Captures;

/// <summary>
/// Drafts a format profile from a capture for a curator: the proposal with every guess marked, the JSON to edit, a
/// check of the edited profile against the capture, and only after a check of that very text, a save into the
/// profiles folder. Drafting and checking read a bounded stretch of the capture and stop after a time limit, so the
/// page costs the same for a short capture and an hour-long one.
/// </summary>
public sealed class DraftModel(ArchiveDbContext db, ContentStore store, ProfileCatalog profiles, ProfilesFolder folder) : ArchivePage
{
    /// <summary>The longest stretch a curator may ask for, and the time a draft or check may take.</summary>
    public const double MaximumSeconds = 600;

    public static readonly TimeSpan TimeLimit = TimeSpan.FromSeconds(90);

    public int CaptureId { get; private set; }

    public string FileName { get; private set; } = string.Empty;

    public double DurationSeconds { get; private set; }

    public int ItemId { get; private set; }

    [BindProperty]
    public double Seconds { get; set; } = CaptureStretch.DefaultSeconds;

    /// <summary>The profile's JSON as drafted, then as the curator edits it.</summary>
    [BindProperty]
    public string? ProfileJson { get; set; }

    /// <summary>The draft's side list (findings, guesses, confidence), carried through the form so the guesses stay marked.</summary>
    [BindProperty]
    public string? SideList { get; set; }

    /// <summary>The SHA-256 of the text last checked: a save must carry the text that was checked.</summary>
    [BindProperty]
    public string? CheckedHash { get; set; }

    public SideListView? Side { get; private set; }

    public ProfileCheckReport? Report { get; private set; }

    public string? Saved { get; private set; }

    public bool MaySave => folder.Path is not null;

    public string? FolderPath => folder.Path;

    public Task<IActionResult> OnGetAsync(int id) => LoadOrNotFoundAsync(() => LoadAsync(id));

    public Task<IActionResult> OnPostDraftAsync(int id) => RunAsync(id, async (path, cancellation) =>
    {
        var draft = await Task.Run(() => ProfileDrafter.Draft(path, Seconds, cancellation), cancellation).ConfigureAwait(false);
        ProfileJson = draft.Json;
        SideList = draft.SideListJson();
        CheckedHash = null;
    });

    public Task<IActionResult> OnPostCheckAsync(int id) => RunAsync(id, async (path, cancellation) =>
    {
        var profile = Parse();
        if (profile is null)
        {
            return;
        }

        Report = await Task.Run(() => ProfileCheck.Run(profile, CaptureStretch.Read(path, Seconds, cancellation: cancellation), cancellation), cancellation).ConfigureAwait(false);
        CheckedHash = Hash(ProfileJson!);
    });

    public Task<IActionResult> OnPostSaveAsync(int id) => RunAsync(id, (path, cancellation) =>
    {
        var profile = Parse();
        if (profile is null)
        {
            return Task.CompletedTask;
        }

        if (string.IsNullOrEmpty(CheckedHash) || !string.Equals(CheckedHash, Hash(ProfileJson!), StringComparison.Ordinal))
        {
            ModelState.AddModelError(string.Empty, "Check the profile against the capture before saving it: the text has changed since the last check, or was never checked.");
            return Task.CompletedTask;
        }

        if (folder.Path is null)
        {
            ModelState.AddModelError(string.Empty, "No profiles folder is configured (TapeVault:ProfilesFolder in appsettings.json); the profile was not saved.");
            return Task.CompletedTask;
        }

        string target = Path.Combine(folder.Path, profile.Id + ".json");
        if (profiles.TryGet(profile.Id, out _) || System.IO.File.Exists(target))
        {
            ModelState.AddModelError(string.Empty, $"A profile with the id '{profile.Id}' exists already; change the id before saving.");
            return Task.CompletedTask;
        }

        Directory.CreateDirectory(folder.Path);
        string temporary = target + ".saving";
        System.IO.File.WriteAllText(temporary, Normalise(ProfileJson!), new UTF8Encoding(false));
        System.IO.File.Move(temporary, target);
        Saved = target;
        return Task.CompletedTask;
    });

    private async Task<IActionResult> RunAsync(int id, Func<string, CancellationToken, Task> work)
    {
        try
        {
            await LoadAsync(id).ConfigureAwait(false);
        }
        catch (ArchiveNotFoundException)
        {
            return NotFound();
        }

        if (!(Seconds > 0) || Seconds > MaximumSeconds)
        {
            ModelState.AddModelError(nameof(Seconds), $"Read between 1 and {MaximumSeconds:0} seconds of the capture.");
            Seconds = Math.Clamp(double.IsFinite(Seconds) ? Seconds : CaptureStretch.DefaultSeconds, 1, MaximumSeconds);
            return Page();
        }

        var capture = await db.Captures.AsNoTracking().FirstAsync(c => c.Id == id, HttpContext.RequestAborted).ConfigureAwait(false);
        string path = store.PathOf(capture.Sha256);
        using var limit = CancellationTokenSource.CreateLinkedTokenSource(HttpContext.RequestAborted);
        limit.CancelAfter(TimeLimit);
        try
        {
            await work(path, limit.Token).ConfigureAwait(false);
        }
        catch (OperationCanceledException) when (!HttpContext.RequestAborted.IsCancellationRequested)
        {
            ModelState.AddModelError(string.Empty, $"Stopped after {TimeLimit.TotalSeconds:0} s: read a shorter stretch of the capture.");
        }
        catch (Exception e) when (e is ProfileDraftException or CaptureFormatException or IOException)
        {
            ModelState.AddModelError(string.Empty, e.Message);
        }

        Side = SideListView.Parse(SideList);
        return Page();
    }

    private FormatProfile? Parse()
    {
        if (string.IsNullOrWhiteSpace(ProfileJson))
        {
            ModelState.AddModelError(nameof(ProfileJson), "There is no profile to check: draft one first, or paste one.");
            return null;
        }

        try
        {
            return ProfileLoader.Parse(Normalise(ProfileJson!), "the edited draft");
        }
        catch (ProfileException e)
        {
            ModelState.AddModelError(nameof(ProfileJson), e.Message);
            return null;
        }
    }

    private async Task LoadAsync(int id)
    {
        var capture = await db.Captures.AsNoTracking().FirstOrDefaultAsync(c => c.Id == id, HttpContext.RequestAborted).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no capture {id}.");
        CaptureId = id;
        FileName = capture.OriginalFileName;
        DurationSeconds = capture.DurationSeconds;
        ItemId = capture.ItemId;
        Side = SideListView.Parse(SideList);
    }

    private static string Normalise(string text) => text.Replace("\r\n", "\n", StringComparison.Ordinal);

    private static string Hash(string text) => Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(Normalise(text))));
}

/// <summary>The draft's side list as the page shows it: the findings (guesses marked), the family scores and the confidence.</summary>
public sealed record SideListView(double Confidence, IReadOnlyList<DraftFinding> Findings, IReadOnlyList<FamilyScore> Families, IReadOnlyList<string> Notes)
{
    public static SideListView? Parse(string? json)
    {
        if (string.IsNullOrWhiteSpace(json))
        {
            return null;
        }

        try
        {
            using var document = JsonDocument.Parse(json);
            var root = document.RootElement;
            var findings = root.GetProperty("findings").EnumerateArray().Select(f => new DraftFinding(
                f.GetProperty("path").GetString() ?? string.Empty,
                f.GetProperty("value").GetString() ?? string.Empty,
                f.GetProperty("guessed").GetBoolean(),
                f.GetProperty("confidence").GetDouble(),
                f.GetProperty("evidence").GetString() ?? string.Empty)).ToList();
            var families = root.GetProperty("families").EnumerateArray().Select(f => new FamilyScore(
                f.GetProperty("family").GetString() ?? string.Empty,
                f.GetProperty("score").GetDouble(),
                f.GetProperty("evidence").GetString() ?? string.Empty)).ToList();
            var notes = root.GetProperty("notes").EnumerateArray().Select(n => n.GetString() ?? string.Empty).ToList();
            return new SideListView(root.GetProperty("confidence").GetDouble(), findings, families, notes);
        }
        catch (Exception e) when (e is JsonException or KeyNotFoundException or InvalidOperationException)
        {
            // A side list altered in the form is only lost, never trusted: the profile text is what is checked and saved.
            return null;
        }
    }
}
