using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class JobRecordConfiguration : IEntityTypeConfiguration<JobRecord>
{
    public void Configure(EntityTypeBuilder<JobRecord> e)
    {
        e.HasIndex(j => j.State);
        e.Property(j => j.State).HasConversion<string>().HasMaxLength(16);
    }
}
