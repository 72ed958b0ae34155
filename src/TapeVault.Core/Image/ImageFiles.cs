using System.Collections.Immutable;
using System.Globalization;
using System.Text;
using TapeVault.Core.Text;

namespace TapeVault.Core.Image;

/// <summary>A run of positions of a file with no bytes; <see cref="ByteOffset"/> is where the gap falls in the bytes that are there.</summary>
public sealed record MissingStretch(int FirstPosition, int LastPosition, long ByteOffset)
{
    public string Describe() => FirstPosition == LastPosition
        ? $"position {FirstPosition} missing at byte {ByteOffset}"
        : $"positions {FirstPosition}-{LastPosition} missing at byte {ByteOffset}";
}

/// <summary>
/// One named file's bytes: the payloads of its positions in order. An incomplete file's bytes are only what was
/// recovered, with each gap closed up and listed in <see cref="Missing"/>; nothing is ever filled in.
/// </summary>
public sealed record ExtractedFile(ImageFile File, ImmutableArray<byte> Bytes, ImmutableArray<MissingStretch> Missing, ImmutableArray<string> Problems)
{
    public bool Complete => Missing.IsEmpty && Problems.IsEmpty;

    /// <summary>Why the file is incomplete, one clause; empty when complete.</summary>
    public string DescribeGaps() => string.Join("; ", Missing.Select(m => m.Describe()).Concat(Problems));
}

/// <summary>The files that a tape image's headers name, as bytes.</summary>
public static class ImageFiles
{
    public static ImmutableArray<ExtractedFile> Extract(TapeImage image)
    {
        ArgumentNullException.ThrowIfNull(image);
        var files = image.Files.IsDefault ? [] : image.Files;
        var result = ImmutableArray.CreateBuilder<ExtractedFile>(files.Length);
        foreach (var file in files)
        {
            result.Add(Extract(image, file));
        }

        return result.MoveToImmutable();
    }

    public static ExtractedFile Extract(TapeImage image, ImageFile file)
    {
        ArgumentNullException.ThrowIfNull(image);
        ArgumentNullException.ThrowIfNull(file);
        var bytes = new List<byte>();
        var missing = ImmutableArray.CreateBuilder<MissingStretch>();
        int? gapStart = null;
        long end = (long)file.FirstPosition + file.BlockCount;
        for (long p = file.FirstPosition; p < end; p++)
        {
            // A position past the image's end is as absent as one marked missing.
            var block = p < image.Blocks.Length ? image.Blocks[(int)p] : null;
            if (block is null || block.Status == RecoveryStatus.Missing)
            {
                gapStart ??= (int)p;
                continue;
            }

            if (gapStart is { } g)
            {
                missing.Add(new MissingStretch(g, (int)p - 1, bytes.Count));
                gapStart = null;
            }

            bytes.AddRange(block.Payload.IsDefault ? [] : block.Payload);
        }

        if (gapStart is { } last)
        {
            missing.Add(new MissingStretch(last, (int)end - 1, bytes.Count));
        }

        var problems = ImmutableArray.CreateBuilder<string>();
        if (!file.Complete && missing.Count == 0)
        {
            problems.Add("the merge marks it incomplete");
        }

        if (missing.Count == 0 && bytes.Count != file.Length)
        {
            problems.Add(string.Create(CultureInfo.InvariantCulture, $"its blocks hold {bytes.Count} bytes, not the {file.Length} its headers give"));
        }

        return new ExtractedFile(file, [.. bytes], missing.ToImmutable(), problems.ToImmutable());
    }
}

/// <summary>File names from tape made safe to create in a folder: one plain name each, none alike.</summary>
public static class SafeFileNames
{
    public const int MaximumLength = 100;

    /// <summary>
    /// No path separators, no control characters, no hidden or direction-changing character (each is written out as
    /// "[U+XXXX]", <see cref="VisibleNames"/>), no leading dot (so no "." or ".." and no hidden file), no run of
    /// dots; the padding a header's name field carries (trailing NULs and spaces) is dropped first.
    /// </summary>
    public static string Sanitise(string nameFromTape)
    {
        ArgumentNullException.ThrowIfNull(nameFromTape);
        string trimmed = nameFromTape.TrimEnd('\0', ' ');
        var safe = new StringBuilder(trimmed.Length);
        foreach (char c in trimmed)
        {
            bool forbidden = char.IsControl(c) || char.IsSurrogate(c) || c is '/' or '\\' or ':' or '*' or '?' or '"' or '<' or '>' or '|';
            safe.Append(forbidden ? '_' : c);
        }

        // Characters that show nothing or reorder the name ("\u202Egpj.exe" showing as "exe.jpg") are written out.
        string plain = VisibleNames.MakeVisible(safe.ToString());
        safe.Clear().Append(plain);
        for (int i = 0; i < plain.Length; i++)
        {
            bool dotRun = (i + 1 < plain.Length && plain[i + 1] == '.') || (i > 0 && plain[i - 1] == '.');
            if (plain[i] == '.' && (i == 0 || dotRun))
            {
                safe[i] = '_';
            }
        }

        string name = safe.ToString().TrimEnd(' ', '.');
        if (name.Length > MaximumLength)
        {
            name = name[..MaximumLength];
        }

        return name.Length == 0 ? "unnamed" : name;
    }

    /// <summary>Sanitised names in order; a name already taken (ignoring case) gets "~2", "~3"… before its extension.</summary>
    public static ImmutableArray<string> Assign(IEnumerable<string> namesFromTape)
    {
        ArgumentNullException.ThrowIfNull(namesFromTape);
        var taken = new HashSet<string>(StringComparer.OrdinalIgnoreCase);
        var result = ImmutableArray.CreateBuilder<string>();
        foreach (string raw in namesFromTape)
        {
            string name = Sanitise(raw);
            string stem = Path.GetFileNameWithoutExtension(name);
            string extension = Path.GetExtension(name);
            for (int n = 2; !taken.Add(name); n++)
            {
                name = string.Create(CultureInfo.InvariantCulture, $"{stem}~{n}{extension}");
            }

            result.Add(name);
        }

        return result.ToImmutable();
    }
}
