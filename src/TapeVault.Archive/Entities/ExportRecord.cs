namespace TapeVault.Archive.Entities;

/// <summary>A bag or a published catalogue made by the web app and kept in the content store (so the fixity audit covers it).</summary>
public sealed class ExportRecord
{
    public int Id { get; set; }

    /// <summary>bag or catalogue.</summary>
    public required string Kind { get; set; }

    public int? CollectionId { get; set; }

    public int? ItemId { get; set; }

    public required string Sha256 { get; set; }

    public StoredObject? StoredFile { get; set; }

    /// <summary>The name the download is offered under.</summary>
    public required string FileName { get; set; }

    public DateTimeOffset CreatedUtc { get; set; }

    public string CreatedBy { get; set; } = string.Empty;
}
