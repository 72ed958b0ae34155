using System.Globalization;
using System.IO.Compression;
using Microsoft.AspNetCore.Identity;

namespace TapeVault.Archive.Accounts;

/// <summary>
/// The archive's rules for a password, after NIST SP 800-63B-4 (August 2024), §3.1.1.2 "Password Verifiers" (quoted
/// from memory): at least 15 characters where the password is the only factor, as it is here; at least 64 allowed; no
/// composition rules (no "a digit, a capital and a symbol"); refuse passwords on a blocklist of commonly used,
/// expected or compromised values, dictionary words and context-specific words (the service's name, the user name).
/// Repetitive or sequential strings (aaaa…, 1234…, qwerty…) are among the expected values 800-63B's 2017 edition names.
/// Each refusal is one sentence saying why.
/// </summary>
public sealed class PasswordPolicy : IPasswordValidator<IdentityUser>
{
    /// <summary>Fewest characters: 800-63B-4 asks 15 of a password used as the only factor.</summary>
    public const int MinimumLength = 15;

    /// <summary>Most characters: 800-63B-4 asks at least 64 to be allowed; the bound keeps hashing cheap.</summary>
    public const int MaximumLength = 256;

    /// <summary>The application's own name, a context-specific word no password may contain.</summary>
    public const string ApplicationName = "tapevault";

    /// <summary>A password whose characters outside repeated or sequential runs are fewer than this is refused.</summary>
    private const int FewestFreeCharacters = 8;

    private static readonly Lazy<string[]> Blocklist = new(LoadBlocklist);

    /// <summary>Keyboard rows, for runs typed along a row (qwerty, asdf, 7890) forwards or backwards; common practice.</summary>
    private static readonly string[] KeyboardRows = ["1234567890", "qwertyuiop", "asdfghjkl", "zxcvbnm", "qwertzuiop", "azertyuiop", "qsdfghjklm", "yxcvbnm", "wxcvbn"];

    /// <summary>How many entries the blocklist holds (dictionary words and common roots).</summary>
    public static int BlocklistCount => Blocklist.Value.Length;

    public Task<IdentityResult> ValidateAsync(UserManager<IdentityUser> manager, IdentityUser user, string? password)
    {
        ArgumentNullException.ThrowIfNull(user);
        return Task.FromResult(Problem(password ?? string.Empty, user.UserName) is { } problem
            ? IdentityResult.Failed(new IdentityError { Code = "PasswordPolicy", Description = problem })
            : IdentityResult.Success);
    }

    /// <summary>Why this password is refused for this user, or null when it is acceptable.</summary>
    public static string? Problem(string password, string? userName)
    {
        ArgumentNullException.ThrowIfNull(password);
        int length = new StringInfo(password).LengthInTextElements;
        if (length < MinimumLength)
        {
            return $"The password has {length} characters; it needs at least {MinimumLength} (a short phrase of several words is easy to remember).";
        }

        if (length > MaximumLength)
        {
            return $"The password has {length} characters; at most {MaximumLength} are accepted.";
        }

        string folded = password.ToLowerInvariant();
        if (userName is { Length: >= 3 } && (folded.Contains(userName.ToLowerInvariant(), StringComparison.Ordinal)
            || folded.Contains(Reverse(userName.ToLowerInvariant()), StringComparison.Ordinal)))
        {
            return "The password contains the user name; choose one that does not.";
        }

        if (folded.Contains(ApplicationName, StringComparison.Ordinal) || Unleet(folded).Contains(ApplicationName, StringComparison.Ordinal))
        {
            return "The password contains the application's name; choose one that does not.";
        }

        if (IsRepeatedUnit(folded))
        {
            return "The password is one short piece repeated; choose one that is not.";
        }

        if (FreeCharacters(folded) < FewestFreeCharacters)
        {
            return "The password is mostly repeated or sequential characters (such as aaaa, 1234 or qwerty); choose one that is not.";
        }

        if (IsBlocked(folded) || HoldsListedEntryOnly(folded) || HoldsListedEntryOnly(WithoutRuns(folded)))
        {
            return "The password is a commonly used password or a dictionary word, perhaps with digits or symbols around it, which attackers try first; choose another.";
        }

        return null;
    }

    /// <summary>Whether the list holds this lowercase string.</summary>
    public static bool IsBlocked(string candidate)
    {
        ArgumentNullException.ThrowIfNull(candidate);
        return candidate.Length > 0 && Array.BinarySearch(Blocklist.Value, candidate, StringComparer.Ordinal) >= 0;
    }

