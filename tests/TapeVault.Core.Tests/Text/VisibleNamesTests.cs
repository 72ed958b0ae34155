using System.Globalization;
using System.Text;
using TapeVault.Core.Image;
using TapeVault.Core.Tests.OutsideChecks;
using TapeVault.Core.Text;
using Xunit;

namespace TapeVault.Core.Tests.Text;

/// <summary>
/// Hidden and direction-changing characters in names the archive makes, against Unicode's own data as Python's
/// unicodedata module (the Unicode Character Database of its release, no code shared with ours) gives it. Which
/// characters matter comes from UAX #9 (the bidi controls), UTS #39 and UTR #36 (invisible characters in identifiers).
/// </summary>
public sealed class VisibleNamesTests
{
    /// <summary>The bidi controls and marks of UAX #9 and the zero-width characters UTS #39 warns of.</summary>
    public static TheoryData<int> Listed => new()
    {
        0x202A, 0x202B, 0x202C, 0x202D, 0x202E, 0x2066, 0x2067, 0x2068, 0x2069, 0x200E, 0x200F, 0x061C,
        0x200B, 0x200C, 0x200D, 0x2060, 0xFEFF,
    };

    [Theory]
    [MemberData(nameof(Listed))]
    public void EachListedCharacter_IsHidden_AndNamedAsTheUnicodeDatabaseNamesIt(int codePoint)
    {
        Assert.True(VisibleNames.IsHidden(codePoint));
        string name = Python($"import unicodedata,sys; sys.stdout.write(unicodedata.name(chr({codePoint})))");
        Assert.Equal($"U+{codePoint:X4} {name}", VisibleNames.Describe(codePoint));
    }

    [Fact]
    public void EveryControlFormatAndSeparatorCharacterPythonKnows_IsHidden()
    {
        // Every code point of general category Cc, Cf, Zl or Zp in Python's Unicode database.
        string listed = Python("import unicodedata,sys; sys.stdout.write(' '.join(str(c) for c in range(0x110000) if unicodedata.category(chr(c)) in ('Cc','Cf','Zl','Zp')))");
        var codePoints = listed.Split(' ').Select(t => int.Parse(t, CultureInfo.InvariantCulture)).ToList();
        Assert.True(codePoints.Count > 200, $"only {codePoints.Count} code points listed");
        Assert.All(codePoints, c => Assert.True(VisibleNames.IsHidden(c), $"U+{c:X4} is not hidden"));
    }

    [Fact]
    public void OrdinaryLettersDigitsAndPunctuation_AreNotHidden()
    {
        foreach (string name in new[] { "HELLO.BAS", "side-a pass 2.wav", "Grüße_(1985)", "日本語", "Ελληνικά", "עברית.txt", "😀" })
        {
            Assert.Same(name, VisibleNames.MakeVisible(name));
            Assert.Null(VisibleNames.FirstHidden(name));
        }
    }

    [Fact]
    public void TheReversedExtension_IsWrittenOut_SoTheNameReadsAsWhatItIs()
    {
        Assert.Equal("[U+202E]gpj.exe", VisibleNames.MakeVisible("\u202Egpj.exe"));
        Assert.Equal("a[U+200B]b[U+FEFF][U+2066]c[U+2069]", VisibleNames.MakeVisible("a\u200Bb\uFEFF\u2066c\u2069"));
        Assert.Equal("x[U+D800]y", VisibleNames.MakeVisible("x\uD800y"));
        Assert.Equal("U+202E RIGHT-TO-LEFT OVERRIDE", VisibleNames.FirstHidden("ok\u202Egpj.exe"));
    }

    [Fact]
    public void FileNamesFromTape_HaveTheirHiddenCharactersWrittenOut()
    {
        Assert.Equal("[U+202E]gpj.exe", SafeFileNames.Sanitise("\u202Egpj.exe"));
        Assert.Equal("GAME[U+200D]1", SafeFileNames.Sanitise("GAME\u200D1\0\0"));
        Assert.Equal(["[U+202E]gpj.exe", "[U+202E]GPJ~2.exe"], SafeFileNames.Assign(["\u202Egpj.exe", "\u202EGPJ.exe"]).ToArray());
    }

    private static string Python(string script) =>
        OutsideTool.Run("/usr/bin/python3", ["-c", script]).StandardOutput;
}
