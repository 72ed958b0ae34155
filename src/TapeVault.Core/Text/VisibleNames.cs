using System.Globalization;
using System.Text;

namespace TapeVault.Core.Text;

/// <summary>
/// Names the archive creates (bag folders and paths, download names, files extracted from a tape) must look like what
/// they are. Characters that reorder the text around them or show nothing at all can make "\u202Egpj.exe" read as
/// "exe.jpg". Unicode's own security documents say which ones: UAX #9 (the bidirectional algorithm: the embedding,
/// override and isolate controls U+202A–U+202E and U+2066–U+2069 and the marks U+200E, U+200F, U+061C), UTS #39 and
/// UTR #36 (invisible and default-ignorable characters such as U+200B–U+200D, U+2060 and U+FEFF are not to be trusted
/// in identifiers). This is the one test for such characters; every place that makes a name calls it.
/// </summary>
public static class VisibleNames
{
    private static readonly Dictionary<int, string> Known = new()
    {
        [0x061C] = "ARABIC LETTER MARK",
        [0x200B] = "ZERO WIDTH SPACE",
        [0x200C] = "ZERO WIDTH NON-JOINER",
        [0x200D] = "ZERO WIDTH JOINER",
        [0x200E] = "LEFT-TO-RIGHT MARK",
        [0x200F] = "RIGHT-TO-LEFT MARK",
        [0x202A] = "LEFT-TO-RIGHT EMBEDDING",
        [0x202B] = "RIGHT-TO-LEFT EMBEDDING",
        [0x202C] = "POP DIRECTIONAL FORMATTING",
        [0x202D] = "LEFT-TO-RIGHT OVERRIDE",
        [0x202E] = "RIGHT-TO-LEFT OVERRIDE",
        [0x2060] = "WORD JOINER",
        [0x2066] = "LEFT-TO-RIGHT ISOLATE",
        [0x2067] = "RIGHT-TO-LEFT ISOLATE",
        [0x2068] = "FIRST STRONG ISOLATE",
        [0x2069] = "POP DIRECTIONAL ISOLATE",
        [0xFEFF] = "ZERO WIDTH NO-BREAK SPACE",
    };

    /// <summary>
    /// Whether a code point shows nothing or changes the direction of the text around it: control characters (Cc),
    /// format characters (Cf, which hold every bidi control and zero-width character above), line and paragraph
    /// separators (Zl, Zp), and the default-ignorable code points outside Cf that render as nothing (Unicode's
    /// DerivedCoreProperties.txt, listed from memory: U+034F, U+115F–U+1160, U+17B4–U+17B5, U+180B–U+180F, U+3164,
    /// the variation selectors U+FE00–U+FE0F and U+E0100–U+E01EF, U+FFA0).
    /// </summary>
    public static bool IsHidden(int codePoint)
    {
        if (codePoint is >= 0xD800 and <= 0xDFFF)
        {
            return true; // a lone surrogate is no character at all
        }

        if (codePoint is 0x034F or (>= 0x115F and <= 0x1160) or (>= 0x17B4 and <= 0x17B5) or (>= 0x180B and <= 0x180F)
            or 0x3164 or (>= 0xFE00 and <= 0xFE0F) or 0xFFA0 or (>= 0xE0100 and <= 0xE01EF))
        {
            return true;
        }

        var category = CharUnicodeInfo.GetUnicodeCategory(codePoint);
        return category is UnicodeCategory.Control or UnicodeCategory.Format or UnicodeCategory.LineSeparator or UnicodeCategory.ParagraphSeparator;
    }

    /// <summary>"U+202E RIGHT-TO-LEFT OVERRIDE" (the name where it is one of the usual ones), for messages.</summary>
    public static string Describe(int codePoint) =>
        Known.TryGetValue(codePoint, out var name) ? $"{Escape(codePoint)[1..^1]} {name}" : Escape(codePoint)[1..^1];

    /// <summary>The first hidden character of <paramref name="name"/>, described, or null when it has none.</summary>
    public static string? FirstHidden(string name)
    {
        ArgumentNullException.ThrowIfNull(name);
        foreach (int codePoint in CodePoints(name))
        {
            if (IsHidden(codePoint))
            {
                return Describe(codePoint);
            }
        }

        return null;
    }

    /// <summary>
    /// <paramref name="name"/> with every hidden character written out as "[U+XXXX]", so that it can be seen and the
    /// characters around it keep their order: "\u202Egpj.exe" becomes "[U+202E]gpj.exe". Other text is left alone.
    /// </summary>
    public static string MakeVisible(string name)
    {
        ArgumentNullException.ThrowIfNull(name);
        StringBuilder? visible = null;
        int i = 0;
        foreach (int codePoint in CodePoints(name))
        {
            int width = codePoint > 0xFFFF ? 2 : 1;
            if (IsHidden(codePoint))
            {
                visible ??= new StringBuilder(name, 0, i, name.Length + 16);
                visible.Append(Escape(codePoint));
            }
            else
            {
                visible?.Append(name, i, width);
            }

            i += width;
        }

        return visible?.ToString() ?? name;
    }

    private static string Escape(int codePoint) => string.Create(CultureInfo.InvariantCulture, $"[U+{codePoint:X4}]");

    /// <summary>The code points of a string; a lone surrogate is its own (hidden) code point.</summary>
    private static IEnumerable<int> CodePoints(string text)
    {
        for (int i = 0; i < text.Length; i++)
        {
            char c = text[i];
            if (char.IsHighSurrogate(c) && i + 1 < text.Length && char.IsLowSurrogate(text[i + 1]))
            {
                yield return char.ConvertToUtf32(c, text[i + 1]);
                i++;
            }
            else
            {
                yield return c;
            }
        }
    }
}
