using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata.Builders;

namespace TapeVault.Archive.Entities.Configuration;

internal sealed class RunTimelineConfiguration : IEntityTypeConfiguration<RunTimeline>
{
    public void Configure(EntityTypeBuilder<RunTimeline> e)
    {
        e.HasKey(t => t.RunId);
        e.HasOne(t => t.Run).WithOne(r => r.Timeline).HasForeignKey<RunTimeline>(t => t.RunId).OnDelete(DeleteBehavior.Cascade);
    }
}
