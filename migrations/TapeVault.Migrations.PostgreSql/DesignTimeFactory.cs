using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Design;
using TapeVault.Archive;

namespace TapeVault.Migrations.PostgreSql;

/// <summary>
/// Lets <c>dotnet ef</c> build the context for PostgreSQL without starting the web app; making a migration never
/// connects, so the server named here need not exist.
/// </summary>
public sealed class DesignTimeFactory : IDesignTimeDbContextFactory<ArchiveDbContext>
{
    public ArchiveDbContext CreateDbContext(string[] args)
    {
        var options = new DbContextOptionsBuilder<ArchiveDbContext>();
        ArchiveDatabase.ConfigurePostgreSql(options, "Host=127.0.0.1;Database=tapevault-design;Username=tapevault");
        return new ArchiveDbContext(options.Options);
    }
}
