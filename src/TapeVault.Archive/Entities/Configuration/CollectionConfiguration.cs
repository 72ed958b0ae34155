using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class CollectionConfiguration : IEntityTypeConfiguration<Collection>
{
    public void Configure(EntityTypeBuilder<Collection> e)
    {
        e.Property(c => c.Name).HasMaxLength(200);
        e.Property(c => c.Description).HasMaxLength(20_000);
    }
}
