using System.Diagnostics.CodeAnalysis;

namespace TapeVault.Core.Checksums;

/// <summary>The block checksums known by name (names are case-sensitive, lower case).</summary>
public static class ChecksumCatalog
{
    private static readonly IBlockChecksum[] All =
    [
        new Xor8Checksum(),
        new Sum8Checksum(),
        new Crc16CcittFalseChecksum(),
        new Crc16XmodemChecksum(),
        new Crc32Checksum(),
    ];

    private static readonly Dictionary<string, IBlockChecksum> ByName =
        All.ToDictionary(c => c.Name, StringComparer.Ordinal);

    /// <summary>All known checksum names, in catalogue order.</summary>
    public static IReadOnlyList<string> Names { get; } = Array.AsReadOnly(All.Select(c => c.Name).ToArray());

    public static bool TryGet(string name, [MaybeNullWhen(false)] out IBlockChecksum checksum)
    {
        ArgumentNullException.ThrowIfNull(name);
        return ByName.TryGetValue(name, out checksum);
    }

    /// <exception cref="ArgumentException">The name is not in the catalogue.</exception>
    public static IBlockChecksum Get(string name)
    {
        if (TryGet(name, out IBlockChecksum? checksum))
        {
            return checksum;
        }

        throw new ArgumentException(
            $"Unknown checksum '{name}'. Known checksums: {string.Join(", ", Names)}.",
            nameof(name));
    }
}
