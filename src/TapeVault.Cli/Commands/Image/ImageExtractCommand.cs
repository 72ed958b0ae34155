using System.CommandLine;
using TapeVault.Core.Image;

namespace TapeVault.Cli.Commands;

/// <summary>
/// tapevault image extract FILE --out DIR [--partial]: writes the files the image's headers name; exit 3 when a file
/// was left out (incomplete without --partial), so that a script does not take a part for the whole.
/// </summary>
public sealed class ImageExtractCommand : CliCommand
{
    public const int FilesLeftOut = 3;

    private readonly Argument<string> file = new("FILE") { Description = "the tape image (.tvimg) to read" };
    private readonly Argument<string> target = new("DIR") { Description = "the folder the files go to (the same as --out)", Arity = ArgumentArity.ZeroOrOne };
    private readonly Option<string> output = CommonOptions.Out("DIR", "the folder the files go to, made if missing; required, here or as the word after FILE");
    private readonly Option<bool> partial = new("--partial") { Description = "also write incomplete files, their gaps closed up; default: skip them" };

    public ImageExtractCommand()
        : base("extract", "Write the files a tape image's headers name into a folder (exit 3 if a file is left out).")
    {
        Arguments.Add(file);
        Arguments.Add(target);
        Options.Add(output);
        Options.Add(partial);
    }

    public override string Usage => "image extract FILE (DIR | --out DIR) [--partial]";

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        var output = run.Output;
        var error = run.Error;
        string outPath = run.OutputPath(this.output, target);
        bool partial = run.Value(this.partial);
        string path = ImageFileArgument.Existing(run.Value(file)!);
        string folder = Files.OutputPath(outPath);
        if (File.Exists(folder))
        {
            throw new UsageException($"The output folder {outPath} is a file.");
        }

        string? parent = Path.GetDirectoryName(folder);
        if (parent is null || !Directory.Exists(parent))
        {
            throw new UsageException($"The folder that would hold {outPath} does not exist.");
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
            return ImageVerifyCommand.Damaged;
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

        Directory.CreateDirectory(folder);
        Files.WriteAtomically(writes);
        foreach (string line in lines)
        {
            output.WriteLine(line);
        }

        int skipped = files.Length - writes.Count;
        output.WriteLine($"{writes.Count} of {files.Length} file(s) written to {folder}; {skipped} skipped.");
        return skipped > 0 ? FilesLeftOut : 0;
    }

    /// <summary>A tape name as it can be shown on one terminal line.</summary>
    private static string Printable(string name) =>
        string.Concat(name.Select(c => char.IsControl(c) ? $"\\x{(int)c:x2}" : c.ToString()));
}
