using Microsoft.AspNetCore.Mvc;
using TapeVault.Archive.Accounts;
using TapeVault.Web.Api;

namespace TapeVault.Web.Pages;

public sealed class UsersModel(ArchiveQueries queries, UserAdmin admin) : ArchivePage
{
    public IReadOnlyList<UserView> Users { get; private set; } = [];

    public NewUserCreated? Created { get; private set; }

    public PasswordReset? Reset { get; private set; }

    /// <summary>A sentence saying what the last action did.</summary>
    public string? Done { get; private set; }

    [BindProperty]
    public string UserName { get; set; } = string.Empty;

    [BindProperty]
    public string Role { get; set; } = Roles.Viewer;

    /// <summary>The account a reset, disable or enable acts on.</summary>
    [BindProperty]
    public string Target { get; set; } = string.Empty;

    public async Task OnGetAsync()
    {
        if (IsCurator)
        {
            Users = await queries.UsersAsync().ConfigureAwait(false);
        }
    }

    public Task<IActionResult> OnPostAsync() => TryAsync(
        async () =>
        {
            var (user, password) = await admin.AddAsync(UserName, Role, null, Agent).ConfigureAwait(false);
            Created = new NewUserCreated(user.UserName!, Role, password);
            UserName = string.Empty;
            await OnGetAsync().ConfigureAwait(false);
            return Page();
        },
        OnGetAsync);

    public Task<IActionResult> OnPostResetAsync() => TryAsync(
        async () =>
        {
            var password = await admin.ResetPasswordAsync(Target, null, Agent).ConfigureAwait(false);
            Reset = new PasswordReset(Target, password!);
            await OnGetAsync().ConfigureAwait(false);
            return Page();
        },
        OnGetAsync);

    public Task<IActionResult> OnPostDisableAsync() => TryAsync(
        async () =>
        {
            await admin.DisableAsync(Target, Agent).ConfigureAwait(false);
            Done = $"Account '{Target}' was disabled; its sessions were ended.";
            await OnGetAsync().ConfigureAwait(false);
            return Page();
        },
        OnGetAsync);

    public Task<IActionResult> OnPostEnableAsync() => TryAsync(
        async () =>
        {
            await admin.EnableAsync(Target, Agent).ConfigureAwait(false);
            Done = $"Account '{Target}' was enabled.";
            await OnGetAsync().ConfigureAwait(false);
            return Page();
        },
        OnGetAsync);
}
