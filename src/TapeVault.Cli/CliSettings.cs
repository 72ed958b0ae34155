using Microsoft.Extensions.Configuration;

namespace TapeVault.Cli;

/// <summary>
/// The "TapeVault" section of appsettings.json: the copy beside the program, overridden by one in the current
/// folder (the repository root, when run with <c>dotnet run</c>), then environment variables (TapeVault__Archive__…).
/// Options on the command line override them all.
/// </summary>
public sealed class CliSettings
{
    /// <summary>Folder of the user's own profiles (*.json), relative to the current folder; used when it exists.</summary>
    public string? ProfilesFolder { get; set; }

    public DecodeSettings Decode { get; set; } = new();

    /// <summary>Where the web app's archive lives (the same section the web app reads), for <c>users</c>.</summary>
    public TapeVault.Archive.ArchiveOptions Archive { get; set; } = new();

    public sealed class DecodeSettings
    {
        public string Channel { get; set; } = "mix";

        public int ChunkSamples { get; set; } = 16_384;
    }

    public static CliSettings Load()
    {
        var configuration = new ConfigurationBuilder()
            .AddJsonFile(Path.Combine(AppContext.BaseDirectory, "appsettings.json"), optional: true)
            .AddJsonFile(Path.Combine(Directory.GetCurrentDirectory(), "appsettings.json"), optional: true)
            // As the web app: TapeVault__Archive__Provider=PostgreSql and the like override the files.
            .AddEnvironmentVariables()
            .Build();
        var settings = configuration.GetSection("TapeVault").Get<CliSettings>() ?? new CliSettings();
        if (settings.Decode.ChunkSamples is < 256 or > 1 << 20)
        {
            throw new UsageException($"appsettings.json: TapeVault:Decode:ChunkSamples must be between 256 and 1048576, not {settings.Decode.ChunkSamples}.");
        }

        return settings;
    }
}
