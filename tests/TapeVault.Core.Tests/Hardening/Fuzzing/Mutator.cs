using System.Buffers.Binary;
using System.Globalization;
using System.Security.Cryptography;
using System.Text;

namespace TapeVault.Core.Tests.Hardening.Fuzzing;

/// <summary>Which structure-aware edits a mutator knows for an input.</summary>
internal enum InputKind
{
    /// <summary>RIFF/WAVE: chunk-size and fmt-field edits.</summary>
    Wav,

    /// <summary>JSON text: numbers replaced by awkward ones.</summary>
    Json,

    /// <summary>Tape image container: header length edits, manifest numbers, and a recomputed whole-file hash.</summary>
    Image,
}

/// <summary>
/// Seeded random mutations of a valid input: bit flips, byte changes, truncations, insertions, deletions, copies of
/// a stretch, and edits that know the structure (chunk sizes and format fields of a WAV file, length fields of the
/// image header, numbers in JSON text). Deterministic: the same seed gives the same inputs on every machine.
/// </summary>
internal static class Mutator
{
    private static readonly uint[] AwkwardSizes = [0, 1, 2, 3, 15, 16, 17, 18, 39, 40, 41, 0x7F, 0x80, 0xFF, 0xFFFF, 0x1_0000, 0x7FFF_FFFF, 0x8000_0000, 0xFFFF_FFFE, 0xFFFF_FFFF];

    private static readonly ushort[] AwkwardShorts = [0, 1, 2, 3, 4, 7, 8, 9, 12, 16, 24, 32, 64, 0x7FFF, 0x8000, 0xFFFE, 0xFFFF];

    private static readonly string[] AwkwardNumbers = ["0", "-0", "-1", "1", "7", "1e9", "1000000000", "2147483648", "-2147483649", "9223372036854775808", "1e400", "-1e400", "1e-400", "0.5", "-0.0001", "65536", "1048577", "NaN", "\"1\"", "null", "[]", "{}", "true"];

    /// <summary>One to three mutations of <paramref name="seed"/>, and a short account of what was done.</summary>
    public static (byte[] Input, string Description) Mutate(byte[] seed, InputKind kind, Random random)
    {
        ArgumentNullException.ThrowIfNull(seed);
        ArgumentNullException.ThrowIfNull(random);
        if (kind == InputKind.Image && random.Next(3) == 0 && ManifestOf(seed) is { } manifest)
        {
            return MutateManifest(seed, manifest, random);
        }

        byte[] input = (byte[])seed.Clone();
        int count = 1 + random.Next(3);
        var description = new StringBuilder();
        for (int i = 0; i < count; i++)
        {
            (input, string what) = MutateOnce(input, kind, random);
            description.Append(i == 0 ? string.Empty : "; ").Append(what);
        }

        if (kind == InputKind.Image && input.Length >= 32 && random.Next(2) == 0)
        {
            // Half the time, put a correct whole-file hash in the trailer, so that the parser behind it is reached.
            SHA256.HashData(input.AsSpan(0, input.Length - 32), input.AsSpan(input.Length - 32));
            description.Append("; whole-file hash recomputed");
        }

        return (input, description.ToString());
    }

    /// <summary>Where a well-formed container's manifest lies (header fields at 12 and 16, docs/image-format.md).</summary>
    private static (int Start, int Length)? ManifestOf(byte[] container)
    {
        if (container.Length < 56)
        {
            return null;
        }

        long length = BinaryPrimitives.ReadUInt32LittleEndian(container.AsSpan(12));
        return length <= container.Length - 56 ? (24, (int)length) : null;
    }

