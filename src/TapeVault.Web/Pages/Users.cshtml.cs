using Microsoft.AspNetCore.Mvc;
using TapeVault.Archive.Accounts;
using TapeVault.Web.Api;

namespace TapeVault.Web.Pages;

public sealed class UsersModel(ArchiveQueries queries, UserAdmin admin) : ArchivePage
{
    public IReadOnlyList<UserView> Users { get; private set; } = [];

    public NewUserCreated? Created { get; private set; }

    [BindProperty]
    public string UserName { get; set; } = string.Empty;

    [BindProperty]
    public string Role { get; set; } = Roles.Viewer;

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
}
