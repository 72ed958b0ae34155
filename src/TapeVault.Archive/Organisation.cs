namespace TapeVault.Archive;

/// <summary>
/// The organisation that holds the archive: the "TapeVault:Archive:Organisation" section of appsettings.json. Bags
/// carry it in bag-info.txt as the reserved elements of RFC 8493 §2.2.2 (Source-Organization, Organization-Address,
/// Contact-Name, Contact-Phone, Contact-Email); catalogues name it as their publisher. A curator may set it on the web
/// app's settings page instead (<see cref="OrganisationSettings"/>), which takes precedence. Until its name is set,
/// bags and catalogues name no organisation (the elements are optional), and the first start says where to set it.
/// </summary>
public sealed class Organisation
{
    public const string Section = "TapeVault:Archive:Organisation";

    /// <summary>The organisation's name, written as Source-Organization.</summary>
    public string Name { get; set; } = string.Empty;

    /// <summary>Its postal address, written as Organization-Address.</summary>
    public string Address { get; set; } = string.Empty;

    /// <summary>Who to ask about the archive, written as Contact-Name.</summary>
    public string ContactName { get; set; } = string.Empty;

    public string ContactPhone { get; set; } = string.Empty;

    public string ContactEmail { get; set; } = string.Empty;

    public bool IsSet => !string.IsNullOrWhiteSpace(Name);

    /// <summary>The name as one line, or null when it is not set.</summary>
    public string? DisplayName => IsSet ? OneLine(Name) : null;

    /// <summary>Where to set it, for the messages that say it is missing.</summary>
    public const string WhereToSet =
        "a curator sets it on the web app's Settings page (/settings), or set TapeVault:Archive:Organisation (Name, and Address, ContactName, ContactPhone, ContactEmail if you like) in appsettings.json";

    /// <summary>The bag-info.txt lines of RFC 8493 §2.2.2 for the parts that are set, in the order the RFC lists them.</summary>
    public IEnumerable<(string Label, string Value)> BagInfo()
    {
        if (!IsSet)
        {
            yield break;
        }

        foreach (var (label, value) in new[]
        {
            ("Source-Organization", Name),
            ("Organization-Address", Address),
            ("Contact-Name", ContactName),
            ("Contact-Phone", ContactPhone),
            ("Contact-Email", ContactEmail),
        })
        {
            if (!string.IsNullOrWhiteSpace(value))
            {
                yield return (label, OneLine(value));
            }
        }
    }

    /// <summary>A tag value on one line (RFC 8493 §2.2.2 allows folding, but one line reads everywhere).</summary>
    public static string OneLine(string value) =>
        string.Join(", ", (value ?? string.Empty).Split(['\r', '\n'], StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries));
}
