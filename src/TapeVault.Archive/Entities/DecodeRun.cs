using TapeVault.Core.Blocks;

namespace TapeVault.Archive.Entities;

/// <summary>One decode of one capture with one bank of detector settings: what was used, and what came out.</summary>
public sealed class DecodeRun
{
    public int Id { get; set; }

    public int CaptureId { get; set; }

    public Capture? Capture { get; set; }

    public required string ProfileId { get; set; }

    /// <summary>The detector settings as JSON (the full records, so the run can be repeated exactly).</summary>
    public required string SettingsJson { get; set; }

    public required string CodeVersion { get; set; }

    public DateTimeOffset StartedUtc { get; set; }

    public DateTimeOffset FinishedUtc { get; set; }

    /// <summary>A one-line summary, e.g. "24 positions: 22 clean, 2 failed".</summary>
    public required string Outcome { get; set; }

    public int Positions { get; set; }

    public int CleanPositions { get; set; }

    public List<CandidateRecord> Candidates { get; set; } = [];

    /// <summary>Its readings as the tape timeline draws them, written with the run (null for runs stored before they were kept).</summary>
    public RunTimeline? Timeline { get; set; }
}

/// <summary>
/// A run's readings as the tape timeline draws them (setting, identity, outcome, confidence, start, end and speed of
/// each), in one compact value written with the run and never changed (<see cref="TapeVault.Archive.Timeline.TimelineReadingsValue"/>):
/// a long tape's timeline reads one row a run instead of one row a reading.
/// </summary>
public sealed class RunTimeline
{
    public int RunId { get; set; }

    public DecodeRun? Run { get; set; }

    public required byte[] Readings { get; set; }
}

/// <summary>A stored block candidate: enough of it to show, to judge and to rebuild it for a merge.</summary>
public sealed class CandidateRecord
{
    public long Id { get; set; }

    public int RunId { get; set; }

    public DecodeRun? Run { get; set; }

    public int Position { get; set; }

    public int SettingIndex { get; set; }

    public required string SettingName { get; set; }

    public required string IdentityKey { get; set; }

    public string? FileName { get; set; }

    public long? FileId { get; set; }

    public long? BlockNumber { get; set; }

    public int Ordinal { get; set; }

    public BlockStatus Status { get; set; }

    public double Confidence { get; set; }

    public double MinimumMargin { get; set; }

    public double MeanMargin { get; set; }

    public int Decisions { get; set; }

    public int AmbiguousDecisions { get; set; }

    public int FramingErrors { get; set; }

    public double LevelDbfs { get; set; }

    public double SnrDb { get; set; }

    public double Speed { get; set; }

    public double StartSeconds { get; set; }

    public double EndSeconds { get; set; }

    public bool Truncated { get; set; }

    /// <summary>Why the reading is not clean, or what lowers the trust in it (<see cref="TapeVault.Core.Blocks.BlockDoubts"/> flags; 0 for readings stored before these were kept).</summary>
    public int Doubts { get; set; }

    public long? StoredChecksum { get; set; }

    public int PayloadLength { get; set; }

    public required string PayloadSha256 { get; set; }

    public required byte[] Header { get; set; }

    public required byte[] Payload { get; set; }

    /// <summary>Per payload byte, little-endian float32: the decision margins.</summary>
    public required byte[] ByteMargins { get; set; }

    /// <summary>Per payload byte, little-endian float32: the estimated error odds.</summary>
    public required byte[] ByteErrorOdds { get; set; }

    /// <summary>Per header byte, little-endian float32: the estimated error odds (null in rows stored before they were kept).</summary>
    public byte[]? HeaderErrorOdds { get; set; }

    /// <summary>Per check-value byte, little-endian float32: the estimated error odds (null in rows stored before they were kept).</summary>
    public byte[]? ChecksumErrorOdds { get; set; }

    /// <summary>Per payload byte, little-endian float64: the time in the capture.</summary>
    public required byte[] ByteSeconds { get; set; }
}
