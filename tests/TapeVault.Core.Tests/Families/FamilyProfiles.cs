using TapeVault.Core.Formats;

namespace TapeVault.Core.Tests.Families;

/// <summary>The worked examples of docs/profiles.md (one-cycle-bits and three-class-pairs), both built in.</summary>
internal static class FamilyProfiles
{
    public static FormatProfile Get(string id) => ProfileCatalog.BuiltIn.Get(id);
}