    /// <summary>
    /// Mutates the manifest text alone, then sets the header's manifest length and the whole-file hash to match, as a
    /// careless editor would: the input gets past every check of the container's frame and reaches the manifest parser.
    /// </summary>
    private static (byte[] Input, string What) MutateManifest(byte[] seed, (int Start, int Length) manifest, Random random)
    {
        byte[] text = seed[manifest.Start..(manifest.Start + manifest.Length)];
        var description = new StringBuilder("in the manifest: ");
        int count = 1 + random.Next(2);
        for (int i = 0; i < count; i++)
        {
            (text, string what) = MutateOnce(text, InputKind.Json, random);
            description.Append(i == 0 ? string.Empty : "; ").Append(what);
        }

        byte[] input = [.. seed[..manifest.Start], .. text, .. seed[(manifest.Start + manifest.Length)..]];
        BinaryPrimitives.WriteUInt32LittleEndian(input.AsSpan(12), (uint)text.Length);
        SHA256.HashData(input.AsSpan(0, input.Length - 32), input.AsSpan(input.Length - 32));
        return (input, description.Append("; manifest length and whole-file hash fixed up").ToString());
    }

    private static (byte[] Input, string What) MutateOnce(byte[] input, InputKind kind, Random random)
    {
        switch (random.Next(9))
        {
            case 0:
            {
                if (input.Length == 0)
                {
                    return ([(byte)random.Next(256)], "one byte into an empty input");
                }

                int at = Position(input, kind, random);
                int bit = random.Next(8);
                input[at] ^= (byte)(1 << bit);
                return (input, Invariant($"bit {bit} flipped at {at}"));
            }

            case 1:
            {
                if (input.Length == 0)
                {
                    return (input, "nothing to change");
                }

                int at = Position(input, kind, random);
                byte value = random.Next(3) switch { 0 => 0x00, 1 => 0xFF, _ => (byte)random.Next(256) };
                input[at] = value;
                return (input, Invariant($"byte at {at} set to 0x{value:X2}"));
            }

            case 2:
            {
                int keep = random.Next(input.Length + 1);
                return (input[..keep], Invariant($"truncated to {keep} bytes"));
            }

            case 3:
            {
                int at = random.Next(input.Length + 1);
                var extra = new byte[1 + random.Next(random.Next(2) == 0 ? 8 : 600)];
                random.NextBytes(extra);
                return ([.. input[..at], .. extra, .. input[at..]], Invariant($"{extra.Length} random bytes inserted at {at}"));
            }

            case 4:
            {
                if (input.Length == 0)
                {
                    return (input, "nothing to delete");
                }

                int at = random.Next(input.Length);
                int length = 1 + random.Next(Math.Min(input.Length - at, 64));
                return ([.. input[..at], .. input[(at + length)..]], Invariant($"{length} bytes deleted at {at}"));
            }

            case 5:
            {
                if (input.Length < 2)
                {
                    return (input, "nothing to copy");
                }

                int from = random.Next(input.Length);
                int length = 1 + random.Next(Math.Min(input.Length - from, 256));
                int to = random.Next(input.Length + 1);
                return ([.. input[..to], .. input.AsSpan(from, length), .. input[to..]], Invariant($"{length} bytes from {from} copied to {to}"));
            }

            default:
                return kind switch
                {
                    InputKind.Wav => EditWav(input, random),
                    InputKind.Json => EditJsonNumber(input, random),
                    _ => EditImage(input, random),
                };
        }
    }

    /// <summary>Half the positions fall in the first 64 bytes, where the headers are.</summary>
    private static int Position(byte[] input, InputKind kind, Random random) =>
        kind != InputKind.Json && random.Next(2) == 0 ? random.Next(Math.Min(input.Length, 64)) : random.Next(input.Length);

