namespace TapeVault.Archive.Entities;

/// <summary>The organisation as a curator set it on the settings page: one row, which takes precedence over appsettings.json.</summary>
public sealed class OrganisationRecord
{
    /// <summary>Always <see cref="TheOne"/>: the archive has one organisation.</summary>
    public int Id { get; set; }

    public const int TheOne = 1;

    public required string Name { get; set; }

    public string Address { get; set; } = string.Empty;

    public string ContactName { get; set; } = string.Empty;

    public string ContactPhone { get; set; } = string.Empty;

    public string ContactEmail { get; set; } = string.Empty;

    public DateTimeOffset UpdatedUtc { get; set; }

    public string UpdatedBy { get; set; } = string.Empty;
}
