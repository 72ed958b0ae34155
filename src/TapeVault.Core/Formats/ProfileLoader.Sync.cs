using System.Collections.Immutable;
using System.Globalization;

namespace TapeVault.Core.Formats;

public static partial class ProfileLoader
{
    /// <summary>The longest sync field: no format we know writes more sync bytes before a block.</summary>
    public const int MaximumSyncBytes = 16;

    /// <summary>
    /// Why a sync field may not expect <paramref name="value"/>, or null where it may: a run of one value (or a lone
    /// byte of all zeros or all ones) is what a stuck line or a lead-in reads as, so it proves no block start.
    /// </summary>
    public static string? SyncProblem(ReadOnlySpan<byte> value)
    {
        if (value.Length > 1 && value.IndexOfAnyExcept(value[0]) < 0)
        {
            return "must not be one byte value repeated: a lead-in or a stuck line reads as such a run";
        }

        return value is [0x00] or [0xFF] ? "must not be a byte of all zeros or all ones: a lead-in or a stuck line reads as such a run" : null;
    }

    private sealed partial class Validator
    {
        // A sync field's expected bytes, one entry per copy or one for all; other roles take none.
        private IReadOnlyList<ImmutableArray<byte>> SyncExpected(HeaderFieldDocument f, FieldRole role, int bytes, int index, string path)
        {
            if (role != FieldRole.Sync)
            {
                if (f.Expect is not null)
                {
                    Fail(path + ".expect", "is only for a field with the role sync");
                }

                return [];
            }

            if (index != 0)
            {
                Fail(path + ".role", "sync must be the first header field: it marks where the block begins");
            }

            if (f.Expect is not { Count: > 0 } texts)
            {
                Fail(path + ".expect", "is required for a sync field: the bytes it holds, as hex text such as \"89 88 87\", one per copy or one for all");
                return [];
            }

            var result = new List<ImmutableArray<byte>>(texts.Count);
            for (int i = 0; i < texts.Count; i++)
            {
                string itemPath = $"{path}.expect[{i}]";
                var value = HexBytes(texts[i], itemPath);
                if (value.Length != bytes)
                {
                    Fail(itemPath, $"holds {value.Length} bytes; the field has {bytes}");
                }

                if (SyncProblem(value.AsSpan()) is { } problem)
                {
                    Fail(itemPath, problem);
                }

                result.Add(value);
            }

            return result.AsReadOnly();
        }

        // Each sync field gives one expected value for all copies, or exactly one per copy.
        private void SyncCopies(List<HeaderField> header, int copies)
        {
            for (int i = 0; i < header.Count; i++)
            {
                int given = header[i].Expected.Count;
                if (header[i].Role == FieldRole.Sync && given != 1 && given != copies)
                {
                    Fail($"layout.header[{i}].expect", $"gives {given} values; give one for all copies or one per copy ({copies})");
                }
            }
        }

        private ImmutableArray<byte> HexBytes(string? text, string path)
        {
            if (string.IsNullOrWhiteSpace(text))
            {
                Fail(path, "must be hex bytes separated by spaces, such as \"89 88 87\"");
            }

            var parts = text!.Split(' ', StringSplitOptions.RemoveEmptyEntries);
            var bytes = ImmutableArray.CreateBuilder<byte>(parts.Length);
            foreach (string part in parts)
            {
                string digits = part.StartsWith("0x", StringComparison.OrdinalIgnoreCase) ? part[2..] : part;
                byte b = 0;
                if (digits.Length is 0 or > 2 || !byte.TryParse(digits, NumberStyles.AllowHexSpecifier, CultureInfo.InvariantCulture, out b))
                {
                    Fail(path, $"must be hex bytes separated by spaces, such as \"89 88 87\"; '{part}' is not one");
                }

                bytes.Add(b);
            }

            return bytes.ToImmutable();
        }
    }
}
