namespace TapeVault.Cli.Commands;

/// <summary>The tape image a command reads: it must exist and be a file.</summary>
internal static class ImageFileArgument
{
    public static string Existing(string path)
    {
        if (Directory.Exists(path))
        {
            throw new UsageException($"The image {path} is a folder, not a file.");
        }

        return File.Exists(path) ? path : throw new UsageException($"The image {path} does not exist.");
    }
}
