namespace TapeVault.Cli.Commands;

internal static class Files
{
    /// <summary>
    /// The full path of an output folder as the user typed it, without a trailing separator ("files/" is the folder
    /// "files"), so that its parent and its name, and temporary names built beside it, are those of the folder itself.
    /// </summary>
    public static string OutputPath(string path) => Path.TrimEndingDirectorySeparator(Path.GetFullPath(path));

    /// <summary>An output file named by an option.</summary>
    public sealed record Output(string Option, string Path);

    /// <summary>
    /// Refuses outputs that cannot be written or must not be: a missing folder, a path that is a folder, the capture
    /// itself (an original is never written over), or two options naming one file.
    /// </summary>
    public static void CheckOutputs(string capture, IReadOnlyList<Output> outputs)
    {
        string captureFull = Path.GetFullPath(capture);
        var seen = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (var output in outputs)
        {
            string full = Path.GetFullPath(output.Path);
            string? folder = Path.GetDirectoryName(full);
            if (folder is null || !Directory.Exists(folder))
            {
                throw new UsageException($"The folder for {output.Path} (--{output.Option}) does not exist.");
            }

            if (Directory.Exists(full))
            {
                throw new UsageException($"The output {output.Path} (--{output.Option}) is a folder, not a file.");
            }

            if (string.Equals(full, captureFull, StringComparison.Ordinal))
            {
                throw new UsageException($"The output {output.Path} (--{output.Option}) is the capture itself, which is never written over.");
            }

            if (!seen.TryAdd(full, output.Option))
            {
                throw new UsageException($"--{seen[full]} and --{output.Option} name the same file, {output.Path}.");
            }
        }
    }

    /// <summary>Writes every file to a temporary file beside it, and only when all are written moves them into place.</summary>
    public static void WriteAtomically(IReadOnlyList<(string Path, Action<Stream> Write)> files)
    {
        var temporaries = new List<(string Temporary, string Full)>(files.Count);
        try
        {
            foreach (var (path, write) in files)
            {
                string full = Path.GetFullPath(path);
                string? folder = Path.GetDirectoryName(full);
                if (folder is null || !Directory.Exists(folder))
                {
                    throw new UsageException($"The folder for {path} does not exist.");
                }

                string temporary = Path.Combine(folder, $".{Path.GetFileName(full)}.{Environment.ProcessId}.tmp");
                temporaries.Add((temporary, full));
                using var stream = new FileStream(temporary, FileMode.CreateNew, FileAccess.Write);
                write(stream);
            }

            foreach (var (temporary, full) in temporaries)
            {
                File.Move(temporary, full, overwrite: true);
            }
        }
        finally
        {
            foreach (var (temporary, _) in temporaries)
            {
                if (File.Exists(temporary))
                {
                    File.Delete(temporary);
                }
            }
        }
    }
}