    /// <summary>
    /// Whether every letter of the password lies in one stretch that is a listed entry, as typed or with digits for
    /// letters undone: a common password or a word with only digits and symbols around it (password1234, 2019sunshine!).
    /// </summary>
    private static bool HoldsListedEntryOnly(string s)
    {
        int first = -1, last = -1;
        for (int i = 0; i < s.Length; i++)
        {
            if (char.IsLetter(s[i]))
            {
                first = first < 0 ? i : first;
                last = i;
            }
        }

        if (first < 0)
        {
            return false;
        }

        for (int start = first; start >= 0; start--)
        {
            for (int end = last + 1; end <= s.Length; end++)
            {
                string stretch = s[start..end];
                if (IsBlocked(stretch) || IsBlocked(Unleet(stretch)))
                {
                    return true;
                }
            }
        }

        return false;
    }

    /// <summary>The password without its runs of three or more repeated or sequential characters.</summary>
    private static string WithoutRuns(string s)
    {
        var inRun = RunMask(s);
        var kept = new System.Text.StringBuilder(s.Length);
        for (int i = 0; i < s.Length; i++)
        {
            if (!inRun[i])
            {
                kept.Append(s[i]);
            }
        }

        return kept.ToString();
    }

    /// <summary>The characters that are not in a run of three or more repeated or sequential ones (aaa, abc, 321, qwe).</summary>
    private static int FreeCharacters(string s) => RunMask(s).Count(b => !b);

    private static bool[] RunMask(string s)
    {
        var inRun = new bool[s.Length];
        int start = 0;
        while (start < s.Length - 2)
        {
            int end = start + 1;
            int step = Step(s[start], s[start + 1]);
            if (step != NoStep)
            {
                while (end + 1 < s.Length && Step(s[end], s[end + 1]) == step)
                {
                    end++;
                }
            }

            if (step != NoStep && end - start + 1 >= 3)
            {
                for (int i = start; i <= end; i++)
                {
                    inRun[i] = true;
                }

                start = end;
            }
            else
            {
                start++;
            }
        }

        return inRun;
    }

    private const int NoStep = int.MinValue;

    /// <summary>The kind of step from one character to the next: the same, ±1 in code point, or ±1 along a keyboard row.</summary>
    private static int Step(char a, char b)
    {
        int d = b - a;
        if (d is 0 or 1 or -1)
        {
            return d;
        }

        foreach (var row in KeyboardRows)
        {
            int i = row.IndexOf(a, StringComparison.Ordinal);
            int j = row.IndexOf(b, StringComparison.Ordinal);
            if (i >= 0 && j >= 0 && Math.Abs(j - i) == 1)
            {
                // Row steps are told apart from code-point steps, and each row from the others.
                return (j - i) * 100 + Array.IndexOf(KeyboardRows, row) * 1000 + 1000;
            }
        }

        return NoStep;
    }

    private static bool IsRepeatedUnit(string s)
    {
        for (int unit = 1; unit <= s.Length / 2; unit++)
        {
            bool repeats = true;
            for (int i = unit; i < s.Length && repeats; i++)
            {
                repeats = s[i] == s[i - unit];
            }

            if (repeats)
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>Common letter-for-digit swaps undone (p4ssw0rd → password); common practice.</summary>
    private static string Unleet(string s) => string.Create(s.Length, s, static (span, source) =>
    {
        for (int i = 0; i < source.Length; i++)
        {
            span[i] = source[i] switch
            {
                '0' => 'o',
                '1' => 'l',
                '3' => 'e',
                '4' or '@' => 'a',
                '5' or '$' => 's',
                '7' => 't',
                '!' => 'i',
                _ => source[i],
            };
        }
    });

    private static string Reverse(string s)
    {
        var chars = s.ToCharArray();
        Array.Reverse(chars);
        return new string(chars);
    }

    private static string[] LoadBlocklist()
    {
        using var stream = typeof(PasswordPolicy).Assembly.GetManifestResourceStream("TapeVault.Archive.Accounts.blocked-passwords.txt.gz")
            ?? throw new InvalidOperationException("The password blocklist is missing from the build.");
        using var gzip = new GZipStream(stream, CompressionMode.Decompress);
        using var reader = new StreamReader(gzip);
        var list = new List<string>(240_000);
        while (reader.ReadLine() is { } line)
        {
            if (line.Length > 0)
            {
                list.Add(line);
            }
        }

        // The file is sorted by byte value; sort again in case an edit broke that, since the search relies on it.
        var words = list.ToArray();
        Array.Sort(words, StringComparer.Ordinal);
        return words;
    }
}