    /// <summary>A chunk's size field, the RIFF size, or a field of the fmt chunk, set to an awkward value.</summary>
    private static (byte[] Input, string What) EditWav(byte[] input, Random random)
    {
        var sizeFields = new List<int>();
        if (input.Length >= 8)
        {
            sizeFields.Add(4);
        }

        int fmtBody = -1;
        long position = 12;
        while (position + 8 <= input.Length && sizeFields.Count < 16)
        {
            sizeFields.Add((int)position + 4);
            if (input.AsSpan((int)position, 4).SequenceEqual("fmt "u8))
            {
                fmtBody = (int)position + 8;
            }

            long size = BinaryPrimitives.ReadUInt32LittleEndian(input.AsSpan((int)position + 4));
            position += 8 + size + (size & 1);
        }

        if (fmtBody >= 0 && fmtBody + 16 <= input.Length && random.Next(2) == 0)
        {
            // fmt fields: tag 0, channels 2, rate 4 (u32), bytes per second 8 (u32), block align 12, bits 14.
            int field = new[] { 0, 2, 4, 8, 12, 14 }[random.Next(6)];
            if (field is 4 or 8)
            {
                uint value = random.Next(2) == 0 ? AwkwardSizes[random.Next(AwkwardSizes.Length)] : (uint)random.Next();
                BinaryPrimitives.WriteUInt32LittleEndian(input.AsSpan(fmtBody + field), value);
                return (input, Invariant($"fmt field at +{field} set to {value}"));
            }

            ushort shortValue = AwkwardShorts[random.Next(AwkwardShorts.Length)];
            BinaryPrimitives.WriteUInt16LittleEndian(input.AsSpan(fmtBody + field), shortValue);
            return (input, Invariant($"fmt field at +{field} set to {shortValue}"));
        }

        if (sizeFields.Count == 0)
        {
            return (input, "no size field to edit");
        }

        int at = sizeFields[random.Next(sizeFields.Count)];
        uint old = BinaryPrimitives.ReadUInt32LittleEndian(input.AsSpan(at));
        uint size32 = random.Next(4) switch
        {
            0 => unchecked(old + 1),
            1 => unchecked(old - 1),
            2 => (uint)input.Length,
            _ => AwkwardSizes[random.Next(AwkwardSizes.Length)],
        };
        BinaryPrimitives.WriteUInt32LittleEndian(input.AsSpan(at), size32);
        return (input, Invariant($"size field at {at} set from {old} to {size32}"));
    }

    /// <summary>A number in the text (a run of digits with its sign) replaced by an awkward value.</summary>
    private static (byte[] Input, string What) EditJsonNumber(byte[] input, Random random)
    {
        var starts = new List<int>();
        for (int i = 0; i < input.Length; i++)
        {
            if (char.IsAsciiDigit((char)input[i]) && (i == 0 || !IsNumberByte(input[i - 1])))
            {
                starts.Add(i);
            }
        }

        if (starts.Count == 0)
        {
            return (input, "no number to edit");
        }

        int start = starts[random.Next(starts.Count)];
        if (start > 0 && input[start - 1] == '-')
        {
            start--;
        }

        int end = start + 1;
        while (end < input.Length && IsNumberByte(input[end]))
        {
            end++;
        }

        string value = AwkwardNumbers[random.Next(AwkwardNumbers.Length)];
        string old = Encoding.ASCII.GetString(input, start, end - start);
        return ([.. input[..start], .. Encoding.ASCII.GetBytes(value), .. input[end..]], $"number {old} at {start} replaced by {value}");
    }

    /// <summary>The header's manifest or data length set to an awkward value, else a number of the manifest edited.</summary>
    private static (byte[] Input, string What) EditImage(byte[] input, Random random)
    {
        if (input.Length >= 24 && random.Next(2) == 0)
        {
            ulong old = random.Next(2) == 0 ? BinaryPrimitives.ReadUInt32LittleEndian(input.AsSpan(12)) : BinaryPrimitives.ReadUInt64LittleEndian(input.AsSpan(16));
            ulong value = random.Next(3) switch
            {
                0 => unchecked(old + 1),
                1 => unchecked(old - 1),
                _ => AwkwardSizes[random.Next(AwkwardSizes.Length)] | (random.Next(4) == 0 ? 0xFFFF_FFFF_0000_0000UL : 0),
            };
            if (random.Next(2) == 0)
            {
                BinaryPrimitives.WriteUInt32LittleEndian(input.AsSpan(12), unchecked((uint)value));
                return (input, Invariant($"manifest length set to {unchecked((uint)value)}"));
            }

            BinaryPrimitives.WriteUInt64LittleEndian(input.AsSpan(16), value);
            return (input, Invariant($"data length set to {value}"));
        }

        return EditJsonNumber(input, random);
    }

    private static bool IsNumberByte(byte b) => char.IsAsciiDigit((char)b) || b is (byte)'.' or (byte)'e' or (byte)'E' or (byte)'+' or (byte)'-';

    private static string Invariant(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}
