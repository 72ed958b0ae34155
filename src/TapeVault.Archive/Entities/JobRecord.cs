namespace TapeVault.Archive.Entities;

public enum JobState
{
    Queued,
    Running,
    Done,
    Failed,
    Cancelled,
}

/// <summary>A persisted background job: survives a restart, so that work is neither lost nor done twice.</summary>
public sealed class JobRecord
{
    public int Id { get; set; }

    /// <summary>decode, merge, …</summary>
    public required string Kind { get; set; }

    public JobState State { get; set; }

    /// <summary>0..1.</summary>
    public double Progress { get; set; }

    public string ProgressText { get; set; } = string.Empty;

    /// <summary>The reason a job failed, in one sentence.</summary>
    public string? Error { get; set; }

    /// <summary>The job's parameters as JSON.</summary>
    public required string Parameters { get; set; }

    public int? ItemId { get; set; }

    public int? CaptureId { get; set; }

    /// <summary>What the job made (a decode run id, an image id), once done.</summary>
    public int? ResultId { get; set; }

    public string CreatedBy { get; set; } = string.Empty;

    public DateTimeOffset CreatedUtc { get; set; }

    public DateTimeOffset? StartedUtc { get; set; }

    public DateTimeOffset? FinishedUtc { get; set; }

    /// <summary>How many times a worker has started the job (a restart mid-job starts it again).</summary>
    public int Attempts { get; set; }

    public bool CancelRequested { get; set; }
}
