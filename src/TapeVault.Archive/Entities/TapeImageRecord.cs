namespace TapeVault.Archive.Entities;

/// <summary>One version of the merged tape image of an item; a new merge adds a version and keeps the old.</summary>
public sealed class TapeImageRecord
{
    public int Id { get; set; }

    public int ItemId { get; set; }

    public TapeItem? Item { get; set; }

    /// <summary>1, 2, … per item.</summary>
    public int Version { get; set; }

    /// <summary>The container file in the content store.</summary>
    public required string Sha256 { get; set; }

    public StoredObject? StoredFile { get; set; }

    public required string ProfileId { get; set; }

    public required string CodeVersion { get; set; }

    public DateTimeOffset CreatedUtc { get; set; }

    public string CreatedBy { get; set; } = string.Empty;

    public int CleanBlocks { get; set; }

    public int VotedBlocks { get; set; }

    public int RepairedBlocks { get; set; }

    public int MissingBlocks { get; set; }

    public int Conflicts { get; set; }

    public double OverallConfidence { get; set; }

    /// <summary>The decode runs that went into this image, comma-separated ids.</summary>
    public string SourceRunIds { get; set; } = string.Empty;
}
