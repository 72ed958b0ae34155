using TapeVault.Archive.Entities;

namespace TapeVault.Archive.Jobs;

/// <summary>Reports a job's progress; returns true when a cancel was asked for.</summary>
public delegate Task<bool> JobProgress(double fraction, string text);

/// <summary>Does the work of one kind of job. Work must be committed in one transaction at the end, so a cut-off job can start over.</summary>
public interface IJobHandler
{
    string Kind { get; }

    /// <returns>The id of what the job made (a decode run, an image).</returns>
    Task<JobOutcome> RunAsync(JobRecord job, JobProgress progress, CancellationToken cancellation);
}

public sealed record JobOutcome(int? ResultId, string Summary);

/// <summary>A failure whose message is fit to show the user as the job's error.</summary>
public sealed class JobFailedException(string message) : Exception(message);

/// <summary>
/// The job cannot start yet (a merge whose decodes are still to run): it goes back to the queue, showing
/// <paramref name="message"/>, and is fired again after a short wait. Throw it before any work is done.
/// </summary>
public sealed class JobNotReadyException(string message) : Exception(message);

/// <summary>
/// This firing no longer holds its job (its node was taken for dead and another node resumed the job, which now
/// holds it): what it made was rolled back, and the job's row is left to the firing that holds it.
/// </summary>
public sealed class JobTakenOverException(int jobId)
    : Exception($"Job {jobId} was taken over by another firing while this one ran it; what this one made was not stored.");
