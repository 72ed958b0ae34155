using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Tests.PostgreSql;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// The archives the tests make are on the provider the test run asked for (<see cref="TestDatabase"/>): a PostgreSQL
/// run never falls back to SQLite without a word, and the command line is pointed at the same database.
/// </summary>
[Collection(SharedArchiveGroup.Name)]
public sealed class TestProviderTests(SharedArchive shared)
{
    [Fact]
    public async Task Every_kind_of_test_archive_is_on_the_provider_of_the_run()
    {
        await using (var db = shared.Archive.NewContext())
        {
            Assert.Equal(TestDatabase.IsPostgreSql, db.Database.IsNpgsql());
        }

        Assert.Equal(TestDatabase.IsPostgreSql ? "--connection" : "--database", shared.Archive.CliArchiveArguments()[0]);

        await using var jobs = await JobArchive.CreateAsync();
        await using (var db = jobs.NewContext())
        {
            Assert.Equal(TestDatabase.IsPostgreSql, db.Database.IsNpgsql());
        }

        Assert.Equal(TestDatabase.IsPostgreSql ? "--connection" : "--database", jobs.CliArchiveArguments()[0]);

        using var own = TestArchiveDatabase.Create();
        Assert.Equal(TestDatabase.IsPostgreSql, own.ConnectionString is not null);
    }
}
