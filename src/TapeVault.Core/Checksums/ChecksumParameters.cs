using System.Globalization;

namespace TapeVault.Core.Checksums;

/// <summary>
/// A check value described by its parameters, from which <see cref="ChecksumCatalog.Create"/> builds the checksum.
/// Every record is validated when built; <see cref="Describe"/> gives the canonical text form, which
/// <see cref="ChecksumCatalog.Get"/> also accepts as a name.
/// </summary>
public abstract record ChecksumParameters
{
    private protected ChecksumParameters()
    {
    }

    /// <summary>Size of the check value in bits.</summary>
    public abstract int Bits { get; }

    /// <summary>Size of the stored check value in whole bytes.</summary>
    public int Bytes => (Bits + 7) / 8;

    /// <summary>The canonical text form, for example <c>crc(width=16 poly=0x1021 init=0xffff refin=false refout=false xorout=0x0000)</c>.</summary>
    public abstract string Describe();

    /// <summary>The parameters a canonical text form (<see cref="Describe"/>) gives; false for any other text.</summary>
    public static bool TryParse(string text, out ChecksumParameters? parameters)
    {
        ArgumentNullException.ThrowIfNull(text);
        parameters = null;
        int open = text.IndexOf('(', StringComparison.Ordinal);
        if (open <= 0 || !text.EndsWith(')'))
        {
            return false;
        }

        var values = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (string pair in text[(open + 1)..^1].Split(' ', StringSplitOptions.RemoveEmptyEntries))
        {
            int eq = pair.IndexOf('=', StringComparison.Ordinal);
            if (eq <= 0 || !values.TryAdd(pair[..eq], pair[(eq + 1)..]))
            {
                return false;
            }
        }

        try
        {
            parameters = text[..open] switch
            {
                "crc" => new CrcParameters(
                    int.Parse(Take(values, "width"), NumberStyles.None, CultureInfo.InvariantCulture),
                    Hex(Take(values, "poly")),
                    Hex(Take(values, "init")),
                    Flag(Take(values, "refin")),
                    Flag(Take(values, "refout")),
                    Hex(Take(values, "xorout"))),
                "sum" => new SumParameters(
                    int.Parse(Take(values, "bits"), NumberStyles.None, CultureInfo.InvariantCulture),
                    SumParameters.ParseCarry(Take(values, "carry")) ?? throw new FormatException(),
                    SumParameters.ParseComplement(Take(values, "complement")) ?? throw new FormatException(),
                    SumParameters.ParseAddend(Take(values, "addend")) ?? throw new FormatException()),
                "xor" => Take(values, "bits") == "8" ? new XorParameters() : throw new FormatException(),
                _ => null,
            };
        }
        catch (Exception e) when (e is FormatException or OverflowException or ArgumentException or KeyNotFoundException)
        {
            parameters = null;
            return false;
        }

        // Every value must have been used: a stray one is not the canonical form.
        if (parameters is null || values.Count != 0 || parameters.Describe() != text)
        {
            parameters = null;
            return false;
        }

        return true;
    }

    private static string Take(Dictionary<string, string> values, string key)
    {
        string value = values[key];
        values.Remove(key);
        return value;
    }

    private static uint Hex(string text) =>
        text.StartsWith("0x", StringComparison.Ordinal)
            ? uint.Parse(text.AsSpan(2), NumberStyles.AllowHexSpecifier, CultureInfo.InvariantCulture)
            : throw new FormatException();

    private static bool Flag(string text) => text switch
    {
        "true" => true,
        "false" => false,
        _ => throw new FormatException(),
    };
}

/// <summary>
/// A CRC in the Rocksoft/Williams model ("A Painless Guide to CRC Error Detection Algorithms"), as the CRC catalogue
/// (reveng) gives it: <paramref name="Width"/> in bits (8 to 32), the generator <paramref name="Poly"/> without its
/// top term, the register's initial value <paramref name="Init"/> (unreflected), whether input bytes are reflected
/// (<paramref name="RefIn"/>), whether the final register is reflected (<paramref name="RefOut"/>), and the value
/// XORed onto the result (<paramref name="XorOut"/>).
/// </summary>
public sealed record CrcParameters(int Width, uint Poly, uint Init, bool RefIn, bool RefOut, uint XorOut) : ChecksumParameters
{
    public const int MinimumWidth = 8;
    public const int MaximumWidth = 32;

    public int Width { get; } = Width is >= MinimumWidth and <= MaximumWidth
        ? Width
        : throw new ArgumentOutOfRangeException(nameof(Width), Width, $"A CRC's width must be {MinimumWidth} to {MaximumWidth} bits.");

    public uint Poly { get; } = Fits(Poly, Width, nameof(Poly)) && (Poly & 1u) == 1u
        ? Poly
        : throw new ArgumentOutOfRangeException(nameof(Poly), Poly, "A CRC's generator must have its x^0 term (an odd poly).");

