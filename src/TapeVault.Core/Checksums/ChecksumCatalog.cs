using System.Collections.Concurrent;
using System.Diagnostics.CodeAnalysis;

namespace TapeVault.Core.Checksums;

/// <summary>A CRC model of the CRC catalogue (reveng), under its catalogue name and the aliases we accept for it.</summary>
public sealed record CrcModel(string Name, CrcParameters Parameters, IReadOnlyList<string> Aliases);

/// <summary>
/// The block checksums known by name (names are case-sensitive), and the checksums built from parameters. Each
/// model's table is built once: a name, an alias and the same parameters all give the same instance.
/// </summary>
public static class ChecksumCatalog
{
    private static readonly ConcurrentDictionary<ChecksumParameters, IBlockChecksum> Built = new();

    private static readonly SumParameters Sum8 = new(8, SumCarry.None, SumComplement.None);

    /// <summary>The CRC catalogue's models that we build in, widths 8 to 32 (parameters as the catalogue lists them).</summary>
    public static IReadOnlyList<CrcModel> Models { get; } = Array.AsReadOnly(new CrcModel[]
    {
        Model("CRC-8/SMBUS", 8, 0x07, 0x00, false, false, 0x00),
        Model("CRC-8/I-432-1", 8, 0x07, 0x00, false, false, 0x55, "CRC-8/ITU"),
        Model("CRC-8/ROHC", 8, 0x07, 0xFF, true, true, 0x00),
        Model("CRC-8/DVB-S2", 8, 0xD5, 0x00, false, false, 0x00),
        Model("CRC-8/WCDMA", 8, 0x9B, 0x00, true, true, 0x00),
        Model("CRC-10/ATM", 10, 0x233, 0x000, false, false, 0x000, "CRC-10", "CRC-10/I-610"),
        Model("CRC-11/UMTS", 11, 0x307, 0x000, false, false, 0x000),
        Model("CRC-12/DECT", 12, 0x80F, 0x000, false, false, 0x000, "X-CRC-12"),
        Model("CRC-12/UMTS", 12, 0x80F, 0x000, false, true, 0x000, "CRC-12/3GPP"),
        Model("CRC-15/CAN", 15, 0x4599, 0x0000, false, false, 0x0000, "CRC-15"),
        Model("CRC-16/ARC", 16, 0x8005, 0x0000, true, true, 0x0000, "ARC", "CRC-16", "CRC-16/LHA"),
        Model("CRC-16/UMTS", 16, 0x8005, 0x0000, false, false, 0x0000),
        Model("CRC-16/XMODEM", 16, 0x1021, 0x0000, false, false, 0x0000, "CRC-16/V-41-MSB", "XMODEM", "ZMODEM"),
        Model("CRC-16/CCITT-FALSE", 16, 0x1021, 0xFFFF, false, false, 0x0000),
        Model("CRC-16/KERMIT", 16, 0x1021, 0x0000, true, true, 0x0000, "CRC-16/CCITT", "CRC-16/CCITT-TRUE", "CRC-16/V-41-LSB", "KERMIT"),
        Model("CRC-16/ISO-HDLC", 16, 0x1021, 0xFFFF, true, true, 0xFFFF, "CRC-16/X-25", "X-25"),
        Model("CRC-16/GSM", 16, 0x1021, 0x0000, false, false, 0xFFFF),
        Model("CRC-16/MODBUS", 16, 0x8005, 0xFFFF, true, true, 0x0000, "MODBUS"),
        Model("CRC-16/USB", 16, 0x8005, 0xFFFF, true, true, 0xFFFF),
        Model("CRC-16/DNP", 16, 0x3D65, 0x0000, true, true, 0xFFFF),
        Model("CRC-16/EN-13757", 16, 0x3D65, 0x0000, false, false, 0xFFFF),
        Model("CRC-16/T10-DIF", 16, 0x8BB7, 0x0000, false, false, 0x0000),
        Model("CRC-16/DECT-X", 16, 0x0589, 0x0000, false, false, 0x0000, "X-CRC-16"),
        Model("CRC-17/CAN-FD", 17, 0x1685B, 0x00000, false, false, 0x00000),
        Model("CRC-21/CAN-FD", 21, 0x102899, 0x000000, false, false, 0x000000),
        Model("CRC-24/OPENPGP", 24, 0x864CFB, 0xB704CE, false, false, 0x000000, "CRC-24"),
        Model("CRC-24/LTE-A", 24, 0x864CFB, 0x000000, false, false, 0x000000),
        Model("CRC-30/CDMA", 30, 0x2030B9C7, 0x3FFFFFFF, false, false, 0x3FFFFFFF),
        Model("CRC-32/ISO-HDLC", 32, 0x04C11DB7, 0xFFFFFFFF, true, true, 0xFFFFFFFF, "CRC-32", "CRC-32/ADCCP", "CRC-32/V-42", "CRC-32/XZ"),
        Model("CRC-32/BZIP2", 32, 0x04C11DB7, 0xFFFFFFFF, false, false, 0xFFFFFFFF, "CRC-32/AAL5", "CRC-32/DECT-B", "B-CRC-32"),
        Model("CRC-32/CKSUM", 32, 0x04C11DB7, 0x00000000, false, false, 0xFFFFFFFF, "CRC-32/POSIX"),
        Model("CRC-32/MPEG-2", 32, 0x04C11DB7, 0xFFFFFFFF, false, false, 0x00000000),
        Model("CRC-32/JAMCRC", 32, 0x04C11DB7, 0xFFFFFFFF, true, true, 0x00000000),
        Model("CRC-32/ISCSI", 32, 0x1EDC6F41, 0xFFFFFFFF, true, true, 0xFFFFFFFF, "CRC-32C", "CRC-32/CASTAGNOLI"),
        Model("CRC-32/AIXM", 32, 0x814141AB, 0x00000000, false, false, 0x00000000, "CRC-32Q"),
        Model("CRC-32/XFER", 32, 0x000000AF, 0x00000000, false, false, 0x00000000),
    });

