using TapeVault.Core.Formats;

namespace TapeVault.Core.Tests.Families;

/// <summary>
/// The worked examples of docs/profiles.md: one-cycle-bits is built in; three-class-pairs is read from this folder
/// until the merge trusts its blocks of the second kind (see docs/profiles.md, "Known limits").
/// </summary>
internal static class FamilyProfiles
{
    private static readonly Lazy<FormatProfile> ThreeClass = new(() => ProfileLoader.Load(Path.Combine(Folder(), "three-class-pairs.json")));

    public static FormatProfile Get(string id) => id == "three-class-pairs" ? ThreeClass.Value : ProfileCatalog.BuiltIn.Get(id);

    private static string Folder()
    {
        var directory = new DirectoryInfo(AppContext.BaseDirectory);
        while (directory is not null && !File.Exists(Path.Combine(directory.FullName, "TapeVault.sln")))
        {
            directory = directory.Parent;
        }

        return Path.Combine(directory?.FullName ?? throw new InvalidOperationException("The repository root was not found."), "tests", "TapeVault.Core.Tests", "Families");
    }
}
