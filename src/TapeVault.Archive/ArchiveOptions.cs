namespace TapeVault.Archive;

/// <summary>The "TapeVault:Archive" section of appsettings.json.</summary>
public sealed class ArchiveOptions
{
    public const string Section = "TapeVault:Archive";

    /// <summary>The folder relative paths are taken from (the repository root when run from a clone; else the current folder).</summary>
    public string BaseFolder { get; set; } = Directory.GetCurrentDirectory();

    /// <summary>The SQLite database file; a relative path is taken from <see cref="BaseFolder"/>.</summary>
    public string DatabasePath { get; set; } = "data/tapevault.db";

    /// <summary>The content store's root folder (originals, images, exports).</summary>
    public string StorePath { get; set; } = "data/store";

    /// <summary>The largest capture accepted, in bytes.</summary>
    public long MaxUploadBytes { get; set; } = 2L * 1024 * 1024 * 1024;

    /// <summary>File name extensions accepted for captures.</summary>
    public string[] AllowedExtensions { get; set; } = [".wav", ".wave"];

    /// <summary>Content types accepted for captures (what browsers and tools send for WAV, or a plain byte stream).</summary>
    public string[] AllowedContentTypes { get; set; } = ["audio/wav", "audio/x-wav", "audio/wave", "audio/vnd.wave", "application/octet-stream"];

    /// <summary>How many jobs run at once.</summary>
    public int Workers { get; set; } = 2;

    /// <summary>How many times a job interrupted by a restart is started again before it is failed.</summary>
    public int MaxAttempts { get; set; } = 3;

    /// <summary>The organisation that holds the archive, named in bags and catalogues.</summary>
    public Organisation Organisation { get; set; } = new();

    public string FullDatabasePath => Path.GetFullPath(DatabasePath, BaseFolder);

    public string FullStorePath => Path.GetFullPath(StorePath, BaseFolder);

    /// <summary>The clone the program runs from (the folder holding TapeVault.sln and web/), or null for an installed copy.</summary>
    public static string? FindRepositoryRoot()
    {
        foreach (var start in new[] { Directory.GetCurrentDirectory(), AppContext.BaseDirectory })
        {
            for (var folder = new DirectoryInfo(start); folder is not null; folder = folder.Parent)
            {
                if (File.Exists(Path.Combine(folder.FullName, "TapeVault.sln")) && Directory.Exists(Path.Combine(folder.FullName, "web")))
                {
                    return folder.FullName;
                }
            }
        }

        return null;
    }
}
