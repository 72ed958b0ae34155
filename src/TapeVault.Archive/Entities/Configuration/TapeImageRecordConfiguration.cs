using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class TapeImageRecordConfiguration : IEntityTypeConfiguration<TapeImageRecord>
{
    public void Configure(EntityTypeBuilder<TapeImageRecord> e)
    {
        e.HasIndex(i => new { i.ItemId, i.Version }).IsUnique();
        e.HasOne(i => i.Item).WithMany(t => t.Images).HasForeignKey(i => i.ItemId).OnDelete(DeleteBehavior.Restrict);
        e.HasOne(i => i.StoredFile).WithMany().HasForeignKey(i => i.Sha256).OnDelete(DeleteBehavior.Restrict);
    }
}
