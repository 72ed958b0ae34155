using TapeVault.Archive.Accounts;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// The password rules against NIST SP 800-63B-4 (August 2024) §3.1.1.2, quoted from memory: at least 15 characters
/// for a password that is the only factor; at least 64 allowed; no composition rules; a blocklist of commonly used,
/// expected or compromised values, dictionary words and context-specific words (the service, the user name).
/// </summary>
public sealed class PasswordPolicyTests
{
    [Theory]
    // Length: the two the archive once accepted for a curator, and one short of the minimum.
    [InlineData("aaaaaaaaaaaa", "at least 15")]
    [InlineData("password1234", "at least 15")]
    [InlineData("correct horse!", "at least 15")]
    // Repetitive and sequential strings, long enough to pass the length rule.
    [InlineData("aaaaaaaaaaaaaaaaaaaa", "one short piece repeated")]
    [InlineData("abababababababab", "one short piece repeated")]
    [InlineData("abcdefghijklmnopqr", "repeated or sequential")]
    [InlineData("1234567890123456", "repeated or sequential")]
    [InlineData("qwertyuiop123456", "repeated or sequential")]
    [InlineData("zyxwvutsrqponm!!", "repeated or sequential")]
    // Commonly used passwords and dictionary words, with digits and symbols around them, or letters swapped for digits.
    [InlineData("password12345678", "commonly used password or a dictionary word")]
    [InlineData("Password2024!!!!", "commonly used password or a dictionary word")]
    [InlineData("P4ssw0rd-2024-xyz", "commonly used password or a dictionary word")]
    [InlineData("2019sunshine2019", "commonly used password or a dictionary word")]
    [InlineData("Internationalism", "commonly used password or a dictionary word")]
    [InlineData("trustno1!!2024#%", "commonly used password or a dictionary word")]
    // The user name and the application's name (context-specific words).
    [InlineData("my name is brackenfield-ed", "the user name")]
    [InlineData("de-dleifnekcarb and more", "the user name")]
    [InlineData("mytapevaultsecret99", "the application's name")]
    [InlineData("my t4p3v4ult secret", "the application's name")]
    public void RefusesWithTheReason(string password, string reason)
    {
        var problem = PasswordPolicy.Problem(password, "brackenfield-ed");
        Assert.NotNull(problem);
        Assert.Contains(reason, problem, StringComparison.Ordinal);
        Assert.EndsWith(".", problem, StringComparison.Ordinal);
    }

    [Theory]
    // No composition rules: lowercase words alone are fine, and so is a long password of one character class.
    [InlineData("mossy copper reel in the attic")]
    [InlineData("brine lantern orbit velvet")]
    [InlineData("Archive-Test-Passw0rd")]
    [InlineData("sevenfoldquietmarigoldtrain")]
    [InlineData("9475 2217 8830 6641")]
    // Unicode counts by characters as a reader sees them (NIST: all printing characters and spaces allowed).
    [InlineData("Küstenwind über Flüssen")]
    public void AcceptsLongUnpredictablePasswords(string password) => Assert.Null(PasswordPolicy.Problem(password, "brackenfield-ed"));

    [Fact]
    public void AllowsAtLeast64Characters_AndRefusesMoreThan256()
    {
        // 800-63B-4: verifiers should permit at least 64 characters.
        const string sixtyFour = "the quiet moss grew over each spool in the old barn by the river";
        Assert.Equal(64, sixtyFour.Length);
        Assert.Null(PasswordPolicy.Problem(sixtyFour, null));
        var tooLong = string.Concat(Enumerable.Range(0, 60).Select(i => $"w{i * 7919 % 1000:000}x"));
        Assert.True(tooLong.Length > 256);
        Assert.Contains("at most 256", PasswordPolicy.Problem(tooLong, null), StringComparison.Ordinal);
    }

    [Fact]
    public void TheBlocklistHoldsTheDictionaryAndTheCommonRoots()
    {
        // Words of Webster's Second International (1934; public domain) and our own list of common roots.
        Assert.True(PasswordPolicy.BlocklistCount > 200_000, $"{PasswordPolicy.BlocklistCount} entries");
        foreach (var word in new[] { "password", "sunshine", "dragon", "letmein", "qwerty", "internationalism", "cassette" })
        {
            Assert.True(PasswordPolicy.IsBlocked(word), word);
        }

        Assert.False(PasswordPolicy.IsBlocked("mossy copper reel in the attic"));
    }

    [Fact]
    public void GeneratedOneTimePasswordsPassThePolicy()
    {
        for (int i = 0; i < 200; i++)
        {
            var password = UserAdmin.GeneratePassword();
            Assert.Equal(20, password.Length);
            Assert.Null(PasswordPolicy.Problem(password, "curator"));
        }
    }
}
