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
    public DbSet<Collection> Collections => Set<Collection>();

    public DbSet<TapeItem> Items => Set<TapeItem>();

    public DbSet<StoredObject> Objects => Set<StoredObject>();

    public DbSet<Capture> Captures => Set<Capture>();

    public DbSet<DecodeRun> Runs => Set<DecodeRun>();

    public DbSet<CandidateRecord> Candidates => Set<CandidateRecord>();

    public DbSet<TapeImageRecord> Images => Set<TapeImageRecord>();

    public DbSet<ArchiveEvent> Events => Set<ArchiveEvent>();

    public DbSet<JobRecord> Jobs => Set<JobRecord>();

    public DbSet<ExportRecord> Exports => Set<ExportRecord>();

    public DbSet<OrganisationRecord> Organisation => Set<OrganisationRecord>();

    public override int SaveChanges(bool acceptAllChangesOnSuccess)
    {
        var added = AddedEvents();
        if (added.Count == 0)
        {
            return base.SaveChanges(acceptAllChangesOnSuccess);
        }

        // The head is read and the new events inserted under one write lock, so the chain cannot fork.
        var own = Database.CurrentTransaction is null ? Database.BeginTransaction() : null;
        try
        {
            var head = Events.AsNoTracking().OrderByDescending(e => e.Id).Select(e => new { e.Id, e.Sha256 }).FirstOrDefault();
            EventChain.Link(added, head?.Id ?? 0, head?.Sha256);
            int saved = base.SaveChanges(acceptAllChangesOnSuccess);
            own?.Commit();
            return saved;
        }
        finally
        {
            own?.Dispose();
        }
    }

    public override async Task<int> SaveChangesAsync(bool acceptAllChangesOnSuccess, CancellationToken cancellationToken = default)
    {
        var added = AddedEvents();
        if (added.Count == 0)
        {
            return await base.SaveChangesAsync(acceptAllChangesOnSuccess, cancellationToken).ConfigureAwait(false);
        }

        var own = Database.CurrentTransaction is null ? await Database.BeginTransactionAsync(cancellationToken).ConfigureAwait(false) : null;
        try
        {
            var head = await Events.AsNoTracking().OrderByDescending(e => e.Id).Select(e => new { e.Id, e.Sha256 })
                .FirstOrDefaultAsync(cancellationToken).ConfigureAwait(false);
            EventChain.Link(added, head?.Id ?? 0, head?.Sha256);
            int saved = await base.SaveChangesAsync(acceptAllChangesOnSuccess, cancellationToken).ConfigureAwait(false);
            if (own is not null)
            {
                await own.CommitAsync(cancellationToken).ConfigureAwait(false);
            }

            return saved;
        }
        finally
        {
            if (own is not null)
            {
                await own.DisposeAsync().ConfigureAwait(false);
            }
        }
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

        builder.Entity<OrganisationRecord>(e =>
        {
            e.ToTable("Organisation");
            e.Property(o => o.Id).ValueGeneratedNever();
            e.Property(o => o.Name).HasMaxLength(200);
            e.Property(o => o.Address).HasMaxLength(500);
            e.Property(o => o.ContactName).HasMaxLength(200);
            e.Property(o => o.ContactPhone).HasMaxLength(60);
            e.Property(o => o.ContactEmail).HasMaxLength(254);
        });

        builder.Entity<Collection>(e =>
        {
            e.Property(c => c.Name).HasMaxLength(200);
            e.Property(c => c.Description).HasMaxLength(20_000);
        });

        builder.Entity<TapeItem>(e =>
        {
            e.HasIndex(i => i.AccessionNumber).IsUnique();
            e.Property(i => i.AccessionNumber).HasMaxLength(64);
            e.Property(i => i.Title).HasMaxLength(300);
            e.HasOne(i => i.Collection).WithMany(c => c.Items).HasForeignKey(i => i.CollectionId).OnDelete(DeleteBehavior.Restrict);
        });

        builder.Entity<StoredObject>(e =>
        {
            e.HasKey(o => o.Sha256);
            e.Property(o => o.Sha256).HasMaxLength(64);
            e.Property(o => o.Kind).HasConversion<string>().HasMaxLength(16);
        });

        builder.Entity<Capture>(e =>
        {
            e.HasIndex(c => new { c.ItemId, c.Sha256 }).IsUnique();
            e.HasOne(c => c.Item).WithMany(i => i.Captures).HasForeignKey(c => c.ItemId).OnDelete(DeleteBehavior.Restrict);
            e.HasOne(c => c.StoredFile).WithMany().HasForeignKey(c => c.Sha256).OnDelete(DeleteBehavior.Restrict);
        });

        builder.Entity<DecodeRun>(e =>
        {
            e.HasOne(r => r.Capture).WithMany(c => c.Runs).HasForeignKey(r => r.CaptureId).OnDelete(DeleteBehavior.Restrict);
        });

        builder.Entity<CandidateRecord>(e =>
        {
            e.HasIndex(c => new { c.RunId, c.Position });

            // Covers the tape timeline's query (every reading of a tape's runs, without their per-byte arrays), so a
            // long tape's timeline is read from the index instead of from rows of several kilobytes each.
            e.HasIndex(c => new { c.RunId, c.SettingName, c.IdentityKey, c.Status, c.Confidence, c.StartSeconds, c.EndSeconds, c.Speed })
                .HasDatabaseName("IX_Candidates_Timeline");
            e.HasOne(c => c.Run).WithMany(r => r.Candidates).HasForeignKey(c => c.RunId).OnDelete(DeleteBehavior.Cascade);
        });

        builder.Entity<TapeImageRecord>(e =>
        {
            e.HasIndex(i => new { i.ItemId, i.Version }).IsUnique();
            e.HasOne(i => i.Item).WithMany(t => t.Images).HasForeignKey(i => i.ItemId).OnDelete(DeleteBehavior.Restrict);
            e.HasOne(i => i.StoredFile).WithMany().HasForeignKey(i => i.Sha256).OnDelete(DeleteBehavior.Restrict);
        });

        builder.Entity<ArchiveEvent>(e =>
        {
            e.HasIndex(v => v.ItemId);
            e.HasIndex(v => new { v.ObjectType, v.ObjectId });
            e.Property(v => v.Sha256).HasMaxLength(64);
            e.Property(v => v.PreviousSha256).HasMaxLength(64);
            e.Ignore(v => v.Sequence);
        });

        builder.Entity<ExportRecord>(e =>
        {
            e.HasOne(x => x.StoredFile).WithMany().HasForeignKey(x => x.Sha256).OnDelete(DeleteBehavior.Restrict);
            e.HasIndex(x => x.CollectionId);
            e.HasIndex(x => x.ItemId);
        });

        builder.Entity<JobRecord>(e =>
        {
            e.HasIndex(j => j.State);
            e.Property(j => j.State).HasConversion<string>().HasMaxLength(16);
        });
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
