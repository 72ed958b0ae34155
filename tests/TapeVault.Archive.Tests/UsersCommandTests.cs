using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Identity;
using TapeVault.Archive.Accounts;
using TapeVault.Cli;
using TapeVault.Archive.Tests.PostgreSql;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>tapevault users add, list, reset, disable and enable against a real archive (an SQLite file, or a PostgreSQL database on a PostgreSQL run).</summary>
public sealed partial class UsersCommandTests : IDisposable
{
    private readonly string root = Directory.CreateTempSubdirectory("tapevault-users-").FullName;

    /// <summary>A PostgreSQL database of its own on a PostgreSQL run; the SQLite file <see cref="Database"/> otherwise.</summary>
    private readonly TestArchiveDatabase database = TestArchiveDatabase.Create();

    private string Database => Path.Combine(root, "archive.db");

    private string Store => Path.Combine(root, "store");

    [Fact]
    public async Task ResetDisableAndEnable_FromTheCommandLine_WithOneTimePasswordsShownOnceAndRecorded()
    {
        string first = OneTimePassword(Run(0, "users", "add", "ed-curator", "--role", "curator"));
        Run(0, "users", "add", "fay-curator", "--role", "curator");
        Assert.Matches(@"ed-curator\s+curator\s+one-time password", Run(0, "users", "list"));

        // A reset: a new one-time password, the old one no longer works, the change is still due.
        string reset = Run(0, "users", "reset", "ed-curator");
        Assert.Contains("Account 'ed-curator' has a new password; its sessions were ended.", reset, StringComparison.Ordinal);
        string second = OneTimePassword(reset);
        Assert.NotEqual(first, second);
        using (var session = ArchiveSession.Open(database.ConnectionString is null ? Database : null, Store, new CliSettings(), database.ConnectionString))
        {
            var users = session.Get<UserManager<IdentityUser>>();
            var user = (await users.FindByNameAsync("ed-curator"))!;
            Assert.False(await users.CheckPasswordAsync(user, first));
            Assert.True(await users.CheckPasswordAsync(user, second));
            Assert.True(await session.Get<UserAdmin>().MustChangePasswordAsync(user));

            // The event log says what happened, and never the password.
            var details = session.Get<ArchiveDbContext>().Events.Select(e => e.Detail).ToList();
            Assert.Contains(details, d => d.Contains("was given a one-time password", StringComparison.Ordinal));
            Assert.DoesNotContain(details, d => d.Contains(first, StringComparison.Ordinal) || d.Contains(second, StringComparison.Ordinal));
        }

        Assert.Contains("Account 'ed-curator' is disabled; its sessions were ended.", Run(0, "users", "disable", "ed-curator"), StringComparison.Ordinal);
        Assert.Matches(@"ed-curator\s+curator\s+disabled", Run(0, "users", "list"));
        Assert.Equal("tapevault: The account 'fay-curator' is the last enabled curator; enable or add another curator first.", RunError("users", "disable", "fay-curator"));
        Assert.Equal("tapevault: The account 'ed-curator' is already disabled.", RunError("users", "disable", "ed-curator"));
        Assert.Contains("Account 'ed-curator' is enabled.", Run(0, "users", "enable", "ed-curator"), StringComparison.Ordinal);
        Assert.Equal("tapevault: There is no account named 'nobody'.", RunError("users", "reset", "nobody"));
    }

    private string Run(int expected, params string[] args)
    {
        var output = new StringWriter();
        var error = new StringWriter();
        int exit = Entry.Run([.. args, .. database.CliArguments(Database), "--store", Store], output, error);
        Assert.True(exit == expected, $"exit {exit}: {error}");
        return output.ToString();
    }

    private string RunError(params string[] args)
    {
        var output = new StringWriter();
        var error = new StringWriter();
        Assert.Equal(2, Entry.Run([.. args, .. database.CliArguments(Database), "--store", Store], output, error));
        Assert.Equal(string.Empty, output.ToString());
        return error.ToString().Trim();
    }

    private static string OneTimePassword(string output)
    {
        var match = OneTimeLine().Match(output);
        Assert.True(match.Success, output);
        Assert.Null(PasswordPolicy.Problem(match.Groups["password"].Value, null));
        return match.Groups["password"].Value;
    }

    [GeneratedRegex(@"One-time password \(shown only now; it must be changed at the (first|next) sign-in\): (?<password>\S+)")]
    private static partial Regex OneTimeLine();

    public void Dispose()
    {
        database.Dispose();
        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        try
        {
            Directory.Delete(root, recursive: true);
        }
        catch (IOException)
        {
            // A leftover temp folder is harmless.
        }
    }
}
