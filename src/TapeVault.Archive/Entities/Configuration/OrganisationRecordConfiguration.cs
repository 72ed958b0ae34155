using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class OrganisationRecordConfiguration : IEntityTypeConfiguration<OrganisationRecord>
{
    public void Configure(EntityTypeBuilder<OrganisationRecord> e)
    {
        e.ToTable("Organisation");
        e.Property(o => o.Id).ValueGeneratedNever();
        e.Property(o => o.Name).HasMaxLength(200);
        e.Property(o => o.Address).HasMaxLength(500);
        e.Property(o => o.ContactName).HasMaxLength(200);
        e.Property(o => o.ContactPhone).HasMaxLength(60);
        e.Property(o => o.ContactEmail).HasMaxLength(254);
    }
}
