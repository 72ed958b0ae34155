using System.Globalization;
using System.Text;
using System.Text.Json.Nodes;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Drafting;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Synthesis;

/// <summary>
/// Format profiles drawn at random over wide ranges, one family at a time, for measuring drafts on formats nobody
/// tuned them on: pulse lengths, tones, baud and cells, pulse-class ratios, lead-ins, syncs, framings, bit orders,
/// header layouts, checksums of the catalogue with either byte order and coverage, and copies. Each is a valid
/// profile (it loads) that the synthesiser can write.
/// </summary>
public static class RandomFormats
{
    public static IReadOnlyList<string> Families { get; } = ["pulse-width", "fsk", "biphase"];

    private static readonly string[] Checks = ["sum8", "xor8", "crc16-ccitt-false", "crc16-xmodem", "CRC-16/ARC", "CRC-16/KERMIT", "CRC-16/MODBUS", "crc32", "CRC-8/SMBUS"];

    /// <summary>A random profile of <paramref name="family"/> as JSON.</summary>
    public static string Draw(string family, Random rng)
    {
        ArgumentNullException.ThrowIfNull(rng);
        var root = new JsonObject
        {
            ["id"] = "random-" + family,
            ["name"] = "Random " + family,
            ["family"] = family,
        };
        bool synchronous = family != "fsk";
        switch (family)
        {
            case "pulse-width":
                double shortUs = Between(rng, 200, 600);
                double longUs = shortUs * Between(rng, 1.5, 2.4);
                bool third = rng.NextDouble() < 0.7;
                double markUs = longUs * Between(rng, 1.5, 2.2);
                var classes = new JsonArray(
                    new JsonObject { ["name"] = "s", ["microseconds"] = Math.Round(shortUs, 1) },
                    new JsonObject { ["name"] = "l", ["microseconds"] = Math.Round(longUs, 1) });
                if (third)
                {
                    classes.Add(new JsonObject { ["name"] = "m", ["microseconds"] = Math.Round(markUs, 1) });
                }

                bool shortIsZero = rng.NextDouble() < 0.7;
                root["pulseWidth"] = new JsonObject
                {
                    ["classes"] = classes,
                    ["zero"] = new JsonArray(shortIsZero ? "s" : "l"),
                    ["one"] = new JsonArray(shortIsZero ? "l" : "s"),
                    ["leadIn"] = new JsonObject { ["class"] = "s", ["minimumCount"] = rng.Next(32, 200) },
                    ["sync"] = third ? (rng.NextDouble() < 0.5 ? new JsonArray("m") : new JsonArray("m", "l")) : new JsonArray("l", "l", "s"),
                };
                break;
            case "fsk":
                double baud = Math.Round(Between(rng, 250, 1200));
                int spaceCycles = new[] { 1, 2, 4 }[rng.Next(3)];
                int markCycles = rng.NextDouble() < 0.7 || spaceCycles > 2 ? 2 * spaceCycles : spaceCycles + 1;
                while (markCycles * baud > 5000)
                {
                    baud = Math.Round(baud * 0.7);
                }

                bool markHigh = rng.NextDouble() < 0.7;
                double low = spaceCycles * baud;
                double high = markCycles * baud;
                root["fsk"] = new JsonObject { ["markHz"] = markHigh ? high : low, ["spaceHz"] = markHigh ? low : high, ["baud"] = baud, ["leadInMinimumSeconds"] = 0.1 };
                break;
            default:
                int bits = rng.Next(8, 17);
                var sync = new StringBuilder("1");
                for (int i = 1; i < bits; i++)
                {
                    sync.Append(rng.NextDouble() < 0.5 ? '1' : '0');
                }

                root["biphase"] = new JsonObject
                {
                    ["cellMicroseconds"] = Math.Round(Between(rng, 300, 1500), 1),
                    ["oneIs"] = rng.NextDouble() < 0.5 ? "falling" : "rising",
                    ["leadInMinimumBits"] = rng.Next(16, 96),
                    ["syncBits"] = sync.ToString(),
                };
                break;
        }

        // Framing: serial-line frames for FSK; plain bytes, bytes with parity, or start and stop bits otherwise.
        var parity = new[] { "none", "odd", "even" }[rng.Next(3)];
        var (start, stop) = synchronous
            ? rng.Next(4) switch { 0 => ("0", "1"), 1 => ("1", "0"), _ => (string.Empty, string.Empty) }
            : ("0", rng.NextDouble() < 0.5 ? "1" : "11");
        int dataBits = !synchronous && parity != "none" && rng.NextDouble() < 0.3 ? 7 : 8;
        root["framing"] = new JsonObject
        {
            ["dataBits"] = dataBits,
            ["bitOrder"] = synchronous ? (rng.NextDouble() < 0.5 ? "lsb-first" : "msb-first") : "lsb-first",
            ["startBits"] = start,
            ["stopBits"] = stop,
            ["parity"] = parity,
        };

        // Layout: a stream (FSK only, as the Kansas City Standard writes), or a header with a check value.
        if (family == "fsk" && rng.NextDouble() < 0.4)
        {
            root["layout"] = new JsonObject();
        }
        else
        {
            var header = rng.Next(3) switch
            {
                0 => new JsonArray(
                    new JsonObject { ["name"] = "file", ["bytes"] = 8, ["role"] = "file-name" },
                    new JsonObject { ["name"] = "block", ["bytes"] = 2, ["role"] = "block-number", ["endian"] = "little" },
                    new JsonObject { ["name"] = "length", ["bytes"] = 1, ["role"] = "payload-length" }),
                1 => new JsonArray(
                    new JsonObject { ["name"] = "file", ["bytes"] = 1, ["role"] = "file-id" },
                    new JsonObject { ["name"] = "block", ["bytes"] = 1, ["role"] = "block-number" },
                    new JsonObject { ["name"] = "length", ["bytes"] = 1, ["role"] = "payload-length" }),
                _ => new JsonArray(
                    new JsonObject { ["name"] = "block", ["bytes"] = 2, ["role"] = "block-number", ["endian"] = "big" },
                    new JsonObject { ["name"] = "length", ["bytes"] = 1, ["role"] = "payload-length" }),
            };
            bool shortHeader = header.Count < 3 || header[0]!["bytes"]!.GetValue<int>() == 1;
            root["layout"] = new JsonObject
            {
                ["header"] = header,
                ["maximumPayloadBytes"] = rng.Next(64, 256),
                ["checksum"] = new JsonObject
                {
                    ["algorithm"] = Checks[rng.Next(Checks.Length)],
                    ["covers"] = shortHeader && rng.NextDouble() < 0.3 ? "payload" : "header-and-payload",
                    ["endian"] = rng.NextDouble() < 0.5 ? "big" : "little",
                },
                ["copies"] = rng.NextDouble() < 0.3 ? 2 : 1,
            };
        }

        root["recording"] = new JsonObject
        {
            ["leadInSeconds"] = Math.Round(Between(rng, 0.6, 2), 2),
            ["blockGapSeconds"] = Math.Round(family == "fsk" ? Between(rng, 0.3, 0.8) : Between(rng, 0.1, 0.4), 2),
            ["trailerSeconds"] = 0.3,
        };
        return root.ToJsonString();
    }