    // The names of the first profile language, kept so that existing profiles load unchanged.
    private static readonly (string Name, Func<IBlockChecksum> Build)[] Legacy =
    [
        ("xor8", () => Create(new XorParameters())),
        ("sum8", () => Create(Sum8)),
        ("crc16-ccitt-false", () => Create(ModelNamed("CRC-16/CCITT-FALSE").Parameters)),
        ("crc16-xmodem", () => Create(ModelNamed("CRC-16/XMODEM").Parameters)),
        ("crc32", () => Create(ModelNamed("CRC-32/ISO-HDLC").Parameters)),
    ];

    private static readonly Dictionary<string, IBlockChecksum> ByName = BuildNames();

    /// <summary>The primary names, in catalogue order: the legacy names first, then the CRC catalogue's models.</summary>
    public static IReadOnlyList<string> Names { get; } =
        Array.AsReadOnly(Legacy.Select(l => l.Name).Concat(Models.Select(m => m.Name)).ToArray());

    /// <summary>Every name a checksum answers to: primary names and aliases.</summary>
    public static IReadOnlyCollection<string> AllNames => ByName.Keys;

    public static bool TryGet(string name, [MaybeNullWhen(false)] out IBlockChecksum checksum)
    {
        ArgumentNullException.ThrowIfNull(name);
        if (ByName.TryGetValue(name, out checksum))
        {
            return true;
        }

        // The canonical text of a parameter record (what a parameter-built checksum is called) names it too.
        if (ChecksumParameters.TryParse(name, out var parameters))
        {
            checksum = Create(parameters!);
            return true;
        }

        return false;
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

    /// <summary>
    /// The checksum the parameters describe: a catalogue model's parameters give that model (named as in the
    /// catalogue), an XOR gives <c>xor8</c> and a plain 8-bit sum <c>sum8</c>; any other checksum is named by its canonical text
    /// (<see cref="ChecksumParameters.Describe"/>). Built once per parameters.
    /// </summary>
    public static IBlockChecksum Create(ChecksumParameters parameters)
    {
        ArgumentNullException.ThrowIfNull(parameters);
        return Built.GetOrAdd(parameters, static p => p switch
        {
            CrcParameters crc => new CrcChecksum(Models.FirstOrDefault(m => m.Parameters == crc)?.Name ?? crc.Describe(), crc),
            SumParameters sum => new SumChecksum(sum == Sum8 ? "sum8" : sum.Describe(), sum),
            XorParameters => new XorChecksum("xor8"),
            _ => throw new ArgumentException($"Unknown kind of checksum parameters: {p.GetType().Name}.", nameof(parameters)),
        });
    }

    /// <summary>The parameters of a checksum built by this catalogue.</summary>
    public static ChecksumParameters ParametersOf(IBlockChecksum checksum) => checksum switch
    {
        CrcChecksum crc => crc.Parameters,
        SumChecksum sum => sum.Parameters,
        XorChecksum xor => xor.Parameters,
        null => throw new ArgumentNullException(nameof(checksum)),
        _ => throw new ArgumentException($"The checksum '{checksum.Name}' was not built from parameters.", nameof(checksum)),
    };

    private static CrcModel ModelNamed(string name) => Models.First(m => m.Name == name);

    private static CrcModel Model(string name, int width, uint poly, uint init, bool refIn, bool refOut, uint xorOut, params string[] aliases) =>
        new(name, new CrcParameters(width, poly, init, refIn, refOut, xorOut), Array.AsReadOnly(aliases));

    private static Dictionary<string, IBlockChecksum> BuildNames()
    {
        var names = new Dictionary<string, IBlockChecksum>(StringComparer.Ordinal);
        foreach (var (name, build) in Legacy)
        {
            // A legacy name is its checksum's own name: the same table, under the name profiles have used.
            var checksum = build();
            names.Add(name, checksum.Name == name ? checksum : Renamed(name, checksum));
        }

        foreach (var model in Models)
        {
            var checksum = Create(model.Parameters);
            names.Add(model.Name, checksum);
            foreach (string alias in model.Aliases)
            {
                names.Add(alias, checksum);
            }
        }

        return names;
    }

    private static IBlockChecksum Renamed(string name, IBlockChecksum checksum) => checksum switch
    {
        CrcChecksum crc => new CrcChecksum(name, crc),
        _ => throw new InvalidOperationException($"No legacy name for {checksum.Name}."),
    };
}
