using Microsoft.AspNetCore.Mvc;
using TapeVault.Archive;

namespace TapeVault.Web.Pages;

/// <summary>The archive's own settings: the organisation that holds it, named in every bag and catalogue.</summary>
public sealed class SettingsModel(OrganisationSettings settings) : ArchivePage
{
    public Organisation Current { get; private set; } = new();

    public bool Saved { get; private set; }

    [BindProperty]
    public string Name { get; set; } = string.Empty;

    [BindProperty]
    public string? Address { get; set; }

    [BindProperty]
    public string? ContactName { get; set; }

    [BindProperty]
    public string? ContactPhone { get; set; }

    [BindProperty]
    public string? ContactEmail { get; set; }

    public async Task OnGetAsync()
    {
        Current = await settings.CurrentAsync(HttpContext.RequestAborted).ConfigureAwait(false);
        Name = Current.Name;
        Address = Current.Address;
        ContactName = Current.ContactName;
        ContactPhone = Current.ContactPhone;
        ContactEmail = Current.ContactEmail;
    }

    public Task<IActionResult> OnPostAsync() => TryAsync(
        async () =>
        {
            var value = new Organisation { Name = Name, Address = Address ?? string.Empty, ContactName = ContactName ?? string.Empty, ContactPhone = ContactPhone ?? string.Empty, ContactEmail = ContactEmail ?? string.Empty };
            Current = await settings.SetAsync(value, Agent, HttpContext.RequestAborted).ConfigureAwait(false);
            Saved = true;
            return Page();
        },
        async () => Current = await settings.CurrentAsync(HttpContext.RequestAborted).ConfigureAwait(false));
}
