using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;

namespace TapeVault.Archive;

/// <summary>
/// The archive's organisation as bags and catalogues name it: what a curator saved on the settings page, else the
/// "TapeVault:Archive:Organisation" section of appsettings.json, else none.
/// </summary>
public sealed class OrganisationSettings(ArchiveDbContext db, ArchiveOptions options)
{
    public Task<Organisation> CurrentAsync(CancellationToken cancellation = default) => CurrentAsync(db, options, cancellation);

    public static async Task<Organisation> CurrentAsync(ArchiveDbContext db, ArchiveOptions options, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(db);
        ArgumentNullException.ThrowIfNull(options);
        var saved = await db.Organisation.AsNoTracking().FirstOrDefaultAsync(o => o.Id == OrganisationRecord.TheOne, cancellation).ConfigureAwait(false);
        return saved is null
            ? options.Organisation
            : new Organisation { Name = saved.Name, Address = saved.Address, ContactName = saved.ContactName, ContactPhone = saved.ContactPhone, ContactEmail = saved.ContactEmail };
    }

    /// <summary>Saves the organisation (a name is required) and records the change in the event log.</summary>
    public async Task<Organisation> SetAsync(Organisation value, string agent, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(value);
        string name = Field(value.Name, "The organisation's name", 200, required: true);
        string address = Field(value.Address, "The address", 500, required: false, lines: true);
        string contact = Field(value.ContactName, "The contact's name", 200, required: false);
        string phone = Field(value.ContactPhone, "The contact's phone", 60, required: false);
        string email = Field(value.ContactEmail, "The contact's e-mail address", 254, required: false);
        if (email.Length > 0 && (email.Count(c => c == '@') != 1 || email.StartsWith('@') || email.EndsWith('@') || email.Contains(' ', StringComparison.Ordinal)))
        {
            throw new ArchiveInputException($"The contact's e-mail address '{email}' is not an address of the form name@example.org.");
        }

        var row = await db.Organisation.FirstOrDefaultAsync(o => o.Id == OrganisationRecord.TheOne, cancellation).ConfigureAwait(false);
        if (row is null)
        {
            row = new OrganisationRecord { Id = OrganisationRecord.TheOne, Name = name };
            db.Organisation.Add(row);
        }

        row.Name = name;
        row.Address = address;
        row.ContactName = contact;
        row.ContactPhone = phone;
        row.ContactEmail = email;
        row.UpdatedUtc = db.Clock.GetUtcNow();
        row.UpdatedBy = agent;
        EventLog.Add(db, EventTypes.Settings, agent, "organisation", "archive", "success", $"The archive's organisation was set to '{Organisation.OneLine(name)}'.");
        await db.SaveChangesAsync(cancellation).ConfigureAwait(false);
        return await CurrentAsync(cancellation).ConfigureAwait(false);
    }

    private static string Field(string? text, string what, int maximum, bool required, bool lines = false)
    {
        string value = (text ?? string.Empty).Trim();
        if (required && value.Length == 0)
        {
            throw new ArchiveInputException($"{what} is required.");
        }

        if (value.Length > maximum)
        {
            throw new ArchiveInputException($"{what} is longer than {maximum} characters.");
        }

        if (value.Any(c => char.IsControl(c) && !(lines && c is '\n' or '\r')))
        {
            throw new ArchiveInputException($"{what} holds a control character.");
        }

        return value;
    }
}
