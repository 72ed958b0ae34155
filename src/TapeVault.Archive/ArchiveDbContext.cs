using Microsoft.AspNetCore.Identity;
using Microsoft.AspNetCore.Identity.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Storage.ValueConversion;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Events;

namespace TapeVault.Archive;

/// <summary>The archive's database: collections down to block candidates, the object store's index, jobs, events and accounts.</summary>
public sealed class ArchiveDbContext(DbContextOptions<ArchiveDbContext> options) : IdentityDbContext<IdentityUser>(options)
{
    /// <summary>PostgreSQL's collation that compares text byte by byte (every server has it; PostgreSQL 15 manual, "Collation Support").</summary>
    public const string PostgreSqlByteOrder = "C";

    public DbSet<Collection> Collections => Set<Collection>();

    public DbSet<TapeItem> Items => Set<TapeItem>();

    public DbSet<StoredObject> Objects => Set<StoredObject>();

    public DbSet<Capture> Captures => Set<Capture>();

    public DbSet<DecodeRun> Runs => Set<DecodeRun>();

    public DbSet<CandidateRecord> Candidates => Set<CandidateRecord>();

    public DbSet<RunTimeline> RunTimelines => Set<RunTimeline>();

    public DbSet<TapeImageRecord> Images => Set<TapeImageRecord>();

    public DbSet<ArchiveEvent> Events => Set<ArchiveEvent>();

    public DbSet<JobRecord> Jobs => Set<JobRecord>();

    public DbSet<ExportRecord> Exports => Set<ExportRecord>();

    public DbSet<OrganisationRecord> Organisation => Set<OrganisationRecord>();

    /// <summary>The clock events are stamped with (<see cref="ArchiveDbContextFactory"/> sets the host's; the system clock otherwise).</summary>
    public TimeProvider Clock { get; init; } = TimeProvider.System;

    public override int SaveChanges(bool acceptAllChangesOnSuccess)
    {
        var added = AddedEvents();
        if (added.Count == 0)
        {
            return base.SaveChanges(acceptAllChangesOnSuccess);
        }

        // The chain's one way in, run synchronously: every step completes before it returns.
        var saving = EventLog.ChainAsync(this, added, synchronously: true, _ => ValueTask.FromResult(base.SaveChanges(acceptAllChangesOnSuccess)), CancellationToken.None);
        return saving.IsCompleted ? saving.GetAwaiter().GetResult() : throw new InvalidOperationException("The event log's synchronous save did not complete synchronously.");
    }

    public override async Task<int> SaveChangesAsync(bool acceptAllChangesOnSuccess, CancellationToken cancellationToken = default)
    {
        var added = AddedEvents();
        if (added.Count == 0)
        {
            return await base.SaveChangesAsync(acceptAllChangesOnSuccess, cancellationToken).ConfigureAwait(false);
        }

        return await EventLog.ChainAsync(this, added, synchronously: false,
            async token => await base.SaveChangesAsync(acceptAllChangesOnSuccess, token).ConfigureAwait(false), cancellationToken).ConfigureAwait(false);
    }

    protected override void ConfigureConventions(ModelConfigurationBuilder configurationBuilder)
    {
        ArgumentNullException.ThrowIfNull(configurationBuilder);

        // SQLite has no date-time-with-offset type; as ticks the values sort and compare correctly in SQL.
        configurationBuilder.Properties<DateTimeOffset>().HaveConversion<DateTimeOffsetToBinaryConverter>();
        configurationBuilder.Properties<DateTimeOffset?>().HaveConversion<DateTimeOffsetToBinaryConverter>();
    }

    protected override void OnModelCreating(ModelBuilder builder)
    {
        ArgumentNullException.ThrowIfNull(builder);
        base.OnModelCreating(builder);

        // One IEntityTypeConfiguration per entity, in Entities/Configuration.
        builder.ApplyConfigurationsFromAssembly(typeof(ArchiveDbContext).Assembly);

        // The names lists are sorted by compare byte by byte on PostgreSQL too, as SQLite's BINARY collation does: a
        // server's own locale (English: "a shelf" before "B shelf", punctuation ignored at first) would otherwise
        // order collections, tapes, catalogues, bags and accounts differently on the two databases.
        if (Database.IsNpgsql())
        {
            builder.Entity<Collection>().Property(c => c.Name).UseCollation(PostgreSqlByteOrder);
            builder.Entity<TapeItem>().Property(i => i.AccessionNumber).UseCollation(PostgreSqlByteOrder);
            builder.Entity<IdentityUser>().Property(u => u.UserName).UseCollation(PostgreSqlByteOrder);
        }
    }

    /// <summary>Refuses changed or removed events; returns the added ones in the order they were added.</summary>
    private List<ArchiveEvent> AddedEvents()
    {
        var added = new List<ArchiveEvent>();
        foreach (var entry in ChangeTracker.Entries<ArchiveEvent>())
        {
            if (entry.State is EntityState.Modified or EntityState.Deleted)
            {
                throw new InvalidOperationException("The event log is append-only: an event cannot be changed or removed.");
            }

            if (entry.State == EntityState.Added)
            {
                added.Add(entry.Entity);
            }
        }

        return [.. added.OrderBy(e => e.Sequence)];
    }
}
