using System.Globalization;
using TapeVault.Core.Image;

namespace TapeVault.Cli.Commands;

/// <summary>
/// tapevault image verify FILE: exit 0 for a whole image, 1 with one line on standard error for a damaged one.
/// tapevault image extract FILE DIR [--partial] [--overwrite]: writes the files the image's headers name; exit 3 when a
/// file was left out (incomplete without --partial), so that a script does not take a part for the whole; exit 4, with
/// nothing written, when a file of that name is already in the folder and --overwrite was not given.
/// </summary>
public static class ImageCommand
{
    public const int Damaged = 1;

    public const int FilesLeftOut = 3;

    public const int WouldOverwrite = 4;

    public const string Usage = "image verify FILE | image extract FILE DIR [--partial] [--overwrite]";


    public static int Run(CommandLine args, TextWriter output, TextWriter error)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(output);
        ArgumentNullException.ThrowIfNull(error);
        string verb = args.Positional.Count > 0 ? args.Positional[0] : throw new UsageException($"Usage: tapevault {Usage}");
        return verb switch
        {
            "verify" => Verify(args, output, error),
            "extract" => Extract(args, output, error),
            _ => throw new UsageException($"Unknown image command '{verb}'; it is verify or extract."),
        };
    }

    private static int Verify(CommandLine args, TextWriter output, TextWriter error)
    {
        if (args.Positional.Count != 2)
        {
            throw new UsageException("Usage: tapevault image verify FILE");
        }

        args.RejectUnknown();
        string path = ExistingFile(args.Positional[1]);
        ImageVerification verification;
        using (var stream = File.OpenRead(path))
        {
            verification = TapeImageContainer.Verify(stream);
        }

        if (!verification.Ok)
        {
            error.WriteLine($"tapevault: {path}: {verification.FailureReason}");
            return Damaged;
        }

        var image = verification.Image!;
        output.WriteLine($"Image    {path}: container version {verification.FormatVersion}, {verification.Length} bytes, all hashes good");
        output.WriteLine($"SHA-256  {verification.FileSha256}");
        output.WriteLine(string.Create(CultureInfo.InvariantCulture, $"Profile  {image.ProfileId}; made {image.CreatedUtc:yyyy-MM-dd HH:mm:ss} UTC by {image.CodeVersion} from {image.Captures.Length} capture(s)"));
        output.WriteLine($"Blocks   {verification.Blocks}: {verification.Clean} clean, {verification.Voted} voted, {verification.Repaired} repaired, {verification.Missing} missing");
        var files = ImageFiles.Extract(image);
        output.WriteLine($"Files    {files.Length}: {files.Count(f => f.Complete)} complete, {files.Count(f => !f.Complete)} incomplete");
        return 0;
    }

    private static int Extract(CommandLine args, TextWriter output, TextWriter error)
    {
        if (args.Positional.Count != 3)
        {
            throw new UsageException("Usage: tapevault image extract FILE DIR [--partial] [--overwrite]");
        }

        bool partial = args.Flag("partial");
        bool overwrite = args.Flag("overwrite");
        args.RejectUnknown();
        string path = ExistingFile(args.Positional[1]);
        string folder = Files.OutputPath(args.Positional[2]);
        if (File.Exists(folder))
        {
            throw new UsageException($"The output folder {args.Positional[2]} is a file.");
        }

        string? parent = Path.GetDirectoryName(folder);
        if (parent is null || !Directory.Exists(parent))
        {
            throw new UsageException($"The folder that would hold {args.Positional[2]} does not exist.");
        }

        TapeImage image;
        try
        {
            using var stream = File.OpenRead(path);
            image = TapeImageContainer.Read(stream);
        }
        catch (ImageFormatException e)
        {
            error.WriteLine($"tapevault: {path}: {e.Message}");
            return Damaged;
        }

        var files = ImageFiles.Extract(image);
        var names = SafeFileNames.Assign(files.Select(f => f.File.Name));
        string imageFull = Path.GetFullPath(path);
        var writes = new List<(string Path, Action<Stream> Write)>(files.Length);
        var lines = new List<string>(files.Length);
        for (int i = 0; i < files.Length; i++)
        {
            var file = files[i];
            string name = names[i];
            string target = Path.Combine(folder, name);
            // A header's name field is padded with NULs or spaces: dropping the padding is not worth a note.
            string renamed = name == file.File.Name.TrimEnd('\0', ' ') ? string.Empty : $" (named \"{Printable(file.File.Name)}\" on tape)";
            if (string.Equals(target, imageFull, StringComparison.Ordinal))
            {
                lines.Add($"skipped  {name}{renamed}: it would overwrite the image itself");
                continue;
            }

            if (!file.Complete && !partial)
            {
                lines.Add($"skipped  {name}{renamed}: incomplete ({file.DescribeGaps()}); --partial writes the bytes there are");
                continue;
            }

            var bytes = file.Bytes;
            writes.Add((target, stream => stream.Write(bytes.AsSpan())));
            lines.Add(file.Complete
                ? $"wrote    {name}{renamed}: {bytes.Length} bytes"
                : $"partial  {name}{renamed}: {bytes.Length} bytes, incomplete ({file.DescribeGaps()}); the gaps are closed up, not filled");
        }

        // A file already there is never replaced without being asked, and a folder never: all or nothing is written.
        var folders = writes.Where(w => Directory.Exists(w.Path)).Select(w => Path.GetFileName(w.Path)).ToList();
        var existing = writes.Where(w => File.Exists(w.Path)).Select(w => Path.GetFileName(w.Path)).ToList();
        if (folders.Count > 0 || (existing.Count > 0 && !overwrite))
        {
            error.WriteLine(folders.Count > 0
                ? $"tapevault: {folder} already holds a folder named {Listed(folders)}, which a file cannot replace; nothing was written. Extract into a new folder."
                : $"tapevault: {folder} already holds {Listed(existing)}; nothing was written. Give --overwrite to replace {(existing.Count == 1 ? "it" : "them")}, or extract into a new folder.");
            return WouldOverwrite;
        }

        Directory.CreateDirectory(folder);
        Files.WriteAtomically(writes);
        foreach (string line in lines)
        {
            output.WriteLine(line);
        }

        int skipped = files.Length - writes.Count;
        string replaced = existing.Count > 0 ? $" ({existing.Count} replaced: {Listed(existing)})" : string.Empty;
        output.WriteLine($"{writes.Count} of {files.Length} file(s) written to {folder}{replaced}; {skipped} skipped.");
        return skipped > 0 ? FilesLeftOut : 0;
    }

    private static string ExistingFile(string path)
    {
        if (Directory.Exists(path))
        {
            throw new UsageException($"The image {path} is a folder, not a file.");
        }

        return File.Exists(path) ? path : throw new UsageException($"The image {path} does not exist.");
    }

    /// <summary>Names for a message: each quoted, the first five, then how many more.</summary>
    private static string Listed(IReadOnlyList<string> names) =>
        string.Join(", ", names.Take(5).Select(n => $"'{n}'")) + (names.Count > 5 ? $" and {names.Count - 5} more" : string.Empty);

    /// <summary>A tape name as it can be shown on one terminal line.</summary>
    private static string Printable(string name) =>
        string.Concat(name.Select(c => char.IsControl(c) ? $"\\x{(int)c:x2}" : c.ToString()));
}
