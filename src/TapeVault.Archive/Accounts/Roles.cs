namespace TapeVault.Archive.Accounts;

/// <summary>The two roles: curators may change the archive, viewers may only read it.</summary>
public static class Roles
{
    public const string Curator = "curator";
    public const string Viewer = "viewer";

    public static IReadOnlyList<string> All { get; } = [Curator, Viewer];

    /// <summary>The authorization policy every writing endpoint requires.</summary>
    public const string CuratorPolicy = "curator";

    /// <summary>The policy every reading endpoint requires (either role).</summary>
    public const string ReaderPolicy = "reader";
}
