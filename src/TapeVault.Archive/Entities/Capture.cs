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

    /// <summary>The file's container: <c>wav</c> (RIFF), <c>rf64</c>, <c>bw64</c> or <c>flac</c>.</summary>
    public string Container { get; set; } = "wav";

    /// <summary>
    /// The file's own metadata (Broadcast WAV bext and iXML, FLAC comments) as JSON (<see cref="Ingest.EmbeddedMetadata"/>);
    /// empty when it carries none. Kept as read at ingest; the curator decides whether its suggestions become the
    /// capture's deck, operator, date and notes.
    /// </summary>
    public string EmbeddedMetadata { get; set; } = string.Empty;

    public double DurationSeconds { get; set; }

    public string Deck { get; set; } = string.Empty;

    public string Operator { get; set; } = string.Empty;

    public DateOnly? CapturedOn { get; set; }

    public string Notes { get; set; } = string.Empty;

    public DateTimeOffset IngestedUtc { get; set; }

    public string IngestedBy { get; set; } = string.Empty;

    public List<DecodeRun> Runs { get; set; } = [];
}
