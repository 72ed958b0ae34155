using Microsoft.EntityFrameworkCore;

namespace TapeVault.Archive;

/// <summary>Makes contexts that stamp events with the host's clock.</summary>
public sealed class ArchiveDbContextFactory(DbContextOptions<ArchiveDbContext> options, TimeProvider clock) : IDbContextFactory<ArchiveDbContext>
{
    public ArchiveDbContext CreateDbContext() => new(options) { Clock = clock };
}
