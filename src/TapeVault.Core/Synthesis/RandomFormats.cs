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
    /// <summary>
    /// The families drawn: the first version's three (pulse-width with one class a bit, FSK after mark tone, biphase
    /// after a run of zeros) and the four the language was rebuilt for, each over wide ranges of its parameters.
    /// </summary>
    public static IReadOnlyList<string> Families { get; } = ["pulse-width", "fsk", "biphase", "three-class-pairs", "one-cycle-bits", "fsk-sync", "biphase-alternating"];

    /// <summary>The profile-language family a drawn family is written in.</summary>
    public static string ProfileFamily(string family) => family switch
    {
        "three-class-pairs" or "one-cycle-bits" => "pulse-width",
        "fsk-sync" => "fsk",
        "biphase-alternating" => "biphase",
        _ => family,
    };

    /// <summary>CRC-16 models of the catalogue a drawn block format may check with (the catalogue's names).</summary>
    private static readonly string[] Crc16 = ["CRC-16/ARC", "CRC-16/XMODEM", "CRC-16/CCITT-FALSE", "CRC-16/KERMIT", "CRC-16/ISO-HDLC", "CRC-16/MODBUS", "CRC-16/UMTS", "CRC-16/GSM", "CRC-16/USB", "CRC-16/DNP"];

    private static readonly string[] Checks = ["sum8", "xor8", "crc16-ccitt-false", "crc16-xmodem", "CRC-16/ARC", "CRC-16/KERMIT", "CRC-16/MODBUS", "crc32", "CRC-8/SMBUS"];

    /// <summary>A random profile of <paramref name="family"/> as JSON.</summary>
    public static string Draw(string family, Random rng)
    {
        ArgumentNullException.ThrowIfNull(rng);
        switch (family)
        {
            case "three-class-pairs": return ThreeClassPairs(rng).ToJsonString();
            case "one-cycle-bits": return OneCycleBits(rng).ToJsonString();
            case "fsk-sync": return FskSync(rng).ToJsonString();
            case "biphase-alternating": return BiphaseAlternating(rng).ToJsonString();
        }

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
    /// For each block written (<paramref name="written"/>: header, payload and check, under <paramref name="truth"/>),
    /// whether a decode read it back exactly (header and payload) in a reading that is not failed.
    /// </summary>
    public static bool[] RecoveredBlocks(DecodeResult result, FormatProfile truth, IReadOnlyList<byte[]> written)
    {
        ArgumentNullException.ThrowIfNull(result);
        ArgumentNullException.ThrowIfNull(truth);
        ArgumentNullException.ThrowIfNull(written);
        int check = BlockLayoutCodec.For(truth.Layout).CheckBytes;
        var read = result.Candidates.Where(c => c.Status != BlockStatus.Failed).Select(c => Convert.ToHexStringLower([.. c.Header, .. c.Payload])).ToHashSet(StringComparer.Ordinal);
        return [.. written.Select(w => read.Contains(Convert.ToHexStringLower(w.AsSpan(0, w.Length - check))))];
    }

    /// <summary>
    /// Family 1: three pulse classes (short about 200–400 µs, medium 1.3–1.5 times it, long 1.3–1.45 times the
    /// medium), a bit a pair of pulses, a marker pair before every byte, parity after it, an end marker; a countdown
    /// sync of nine bytes that differs between the two copies; a header block whose start and end address give the
    /// data block's length; an XOR over the data only.
    /// </summary>
    private static JsonObject ThreeClassPairs(Random rng)
    {
        double shortUs = Math.Round(Between(rng, 200, 400), 1);
        double mediumUs = Math.Round(shortUs * Between(rng, 1.3, 1.5), 1);
        double longUs = Math.Round(mediumUs * Between(rng, 1.3, 1.45), 1);
        int top = rng.Next(0x20, 0xF0);
        int second = (top + rng.Next(0x10, 0x80)) % 0xF0;
        string Countdown(int from) => string.Join(' ', Enumerable.Range(0, 9).Select(i => ((from + 8 - i) & 0xFF).ToString("X2", CultureInfo.InvariantCulture)));
        var expect = new JsonArray(Countdown(top), Countdown(second));
        bool pairsSwapped = rng.NextDouble() < 0.3;
        string endian = rng.NextDouble() < 0.5 ? "little" : "big";
        bool inclusive = rng.NextDouble() < 0.6;
        JsonObject Sync() => new() { ["name"] = "countdown", ["bytes"] = 9, ["role"] = "sync", ["expect"] = expect.DeepClone() };
        return new JsonObject
        {
            ["id"] = "random-three-class-pairs",
            ["name"] = "Random three-class pairs",
            ["family"] = "pulse-width",
            ["pulseWidth"] = new JsonObject
            {
                ["classes"] = new JsonArray(
                    new JsonObject { ["name"] = "short", ["microseconds"] = shortUs },
                    new JsonObject { ["name"] = "medium", ["microseconds"] = mediumUs },
                    new JsonObject { ["name"] = "long", ["microseconds"] = longUs }),
                ["zero"] = pairsSwapped ? new JsonArray("medium", "short") : new JsonArray("short", "medium"),
                ["one"] = pairsSwapped ? new JsonArray("short", "medium") : new JsonArray("medium", "short"),
                ["leadIn"] = new JsonObject { ["class"] = "short", ["minimumCount"] = rng.Next(128, 512) },
                ["markers"] = new JsonObject { ["beforeByte"] = new JsonArray("long", "medium"), ["endOfBlock"] = new JsonArray("long", "short") },
            },
            ["framing"] = new JsonObject { ["dataBits"] = 8, ["bitOrder"] = rng.NextDouble() < 0.5 ? "lsb-first" : "msb-first", ["startBits"] = "", ["stopBits"] = "", ["parity"] = rng.NextDouble() < 0.7 ? "odd" : "even" },
            ["layout"] = new JsonObject
            {
                ["copies"] = 2,
                ["kinds"] = new JsonArray(
                    new JsonObject
                    {
                        ["name"] = "header",
                        ["header"] = new JsonArray(
                            Sync(),
                            new JsonObject { ["name"] = "type", ["bytes"] = 1 },
                            new JsonObject { ["name"] = "name", ["bytes"] = rng.Next(2) == 0 ? 16 : 10, ["role"] = "file-name" },
                            new JsonObject { ["name"] = "start", ["bytes"] = 2, ["endian"] = endian },
                            new JsonObject { ["name"] = "end", ["bytes"] = 2, ["endian"] = endian }),
                        ["payloadBytes"] = 0,
                        ["checksum"] = new JsonObject { ["xor"] = new JsonObject(), ["covers"] = new JsonArray("type", "name", "start", "end") },
                    },
                    new JsonObject
                    {
                        ["name"] = "data",
                        ["header"] = new JsonArray(Sync()),
                        ["payloadLength"] = new JsonObject { ["kind"] = "header", ["start"] = "start", ["end"] = "end", ["endIs"] = inclusive ? "inclusive" : "exclusive" },
                        ["maximumPayloadBytes"] = 65536,
                        ["checksum"] = new JsonObject { ["xor"] = new JsonObject(), ["covers"] = new JsonArray("payload") },
                    }),
            },
            ["recording"] = Recording(rng, 0.1, 0.3),
        };
    }

    /// <summary>
    /// Family 2: one cycle a bit (a 0 one cycle at 1.5–2.5 kHz, a 1 one cycle at 0.45–0.55 of that), a lead-in of
    /// zeros, a sync byte (often beginning with 0 bits), bytes most significant bit first with nothing around them,
    /// blocks of up to 256 bytes with a length where 0 means 256 and a 16-bit additive sum, consecutive blocks after
    /// only a short run of zeros and the sync.
    /// </summary>
    private static JsonObject OneCycleBits(Random rng)
    {
        double zeroHz = Between(rng, 1500, 2500);
        double oneHz = zeroHz * Between(rng, 0.45, 0.55);
        int syncByte = rng.Next(0x01, 0x80);
        var header = new JsonArray(new JsonObject { ["name"] = "sync", ["bytes"] = 1, ["role"] = "sync", ["expect"] = new JsonArray(syncByte.ToString("X2", CultureInfo.InvariantCulture)) });
        if (rng.NextDouble() < 0.7)
        {
            header.Add(new JsonObject { ["name"] = "file", ["bytes"] = rng.Next(2) == 0 ? 8 : 6, ["role"] = "file-name" });
        }

        header.Add(new JsonObject { ["name"] = "block", ["bytes"] = 1, ["role"] = "block-number" });
        header.Add(new JsonObject { ["name"] = "length", ["bytes"] = 1, ["role"] = "payload-length", ["zeroMeans"] = 256 });
        var covers = new JsonArray();
        foreach (var field in header.Skip(1))
        {
            covers.Add(field!["name"]!.GetValue<string>());
        }

        covers.Add("payload");
        return new JsonObject
        {
            ["id"] = "random-one-cycle-bits",
            ["name"] = "Random one cycle a bit",
            ["family"] = "pulse-width",
            ["pulseWidth"] = new JsonObject
            {
                ["classes"] = new JsonArray(
                    new JsonObject { ["name"] = "short", ["microseconds"] = Math.Round(1e6 / zeroHz, 1) },
                    new JsonObject { ["name"] = "long", ["microseconds"] = Math.Round(1e6 / oneHz, 1) }),
                ["zero"] = new JsonArray("short"),
                ["one"] = new JsonArray("long"),
                ["leadIn"] = new JsonObject { ["class"] = "short", ["minimumCount"] = rng.Next(128, 512) },
                ["blockGap"] = new JsonObject { ["count"] = rng.Next(16, 64) },
            },
            ["framing"] = new JsonObject { ["dataBits"] = 8, ["bitOrder"] = "msb-first", ["startBits"] = "", ["stopBits"] = "", ["parity"] = "none" },
            ["layout"] = new JsonObject
            {
                ["header"] = header,
                ["maximumPayloadBytes"] = 256,
                ["checksum"] = new JsonObject { ["sum"] = new JsonObject { ["bits"] = 16 }, ["covers"] = covers, ["endian"] = rng.NextDouble() < 0.5 ? "big" : "little" },
                ["copies"] = 1,
            },
            ["recording"] = new JsonObject { ["leadInSeconds"] = Math.Round(Between(rng, 1, 2.5), 2), ["blockGapSeconds"] = 0.016, ["trailerSeconds"] = 0.2 },
        };
    }

    /// <summary>
    /// Family 3: FSK at 600–1200 baud (tones of one and two cycles a bit), eight data bits with parity and one or two
    /// stop bits, a leader of a repeated character, three sync characters outside the CRC, a header and a CRC-16 of the
    /// catalogue over header and payload.
    /// </summary>
    private static JsonObject FskSync(Random rng)
    {
        double baud = new[] { 600.0, 800, 1000, 1200 }[rng.Next(4)] * Between(rng, 0.97, 1.03);
        baud = Math.Round(baud);
        var leaders = new[] { 0x55, 0xAA, 0x16, 0x33, 0xE6 };
        int leader = leaders[rng.Next(leaders.Length)];
        int sync1;
        do
        {
            sync1 = rng.Next(1, 255);
        }
        while (sync1 == leader);

        string syncText = string.Join(' ', new[] { sync1, rng.Next(1, 255), rng.Next(1, 255) }.Select(b => b.ToString("X2", CultureInfo.InvariantCulture)));
        return new JsonObject
        {
            ["id"] = "random-fsk-sync",
            ["name"] = "Random FSK with sync characters",
            ["family"] = "fsk",
            ["fsk"] = new JsonObject
            {
                ["markHz"] = 2 * baud,
                ["spaceHz"] = baud,
                ["baud"] = baud,
                ["leadIn"] = new JsonObject { ["character"] = "0x" + leader.ToString("X2", CultureInfo.InvariantCulture), ["minimumCount"] = rng.Next(8, 32) },
            },
            ["framing"] = new JsonObject { ["dataBits"] = 8, ["bitOrder"] = "lsb-first", ["startBits"] = "0", ["stopBits"] = rng.NextDouble() < 0.5 ? "1" : "11", ["parity"] = rng.NextDouble() < 0.6 ? "even" : "odd" },
            ["layout"] = new JsonObject
            {
                ["header"] = new JsonArray(
                    new JsonObject { ["name"] = "sync", ["bytes"] = 3, ["role"] = "sync", ["expect"] = new JsonArray(syncText) },
                    new JsonObject { ["name"] = "name", ["bytes"] = 8, ["role"] = "file-name" },
                    new JsonObject { ["name"] = "block", ["bytes"] = 1, ["role"] = "block-number" },
                    new JsonObject { ["name"] = "length", ["bytes"] = 2, ["role"] = "payload-length", ["endian"] = rng.NextDouble() < 0.5 ? "little" : "big" }),
                ["maximumPayloadBytes"] = rng.Next(128, 257),
                ["checksum"] = new JsonObject { ["algorithm"] = Crc16[rng.Next(Crc16.Length)], ["covers"] = new JsonArray("name", "block", "length", "payload"), ["endian"] = rng.NextDouble() < 0.5 ? "big" : "little" },
                ["copies"] = 1,
            },
            ["recording"] = Recording(rng, 0.1, 0.4),
        };
    }

    /// <summary>
    /// Family 4: biphase at 700–2500 cells a second after a preamble of alternating bits, a sync word of 12–24 bits,
    /// blocks with a file number, a block number, a length and a CRC-16 of the catalogue.
    /// </summary>
    private static JsonObject BiphaseAlternating(Random rng)
    {
        int bits = rng.Next(12, 25);
        var sync = new StringBuilder("11");
        for (int i = 2; i < bits; i++)
        {
            sync.Append(rng.NextDouble() < 0.5 ? '1' : '0');
        }

        return new JsonObject
        {
            ["id"] = "random-biphase-alternating",
            ["name"] = "Random biphase after an alternating preamble",
            ["family"] = "biphase",
            ["biphase"] = new JsonObject
            {
                ["cellMicroseconds"] = Math.Round(1e6 / Between(rng, 700, 2500), 1),
                ["oneIs"] = rng.NextDouble() < 0.5 ? "falling" : "rising",
                ["leadIn"] = new JsonObject { ["bits"] = rng.NextDouble() < 0.5 ? "01" : "10", ["minimumBits"] = rng.Next(32, 128) },
                ["syncBits"] = sync.ToString(),
            },
            ["framing"] = new JsonObject { ["dataBits"] = 8, ["bitOrder"] = rng.NextDouble() < 0.5 ? "lsb-first" : "msb-first", ["startBits"] = "", ["stopBits"] = "", ["parity"] = "none" },
            ["layout"] = new JsonObject
            {
                ["header"] = new JsonArray(
                    new JsonObject { ["name"] = "file", ["bytes"] = 1, ["role"] = "file-id" },
                    new JsonObject { ["name"] = "block", ["bytes"] = 2, ["role"] = "block-number", ["endian"] = "big" },
                    new JsonObject { ["name"] = "length", ["bytes"] = 2, ["role"] = "payload-length", ["endian"] = rng.NextDouble() < 0.5 ? "little" : "big" }),
                ["maximumPayloadBytes"] = rng.Next(128, 513),
                ["checksum"] = new JsonObject { ["algorithm"] = Crc16[rng.Next(Crc16.Length)], ["covers"] = "header-and-payload", ["endian"] = rng.NextDouble() < 0.5 ? "big" : "little" },
                ["copies"] = 1,
            },
            ["recording"] = Recording(rng, 0.1, 0.3),
        };
    }

    private static JsonObject Recording(Random rng, double gapLow, double gapHigh) => new()
    {
        ["leadInSeconds"] = Math.Round(Between(rng, 0.6, 2), 2),
        ["blockGapSeconds"] = Math.Round(Between(rng, gapLow, gapHigh), 2),
        ["trailerSeconds"] = 0.3,
    };

    private static double Between(Random rng, double low, double high) => low + ((high - low) * rng.NextDouble());
}
