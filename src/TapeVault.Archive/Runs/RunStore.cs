using System.Collections.Immutable;
using System.Runtime.InteropServices;
using System.Security.Cryptography;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Timeline;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Text;

namespace TapeVault.Archive.Runs;

/// <summary>Turns a decode result into rows and stored candidates back into the core's block candidates (for a merge).</summary>
public static class RunStore
{
    public static DecodeRun ToRun(int captureId, DecodeResult result, DateTimeOffset started, DateTimeOffset finished)
    {
        ArgumentNullException.ThrowIfNull(result);
        int positions = result.Best.Count;
        int clean = result.Best.Count(b => b.Status == BlockStatus.Clean);
        int failed = result.Best.Count(b => b.Status == BlockStatus.Failed);
        int unchecked_ = positions - clean - failed;
        var run = new DecodeRun
        {
            CaptureId = captureId,
            ProfileId = result.Profile.Id,
            SettingsJson = SettingsJson.Write(result.Settings),
            CodeVersion = result.CodeVersion,
            StartedUtc = started,
            FinishedUtc = finished,
            Positions = positions,
            CleanPositions = clean,
            Outcome = positions == 0
                ? "No blocks found."
                : $"{positions} position(s): {clean} clean, {failed} failed{(unchecked_ > 0 ? $", {unchecked_} unchecked" : string.Empty)}.",
        };

        foreach (var c in result.Candidates)
        {
            run.Candidates.Add(ToRecord(c));
        }

        run.Timeline = new RunTimeline { Readings = TimelineReadingsValue.Write(run.Candidates) };
        return run;
    }

    /// <summary>
    /// Stores <paramref name="run"/> inside <paramref name="write"/>'s transaction: its row and its kept timeline through
    /// EF Core, its readings (nine thousand for a long tape read by a bank of eight) with one statement
    /// (<see cref="ArchiveDatabase.InsertRowsAsync"/>), which holds the write lock a fraction of the time EF Core's change
    /// tracking of every reading takes. Afterwards the run has its id and is not tracked by <paramref name="write"/>;
    /// its readings are numbered by the database and not read back.
    /// </summary>
    public static async Task SaveAsync(ArchiveDbContext write, DecodeRun run, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(write);
        ArgumentNullException.ThrowIfNull(run);
        var readings = run.Candidates;
        run.Candidates = [];
        try
        {
            write.Runs.Add(run);
            await write.SaveChangesAsync(cancellation).ConfigureAwait(false);

            // Untracked before its readings are given back, so no later save of this context writes them a second time.
            write.Entry(run).State = EntityState.Detached;
            if (run.Timeline is { } timeline)
            {
                write.Entry(timeline).State = EntityState.Detached;
            }
        }
        finally
        {
            run.Candidates = readings;
        }

        foreach (var reading in readings)
        {
            reading.RunId = run.Id;
        }

        await ArchiveDatabase.InsertRowsAsync(write, readings, withKey: false, cancellation).ConfigureAwait(false);
    }

    public static CandidateRecord ToRecord(BlockCandidate c)
    {
        ArgumentNullException.ThrowIfNull(c);
        return new CandidateRecord
        {
            Position = c.Position,
            SettingIndex = c.SettingIndex,
            SettingName = c.SettingName,
            IdentityKey = c.Identity.Key,
            FileName = c.Identity.FileName,
            FileId = c.Identity.FileId,
            BlockNumber = c.Identity.BlockNumber,
            Ordinal = c.Identity.Ordinal,
            Status = c.Status,
            Confidence = c.Confidence,
            MinimumMargin = c.MinimumMargin,
            MeanMargin = c.MeanMargin,
            Decisions = c.Decisions,
            AmbiguousDecisions = c.AmbiguousDecisions,
            FramingErrors = c.FramingErrors,
            LevelDbfs = Finite(c.LevelDbfs),
            SnrDb = Finite(c.SnrDb),
            Speed = c.Speed,
            StartSeconds = c.StartSeconds,
            EndSeconds = c.EndSeconds,
            Truncated = c.Truncated,
            Doubts = (int)c.Doubts,
            StoredChecksum = c.StoredChecksum,
            PayloadLength = c.Payload.Length,
            PayloadSha256 = Convert.ToHexStringLower(SHA256.HashData(c.Payload.AsSpan())),
            Header = [.. c.Header],
            Payload = [.. c.Payload],
            ByteMargins = MemoryMarshal.AsBytes(c.ByteMargins.AsSpan()).ToArray(),
            ByteErrorOdds = MemoryMarshal.AsBytes(c.ByteErrorOdds.AsSpan()).ToArray(),
            HeaderErrorOdds = MemoryMarshal.AsBytes(c.HeaderErrorOdds.AsSpan()).ToArray(),
            ChecksumErrorOdds = MemoryMarshal.AsBytes(c.ChecksumErrorOdds.AsSpan()).ToArray(),
            ByteSeconds = MemoryMarshal.AsBytes(c.ByteSeconds.AsSpan()).ToArray(),
        };
    }

    /// <summary>The stored candidate as the core's record, equal to the one that was stored.</summary>
    public static BlockCandidate ToCandidate(CandidateRecord r)
    {
        ArgumentNullException.ThrowIfNull(r);
        if (!BitConverter.IsLittleEndian)
        {
            throw new PlatformNotSupportedException("Stored per-byte arrays are little-endian.");
        }

        return new BlockCandidate
        {
            SettingIndex = r.SettingIndex,
            SettingName = r.SettingName,
            Position = r.Position,
            Identity = new BlockIdentity(r.FileName, r.FileId, r.BlockNumber, r.Ordinal),
            Header = [.. r.Header],
            Payload = [.. r.Payload],
            StoredChecksum = r.StoredChecksum is { } s ? (uint)s : null,
            Status = r.Status,
            Confidence = r.Confidence,
            ByteMargins = ImmutableArray.Create(MemoryMarshal.Cast<byte, float>(r.ByteMargins).ToArray()),
            ByteErrorOdds = ImmutableArray.Create(MemoryMarshal.Cast<byte, float>(r.ByteErrorOdds).ToArray()),
            HeaderErrorOdds = r.HeaderErrorOdds is null ? [] : ImmutableArray.Create(MemoryMarshal.Cast<byte, float>(r.HeaderErrorOdds).ToArray()),
            ChecksumErrorOdds = r.ChecksumErrorOdds is null ? [] : ImmutableArray.Create(MemoryMarshal.Cast<byte, float>(r.ChecksumErrorOdds).ToArray()),
            ByteSeconds = ImmutableArray.Create(MemoryMarshal.Cast<byte, double>(r.ByteSeconds).ToArray()),
            Decisions = r.Decisions,
            AmbiguousDecisions = r.AmbiguousDecisions,
            MinimumMargin = r.MinimumMargin,
            MeanMargin = r.MeanMargin,
            FramingErrors = r.FramingErrors,
            LevelDbfs = r.LevelDbfs,
            SnrDb = r.SnrDb,
            Speed = r.Speed,
            StartSeconds = r.StartSeconds,
            EndSeconds = r.EndSeconds,
            Truncated = r.Truncated,
            Doubts = (BlockDoubts)r.Doubts,
        };
    }

    // SQLite stores REAL; infinities from a silent stretch would not survive a round trip as numbers everywhere.
    private static double Finite(double value) => double.IsFinite(value) ? value : value > 0 ? 999 : -999;
}
