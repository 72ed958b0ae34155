using Microsoft.EntityFrameworkCore.Design;
using TapeVault.Archive;

namespace TapeVault.Migrations;

/// <summary>Lets <c>dotnet ef</c> build the context without starting the web app (the database path is irrelevant there).</summary>
public sealed class DesignTimeFactory : IDesignTimeDbContextFactory<ArchiveDbContext>
{
    public ArchiveDbContext CreateDbContext(string[] args) => ArchiveDatabase.Open(Path.Combine(Path.GetTempPath(), "tapevault-design.db"));
}
