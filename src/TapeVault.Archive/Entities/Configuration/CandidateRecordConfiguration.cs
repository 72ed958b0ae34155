using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class CandidateRecordConfiguration : IEntityTypeConfiguration<CandidateRecord>
{
    public void Configure(EntityTypeBuilder<CandidateRecord> e)
    {
        e.HasIndex(c => new { c.RunId, c.Position });

        // Covers the tape timeline's query (every reading of a tape's runs, without their per-byte arrays), so a
        // long tape's timeline is read from the index instead of from rows of several kilobytes each.
        e.HasIndex(c => new { c.RunId, c.SettingName, c.IdentityKey, c.Status, c.Confidence, c.StartSeconds, c.EndSeconds, c.Speed })
            .HasDatabaseName("IX_Candidates_Timeline");
        e.HasOne(c => c.Run).WithMany(r => r.Candidates).HasForeignKey(c => c.RunId).OnDelete(DeleteBehavior.Cascade);

        // By the enum's name, as the other states are stored (the column keeps its type, so no table is rebuilt).
        e.Property(c => c.Status).HasConversion<string>();
    }
}
