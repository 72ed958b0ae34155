using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class DecodeRunConfiguration : IEntityTypeConfiguration<DecodeRun>
{
    public void Configure(EntityTypeBuilder<DecodeRun> e)
    {
        e.HasOne(r => r.Capture).WithMany(c => c.Runs).HasForeignKey(r => r.CaptureId).OnDelete(DeleteBehavior.Restrict);
    }
}
