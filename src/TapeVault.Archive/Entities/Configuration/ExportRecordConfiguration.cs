using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class ExportRecordConfiguration : IEntityTypeConfiguration<ExportRecord>
{
    public void Configure(EntityTypeBuilder<ExportRecord> e)
    {
        e.HasOne(x => x.StoredFile).WithMany().HasForeignKey(x => x.Sha256).OnDelete(DeleteBehavior.Restrict);
        e.HasIndex(x => x.CollectionId);
        e.HasIndex(x => x.ItemId);
    }
}