    /// <summary>Files of text or random bytes, <paramref name="count"/> of them, for a capture of about a minute.</summary>
    public static List<TapeFile> Files(Random rng, int count, int bytesEach)
    {
        ArgumentNullException.ThrowIfNull(rng);
        var files = new List<TapeFile>();
        for (int f = 0; f < count; f++)
        {
            var content = new byte[bytesEach + rng.Next(bytesEach / 2)];
            if (rng.NextDouble() < 0.5)
            {
                rng.NextBytes(content);
            }
            else
            {
                const string words = "THE CLUB MEETS ON THURSDAYS AT SEVEN. BRING TAPES, LEADS AND A SPARE DECK. 10 PRINT \"HELLO\" 20 GOTO 10\n";
                for (int i = 0; i < content.Length; i++)
                {
                    content[i] = (byte)words[(i + (f * 7)) % words.Length];
                }
            }

            files.Add(new TapeFile($"FILE{f.ToString(CultureInfo.InvariantCulture)}", content));
        }

        return files;
    }

    /// <summary>
    /// How many of the blocks written (<paramref name="written"/>: header, payload and check, under
    /// <paramref name="truth"/>) a decode read back exactly (header and payload) in a reading that is not failed.
    /// </summary>
    public static int Recovered(DecodeResult result, FormatProfile truth, IReadOnlyList<byte[]> written)
    {
        ArgumentNullException.ThrowIfNull(result);
        ArgumentNullException.ThrowIfNull(truth);
        ArgumentNullException.ThrowIfNull(written);
        int check = BlockLayoutCodec.For(truth.Layout).CheckBytes;
        var read = result.Candidates.Where(c => c.Status != BlockStatus.Failed).Select(c => Convert.ToHexStringLower([.. c.Header, .. c.Payload])).ToHashSet(StringComparer.Ordinal);
        return written.Count(w => read.Contains(Convert.ToHexStringLower(w.AsSpan(0, w.Length - check))));
    }

    private static double Between(Random rng, double low, double high) => low + ((high - low) * rng.NextDouble());
}
