namespace TapeVault.Archive.Entities;

public enum ObjectKind
{
    Original,
    Image,
    Export,
}

/// <summary>A file in the content store, named by its SHA-256; written once and never modified.</summary>
public sealed class StoredObject
{
    /// <summary>Lower-case hex SHA-256 of the bytes; also the key of the object's path in the store.</summary>
    public required string Sha256 { get; set; }

    public long Size { get; set; }

    public ObjectKind Kind { get; set; }

    public DateTimeOffset StoredUtc { get; set; }
}
