using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class CandidateRecordConfiguration : IEntityTypeConfiguration<CandidateRecord>
{
    public void Configure(EntityTypeBuilder<CandidateRecord> e)
    {
        e.HasIndex(c => new { c.RunId, c.Position });
        e.HasOne(c => c.Run).WithMany(r => r.Candidates).HasForeignKey(c => c.RunId).OnDelete(DeleteBehavior.Cascade);

        // By the enum's name, as the other states are stored (the column keeps its type, so no table is rebuilt).
        e.Property(c => c.Status).HasConversion<string>();
    }
}
