using System.ComponentModel.DataAnnotations;

namespace TapeVault.Archive;

/// <summary>The database engines the archive runs on.</summary>
public enum DatabaseProvider
{
    Sqlite,
    PostgreSql,
}

/// <summary>The "TapeVault:Archive" section of appsettings.json.</summary>
public sealed class ArchiveOptions
{
    public const string Section = "TapeVault:Archive";

    /// <summary>The folder relative paths are taken from (the repository root when run from a clone; else the current folder).</summary>
    public string BaseFolder { get; set; } = Directory.GetCurrentDirectory();

    /// <summary>Which database holds the archive: an SQLite file (the default, nothing to set up) or a PostgreSQL server.</summary>
    public DatabaseProvider Provider { get; set; } = DatabaseProvider.Sqlite;

    /// <summary>
    /// With <see cref="DatabaseProvider.PostgreSql"/>, the server's connection string (Npgsql's keywords, e.g.
    /// "Host=db.example.org;Port=5432;Database=tapevault;Username=tapevault;Password=…"); unused with SQLite.
    /// </summary>
    public string ConnectionString { get; set; } = "";

    /// <summary>With <see cref="DatabaseProvider.Sqlite"/>, the database file; a relative path is taken from <see cref="BaseFolder"/>.</summary>
    [Required(AllowEmptyStrings = false)]
    public string DatabasePath { get; set; } = "data/tapevault.db";

    /// <summary>The content store's root folder (originals, images, exports).</summary>
    [Required(AllowEmptyStrings = false)]
    public string StorePath { get; set; } = "data/store";

    /// <summary>The largest capture accepted, in bytes.</summary>
    [Range(1, long.MaxValue)]
    public long MaxUploadBytes { get; set; } = 2L * 1024 * 1024 * 1024;

    /// <summary>
    /// The file name extensions accepted for captures when the settings name none: WAV (RIFF, RF64 and BW64 files
    /// mostly end in .wav too), Broadcast WAV's .bwf, .rf64, and FLAC.
    /// </summary>
    public static IReadOnlyList<string> DefaultExtensions { get; } = [".wav", ".wave", ".bwf", ".rf64", ".flac"];

    /// <summary>The content types accepted when the settings name none (what browsers and tools send for WAV and FLAC, or a plain byte stream).</summary>
    public static IReadOnlyList<string> DefaultContentTypes { get; } = ["audio/wav", "audio/x-wav", "audio/wave", "audio/vnd.wave", "audio/flac", "audio/x-flac", "application/octet-stream"];

    /// <summary>
    /// File name extensions accepted for captures, as the settings give them; a list given replaces
    /// <see cref="DefaultExtensions"/>. Empty here, not the defaults: the configuration binder appends a configured
    /// list to the one a property starts with, so a default list could never be narrowed.
    /// </summary>
    public string[] AllowedExtensions { get; set; } = [];

    /// <summary>Content types accepted for captures, as the settings give them; a list given replaces <see cref="DefaultContentTypes"/>.</summary>
    public string[] AllowedContentTypes { get; set; } = [];

    /// <summary>The extensions in force: the configured ones (each once, in their order), or the defaults.</summary>
    public IReadOnlyList<string> AcceptedExtensions => InForce(AllowedExtensions, DefaultExtensions);

    /// <summary>The content types in force: the configured ones (each once, in their order), or the defaults.</summary>
    public IReadOnlyList<string> AcceptedContentTypes => InForce(AllowedContentTypes, DefaultContentTypes);

    /// <summary>How many jobs run at once.</summary>
    [Range(1, 64)]
    public int Workers { get; set; } = 2;

    /// <summary>
    /// How old the last walk along the whole event chain may be before a fixity audit walks it whole again, in days; in
    /// between, an audit walks only the events after the last audit's verified head (docs/event-chain.md, "Checkpoints").
    /// 0: every audit walks the whole chain.
    /// </summary>
    [Range(0, 3650)]
    public int WholeChainWalkDays { get; set; } = 7;

    /// <summary>How many times a job interrupted by a restart is started again before it is failed.</summary>
    [Range(1, 100)]
    public int MaxAttempts { get; set; } = 3;

    /// <summary>The organisation that holds the archive, named in bags and catalogues.</summary>
    [Required]
    public Organisation Organisation { get; set; } = new();

    public string FullDatabasePath => Path.GetFullPath(DatabasePath, BaseFolder);

    public string FullStorePath => Path.GetFullPath(StorePath, BaseFolder);

    private static IReadOnlyList<string> InForce(string[] configured, IReadOnlyList<string> defaults)
    {
        var list = (configured ?? []).Where(v => !string.IsNullOrWhiteSpace(v)).Select(v => v.Trim()).Distinct(StringComparer.OrdinalIgnoreCase).ToList();
        return list.Count > 0 ? list : defaults;
    }

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
