using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class StoredObjectConfiguration : IEntityTypeConfiguration<StoredObject>
{
    public void Configure(EntityTypeBuilder<StoredObject> e)
    {
        e.HasKey(o => o.Sha256);
        e.Property(o => o.Sha256).HasMaxLength(64);
        e.Property(o => o.Kind).HasConversion<string>().HasMaxLength(16);
    }
}
