using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class JobRecordConfiguration : IEntityTypeConfiguration<JobRecord>
{
    public void Configure(EntityTypeBuilder<JobRecord> e)
    {
        e.HasIndex(j => j.State);

        // A collection's page lists the newest fixity audits (kind, then newest id first): without this the query reads
        // the whole job table, which grows by a job per decode and merge (10 014 rows read at 10 000 tapes).
        e.HasIndex(j => new { j.Kind, j.Id });
        e.Property(j => j.State).HasConversion<string>().HasMaxLength(16);
    }
}
