using System.Globalization;
using System.Text.Json;

namespace TapeVault.Core.Formats;

// Lead-ins as patterns: a run of repeated characters (FSK) and a repeated bit pattern (biphase). See docs/profiles.md.
public static partial class ProfileLoader
{
    private sealed partial class Validator
    {
        /// <summary>The FSK lead-in of repeated characters, if the profile gives one (<c>fsk.leadIn</c>).</summary>
        private CharacterLeadIn? FskLeadIn(FskDocument d, ByteFraming framing, BlockLayout layout)
        {
            if (d.LeadIn is not { } leadIn)
            {
                return null;
            }

            const string path = "fsk.leadIn";
            if (d.LeadInMinimumSeconds is not null)
            {
                Fail("fsk.leadInMinimumSeconds", "must not be given with fsk.leadIn: the lead-in is either mark tone or repeated characters");
            }

            int character = CharacterValue(leadIn.Character, path + ".character", framing.DataBits);
            int minimum = Required(leadIn.MinimumCount, path + ".minimumCount");
            if (minimum is < 4 or > 100_000)
            {
                Fail(path + ".minimumCount", $"must be between 4 and 100 000, not {minimum}");
            }

            if (framing.StartBits.Length == 0 || framing.StopBits.Length == 0)
            {
                Fail(path, "needs framing with start and stop bits: the characters of a leader are found by their framing");
            }

            int shift = BitPatterns.SelfSimilarShift(framing, character);
            if (shift != 0)
            {
                Fail(path + ".character", $"0x{character:x2} framed back to back reads the same {shift} bit(s) later, so a leader of it cannot show where characters start; choose a character whose frame does not repeat within itself");
            }

            if (layout.IsStream)
            {
                Fail(path, "needs blocks (a layout with a header or a checksum): a leader of characters announces the sync of a block");
            }

            if (layout.Header is not [{ Role: FieldRole.Sync } sync, ..])
            {
                Fail(path, "needs the layout to begin with a sync field (role sync): the block begins at the first sync character after the leader");
                return null;
            }

            for (int c = 0; c < sync.Expected.Count; c++)
            {
                if (sync.Expected[c][0] == character)
                {
                    Fail("layout.header[0].expect", $"must not begin with the leader's character 0x{character:x2}: the leader ends at the first character that is not its own, which is where the sync begins");
                }
            }

            return new CharacterLeadIn(character, minimum);
        }

        /// <summary>The biphase lead-in: <c>biphase.leadIn</c> (a pattern and a length), or the first language's zeros (<c>leadInMinimumBits</c>).</summary>
        private (string Pattern, int MinimumBits) BiphaseLeadIn(BiphaseDocument d)
        {
            if (d.LeadIn is not { } leadIn)
            {
                int zeros = Required(d.LeadInMinimumBits, "biphase.leadInMinimumBits");
                if (zeros < 8 || zeros > 100_000)
                {
                    Fail("biphase.leadInMinimumBits", $"must be between 8 and 100 000, not {zeros}");
                }

                return (BitPatterns.Zeros, zeros);
            }

            if (d.LeadInMinimumBits is not null)
            {
                Fail("biphase.leadInMinimumBits", "must not be given with biphase.leadIn, which gives the lead-in's length as minimumBits");
            }

            string bits = Required(leadIn.Bits, "biphase.leadIn.bits");
            string pattern = bits switch
            {
                "0" => BitPatterns.Zeros,
                "1" => BitPatterns.Ones,
                "01" or "10" => BitPatterns.Alternating,
                _ => throw Error("biphase.leadIn.bits", $"must be 0, 1 or 01 (alternating bits), not '{bits}': a biphase lead-in is found as a run of equal intervals, which only a constant or alternating pattern makes"),
            };
            int minimum = Required(leadIn.MinimumBits, "biphase.leadIn.minimumBits");
            if (minimum < 8 || minimum > 100_000)
            {
                Fail("biphase.leadIn.minimumBits", $"must be between 8 and 100 000, not {minimum}");
            }

            return (pattern, minimum);
        }

        /// <summary>The sync word after a biphase lead-in must be found where it ends and nowhere earlier.</summary>
        private void BiphaseSync(string pattern, string sync)
        {
            if (sync.Length is 0 or > 64 || sync.Any(ch => ch is not ('0' or '1')))
            {
                Fail("biphase.syncBits", "must be 1 to 64 characters of 0 and 1");
            }

            int first = BitPatterns.FirstMatch(pattern, sync);
            if (first < sync.Length)
            {
                string leadIn = pattern == BitPatterns.Alternating ? "alternating bits" : pattern == BitPatterns.Ones ? "ones" : "zeros";
                Fail("biphase.syncBits", $"'{sync}' is found {sync.Length - first} bit(s) early where the lead-in of {leadIn} runs into it: the sync word must break the lead-in's pattern so that it is found only where it ends");
            }
        }

        /// <summary>A character value as a JSON number or text ("0x16" or "22") that fits in the data bits.</summary>
        private int CharacterValue(JsonElement? element, string path, int dataBits)
        {
            int largest = (1 << dataBits) - 1;
            if (element is not { } e || e.ValueKind == JsonValueKind.Null)
            {
                Fail(path, "is required");
                return 0;
            }

            long value = -1;
            if (e.ValueKind == JsonValueKind.Number)
            {
                if (!e.TryGetInt64(out value))
                {
                    value = -1;
                }
            }
            else if (e.ValueKind == JsonValueKind.String)
            {
                string text = e.GetString()!;
                bool ok = text.StartsWith("0x", StringComparison.OrdinalIgnoreCase)
                    ? long.TryParse(text.AsSpan(2), NumberStyles.AllowHexSpecifier, CultureInfo.InvariantCulture, out value)
                    : long.TryParse(text, NumberStyles.None, CultureInfo.InvariantCulture, out value);
                if (!ok || text.Length is 0 or > 10)
                {
                    value = -1;
                }
            }

            if (value < 0 || value > largest)
            {
                Fail(path, $"must be a character from 0 to 0x{largest:x2} (the framing's {dataBits} data bits), in hex as \"0x16\" or in decimal, not {e.GetRawText()}");
            }

            return (int)value;
        }
    }
}
