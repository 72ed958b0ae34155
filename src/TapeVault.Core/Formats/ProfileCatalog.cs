using System.Reflection;

namespace TapeVault.Core.Formats;

/// <summary>The built-in profiles (embedded in this assembly) and any the user keeps in a profiles folder.</summary>
public sealed class ProfileCatalog
{
    private const string ResourcePrefix = "TapeVault.Core.Formats.BuiltIn.";
    private readonly Dictionary<string, FormatProfile> _profiles;

    private ProfileCatalog(Dictionary<string, FormatProfile> profiles) => _profiles = profiles;

    public static ProfileCatalog BuiltIn { get; } = new(LoadBuiltIns());

    public IEnumerable<FormatProfile> All => _profiles.Values.OrderBy(p => p.Id, StringComparer.Ordinal);

    /// <summary>The built-ins plus every *.json in <paramref name="folder"/>; a user profile may not reuse a built-in id.</summary>
    public static ProfileCatalog WithUserFolder(string? folder)
    {
        var profiles = new Dictionary<string, FormatProfile>(BuiltIn._profiles, StringComparer.Ordinal);
        if (folder is null || !Directory.Exists(folder))
        {
            return new ProfileCatalog(profiles);
        }

        foreach (string file in Directory.EnumerateFiles(folder, "*.json").Order(StringComparer.Ordinal))
        {
            var profile = ProfileLoader.Load(file);
            if (!profiles.TryAdd(profile.Id, profile))
            {
                throw new ProfileException($"Profile {Path.GetFileName(file)}: id '{profile.Id}' is already taken by another profile.");
            }
        }

        return new ProfileCatalog(profiles);
    }

    public bool TryGet(string id, out FormatProfile profile) => _profiles.TryGetValue(id, out profile!);

    public FormatProfile Get(string id) =>
        _profiles.TryGetValue(id, out var profile)
            ? profile
            : throw new ProfileException($"Unknown profile '{id}'; known profiles: {string.Join(", ", _profiles.Keys.Order(StringComparer.Ordinal))}.");

    private static Dictionary<string, FormatProfile> LoadBuiltIns()
    {
        var assembly = typeof(ProfileCatalog).Assembly;
        var profiles = new Dictionary<string, FormatProfile>(StringComparer.Ordinal);
        foreach (string resource in assembly.GetManifestResourceNames())
        {
            if (!resource.StartsWith(ResourcePrefix, StringComparison.Ordinal))
            {
                continue;
            }

            using var stream = assembly.GetManifestResourceStream(resource)!;
            using var reader = new StreamReader(stream);
            var profile = ProfileLoader.Parse(reader.ReadToEnd(), resource[ResourcePrefix.Length..]);
            profiles.Add(profile.Id, profile);
        }

        return profiles;
    }
}
