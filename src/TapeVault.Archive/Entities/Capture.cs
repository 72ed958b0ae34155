namespace TapeVault.Archive.Entities;

/// <summary>One audio capture (pass) of a tape item, and where and how it was made.</summary>
public sealed class Capture
{
    public int Id { get; set; }

    public int ItemId { get; set; }

    public TapeItem? Item { get; set; }

    public required string Sha256 { get; set; }

    public StoredObject? StoredFile { get; set; }

    /// <summary>The file name as uploaded (sanitised); for display only, the store names files by hash.</summary>
    public required string OriginalFileName { get; set; }

    public long Size { get; set; }

    public int SampleRate { get; set; }

    public int Channels { get; set; }

    public int BitsPerSample { get; set; }

    public required string Encoding { get; set; }

    public double DurationSeconds { get; set; }

    public string Deck { get; set; } = string.Empty;

    public string Operator { get; set; } = string.Empty;

    public DateOnly? CapturedOn { get; set; }

    public string Notes { get; set; } = string.Empty;

    public DateTimeOffset IngestedUtc { get; set; }

    public string IngestedBy { get; set; } = string.Empty;

    public List<DecodeRun> Runs { get; set; } = [];
}
