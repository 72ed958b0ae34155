using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class CaptureConfiguration : IEntityTypeConfiguration<Capture>
{
    public void Configure(EntityTypeBuilder<Capture> e)
    {
        e.HasIndex(c => new { c.ItemId, c.Sha256 }).IsUnique();
        e.Property(c => c.Container).HasMaxLength(8).HasDefaultValue("wav");
        e.Property(c => c.EmbeddedMetadata).HasDefaultValue(string.Empty);
        e.HasOne(c => c.Item).WithMany(i => i.Captures).HasForeignKey(c => c.ItemId).OnDelete(DeleteBehavior.Restrict);
        e.HasOne(c => c.StoredFile).WithMany().HasForeignKey(c => c.Sha256).OnDelete(DeleteBehavior.Restrict);
    }
}
