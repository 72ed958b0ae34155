using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

/// <summary>The event log's columns; that rows are never changed or removed is held by triggers made in the migrations.</summary>
internal sealed class ArchiveEventConfiguration : IEntityTypeConfiguration<ArchiveEvent>
{
    public void Configure(EntityTypeBuilder<ArchiveEvent> e)
    {
        e.HasIndex(v => v.ItemId);
        e.HasIndex(v => new { v.ObjectType, v.ObjectId });
        e.Property(v => v.Sha256).HasMaxLength(64);
        e.Property(v => v.PreviousSha256).HasMaxLength(64);
        e.Ignore(v => v.Sequence);
    }
}
