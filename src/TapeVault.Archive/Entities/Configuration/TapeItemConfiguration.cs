using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class TapeItemConfiguration : IEntityTypeConfiguration<TapeItem>
{
    public void Configure(EntityTypeBuilder<TapeItem> e)
    {
        e.HasIndex(i => i.AccessionNumber).IsUnique();
        e.Property(i => i.AccessionNumber).HasMaxLength(64);
        e.Property(i => i.Title).HasMaxLength(300);
        e.HasOne(i => i.Collection).WithMany(c => c.Items).HasForeignKey(i => i.CollectionId).OnDelete(DeleteBehavior.Restrict);
    }
}
