namespace TapeVault.Archive.Jobs;

/// <summary>Where the job engine keeps its schedule.</summary>
public enum ScheduleStoreKind
{
    /// <summary>A SQLite file beside the archive's database: one machine, one process running the jobs.</summary>
    Sqlite,

    /// <summary>A PostgreSQL database shared by every node, clustered: several machines running the jobs.</summary>
    PostgreSql,
}

/// <summary>The "TapeVault:Jobs" section of appsettings.json: the job engine (Quartz.NET) and its persistent schedule.</summary>
public sealed class JobsOptions
{
    public const string Section = "TapeVault:Jobs";

    /// <summary>Where the schedule lives (Sqlite by default).</summary>
    public ScheduleStoreKind Store { get; set; } = ScheduleStoreKind.Sqlite;

    /// <summary>
    /// The SQLite schedule file; a relative path is taken from the archive's base folder. Empty: beside the archive's
    /// database, with ".schedule.db" in place of its extension (data/tapevault.schedule.db by default).
    /// </summary>
    public string SchedulePath { get; set; } = string.Empty;

    /// <summary>The PostgreSQL connection string of the schedule when <see cref="Store"/> is PostgreSql.</summary>
    public string ConnectionString { get; set; } = string.Empty;

    /// <summary>Seconds an idle node waits before it looks at the schedule for work another node queued (1 to 60; default 2).</summary>
    public int PollSeconds { get; set; } = 2;

    /// <summary>Seconds between a node's check-ins in a cluster; a node silent for longer is taken for dead and its jobs recovered (default 7.5 s).</summary>
    public double CheckinSeconds { get; set; } = 7.5;

    /// <summary>The SQLite schedule file in force for an archive.</summary>
    public string FullSchedulePath(ArchiveOptions archive)
    {
        ArgumentNullException.ThrowIfNull(archive);
        return SchedulePath.Length > 0
            ? Path.GetFullPath(SchedulePath, archive.BaseFolder)
            : Path.ChangeExtension(archive.FullDatabasePath, ".schedule.db");
    }

    /// <summary>Refuses settings that cannot work, naming the field.</summary>
    public void Validate()
    {
        if (PollSeconds is < 1 or > 60)
        {
            throw new InvalidOperationException($"{Section}:PollSeconds must be between 1 and 60, not {PollSeconds}.");
        }

        if (CheckinSeconds is < 1 or > 600)
        {
            throw new InvalidOperationException($"{Section}:CheckinSeconds must be between 1 and 600, not {CheckinSeconds}.");
        }

        if (Store == ScheduleStoreKind.PostgreSql && string.IsNullOrWhiteSpace(ConnectionString))
        {
            throw new InvalidOperationException($"{Section}:ConnectionString is needed when {Section}:Store is PostgreSql.");
        }
    }
}

/// <summary>The "TapeVault:Fixity" section of appsettings.json: when the whole store is audited.</summary>
public sealed class FixityOptions
{
    public const string Section = "TapeVault:Fixity";

    /// <summary>The audit's schedule as a Quartz cron expression (seconds minutes hours day-of-month month day-of-week),
    /// in the server's time zone; default Sundays at 03:00. Empty turns the schedule off.</summary>
    public string Schedule { get; set; } = "0 0 3 ? * SUN";
}