    public uint Init { get; } = Fits(Init, Width, nameof(Init)) ? Init : 0;

    public uint XorOut { get; } = Fits(XorOut, Width, nameof(XorOut)) ? XorOut : 0;

    public override int Bits => Width;

    /// <summary>All ones in the low <paramref name="width"/> bits.</summary>
    public static uint Mask(int width) => width >= 32 ? uint.MaxValue : (1u << width) - 1;

    public override string Describe()
    {
        int digits = (Width + 3) / 4;
        string hex(uint v) => "0x" + v.ToString("x" + digits.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);
        return string.Create(CultureInfo.InvariantCulture,
            $"crc(width={Width} poly={hex(Poly)} init={hex(Init)} refin={(RefIn ? "true" : "false")} refout={(RefOut ? "true" : "false")} xorout={hex(XorOut)})");
    }

    private static bool Fits(uint value, int width, string name) =>
        width is < MinimumWidth or > MaximumWidth || (value & ~Mask(width)) == 0
            ? true
            : throw new ArgumentOutOfRangeException(name, value, $"The value does not fit in the CRC's {width} bits.");
}

/// <summary>How an additive sum treats the carry out of its top bit.</summary>
public enum SumCarry
{
    /// <summary>Dropped: the sum is taken modulo 2^bits.</summary>
    None,

    /// <summary>Added back into the lowest bit (one's-complement addition).</summary>
    EndAround,
}

/// <summary>What is done to an additive sum before it is stored.</summary>
public enum SumComplement
{
    None,

    /// <summary>Every bit inverted.</summary>
    Ones,

    /// <summary>Negated modulo 2^bits (so that data plus check sums to zero).</summary>
    Twos,
}

/// <summary>What an additive sum adds: each byte, or each pair of bytes as a 16-bit word.</summary>
public enum SumAddend
{
    Byte,

    /// <summary>16-bit words, first byte most significant; an odd last byte is padded with a zero after it.</summary>
    WordBigEndian,

    /// <summary>16-bit words, first byte least significant; an odd last byte is padded with a zero after it.</summary>
    WordLittleEndian,
}

/// <summary>An additive sum of <paramref name="Bits"/> (8 or 16) bits.</summary>
public sealed record SumParameters(int Bits, SumCarry Carry, SumComplement Complement, SumAddend Addend = SumAddend.Byte) : ChecksumParameters
{
    public override int Bits { get; } = Bits is 8 or 16
        ? Bits
        : throw new ArgumentOutOfRangeException(nameof(Bits), Bits, "An additive sum has 8 or 16 bits.");

    public SumCarry Carry { get; } = Enum.IsDefined(Carry) ? Carry : throw new ArgumentOutOfRangeException(nameof(Carry));

    public SumComplement Complement { get; } = Enum.IsDefined(Complement) ? Complement : throw new ArgumentOutOfRangeException(nameof(Complement));

    public SumAddend Addend { get; } = Addend == SumAddend.Byte || (Enum.IsDefined(Addend) && Bits == 16)
        ? Addend
        : throw new ArgumentOutOfRangeException(nameof(Addend), Addend, "Words of 16 bits need a 16-bit sum.");

    public override string Describe() => string.Create(CultureInfo.InvariantCulture,
        $"sum(bits={Bits} carry={CarryName(Carry)} complement={ComplementName(Complement)} addend={AddendName(Addend)})");

    public static string CarryName(SumCarry carry) => carry == SumCarry.EndAround ? "end-around" : "none";

    public static string ComplementName(SumComplement complement) => complement switch
    {
        SumComplement.Ones => "ones",
        SumComplement.Twos => "twos",
        _ => "none",
    };

    public static string AddendName(SumAddend addend) => addend switch
    {
        SumAddend.WordBigEndian => "word-big",
        SumAddend.WordLittleEndian => "word-little",
        _ => "byte",
    };

    public static SumCarry? ParseCarry(string text) => text switch
    {
        "none" => SumCarry.None,
        "end-around" => SumCarry.EndAround,
        _ => null,
    };

    public static SumComplement? ParseComplement(string text) => text switch
    {
        "none" => SumComplement.None,
        "ones" => SumComplement.Ones,
        "twos" => SumComplement.Twos,
        _ => null,
    };

    public static SumAddend? ParseAddend(string text) => text switch
    {
        "byte" => SumAddend.Byte,
        "word-big" => SumAddend.WordBigEndian,
        "word-little" => SumAddend.WordLittleEndian,
        _ => null,
    };
}

/// <summary>The XOR of all bytes (8 bits).</summary>
public sealed record XorParameters : ChecksumParameters
{
    public override int Bits => 8;

    public override string Describe() => "xor(bits=8)";
}
