using TapeVault.Core.Formats;

namespace TapeVault.Cli.Commands;

internal static class Catalogs
{
    /// <summary>The built-ins plus the folder named by --profiles, else the settings' folder when it exists.</summary>
    public static ProfileCatalog Load(string? folder, CliSettings settings)
    {
        ArgumentNullException.ThrowIfNull(settings);
        if (folder is not null && !Directory.Exists(folder))
        {
            throw new UsageException($"The profiles folder does not exist: {folder}.");
        }

        return ProfileCatalog.WithUserFolder(folder ?? settings.ProfilesFolder);
    }

    /// <summary>The profile that --profile names.</summary>
    public static FormatProfile Profile(string id, string? folder, CliSettings settings)
    {
        ArgumentNullException.ThrowIfNull(id);
        var catalog = Load(folder, settings);
        return catalog.TryGet(id, out var profile)
            ? profile
            : throw new UsageException($"Unknown profile '{id}'; run 'tapevault profiles' to list them.");
    }
}
