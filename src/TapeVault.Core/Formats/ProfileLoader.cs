using System.Text.Json;
using TapeVault.Core.Checksums;
using TapeVault.Core.Text;

namespace TapeVault.Core.Formats;

/// <summary>Reads a profile from JSON and validates it; a profile that cannot work is never built.</summary>
public static partial class ProfileLoader
{
    /// <summary>Profile files larger than this are refused before parsing.</summary>
    public const int MaximumFileBytes = 256 * 1024;

    /// <summary>No block of any format we know needs more; larger values are typing mistakes.</summary>
    public const int MaximumPayloadLimit = 1 << 20;

    public static FormatProfile Load(string path)
    {
        var info = new FileInfo(path);
        if (!info.Exists)
        {
            throw new ProfileException(Messages.OneLine($"The profile file does not exist: {path}."));
        }

        if (info.Length > MaximumFileBytes)
        {
            throw new ProfileException(Messages.OneLine($"The profile file {path} is {info.Length} bytes; profiles are at most {MaximumFileBytes} bytes."));
        }

        return Parse(File.ReadAllText(path), Path.GetFileName(path));
    }

    public static FormatProfile Parse(string json, string source)
    {
        ArgumentNullException.ThrowIfNull(json);
        if (json.Length > MaximumFileBytes)
        {
            throw new ProfileException(Messages.OneLine($"Profile {source}: the text is longer than {MaximumFileBytes} characters."));
        }

        ProfileDocument? document;
        try
        {
            document = JsonSerializer.Deserialize(json, ProfileJsonContext.Default.ProfileDocument);
        }
        catch (JsonException e)
        {
            string where = e.Path is { Length: > 1 } p ? $" at {p.TrimStart('$', '.')}" : string.Empty;
            string line = e.LineNumber is { } l ? $" (line {l + 1})" : string.Empty;
            string reason = e.Message.Contains("could not be mapped", StringComparison.Ordinal)
                ? "an unknown field"
                : e.Message.Contains("Duplicate", StringComparison.OrdinalIgnoreCase)
                    ? "a field given twice"
                    : "invalid JSON or a value of the wrong type";
            throw new ProfileException(Messages.OneLine($"Profile {source}: {reason}{where}{line}."), e);
        }

        if (document is null)
        {
            throw new ProfileException(Messages.OneLine($"Profile {source}: the file holds no profile object."));
        }

        return new Validator(source).Build(document);
    }

    private sealed partial class Validator(string source)
    {
        private string _label = source;

        public FormatProfile Build(ProfileDocument d)
        {
            string id = Required(d.Id, "id");
            if (id.Length > 64 || !IsIdentifier(id))
            {
                Fail("id", "must be 1 to 64 lower-case letters, digits and hyphens");
            }

            _label = $"'{id}'";
            string name = Required(d.Name, "name");
            string family = Required(d.Family, "family");
            var framing = Framing(d.Framing);
            var layout = Layout(d.Layout);
            var recording = Recording(d.Recording);

            switch (family)
            {
                case "pulse-width":
                    return WithKinds(new FormatProfile(id, name, d.Description ?? string.Empty, FormatFamily.PulseWidth,
                        PulseWidth(d.PulseWidth, layout), null, null, framing, layout, recording));
                case "fsk":
                    return WithKinds(new FormatProfile(id, name, d.Description ?? string.Empty, FormatFamily.Fsk,
                        null, Fsk(d.Fsk, framing, layout), null, framing, layout, recording));
                case "biphase":
                    return WithKinds(new FormatProfile(id, name, d.Description ?? string.Empty, FormatFamily.Biphase,
                        null, null, Biphase(d.Biphase), framing, layout, recording));
                default:
                    Fail("family", $"must be pulse-width, fsk or biphase, not '{family}'");
                    return null!;
            }
        }

        private PulseWidthEncoding PulseWidth(PulseWidthDocument? d, BlockLayout layout)
        {
            if (d is null)
            {
                Fail("pulseWidth", "is required for the pulse-width family");
            }

            if (d!.Classes is not { Count: > 0 } classDocs)
            {
                Fail("pulseWidth.classes", "must list at least two pulse classes");
                return null!;
            }

            var classes = new List<PulseClass>();
            for (int i = 0; i < classDocs.Count; i++)
            {
                string path = $"pulseWidth.classes[{i}]";
                var c = classDocs[i] ?? throw Error(path, "must be an object");
                string className = Required(c.Name, path + ".name");
                double us = Required(c.Microseconds, path + ".microseconds");
                if (!(us > 0) || us > 1_000_000)
                {
                    Fail(path + ".microseconds", $"must be above 0 and at most 1 000 000, not {us}");
                }

                foreach (var other in classes)
                {
                    if (other.Name == className)
                    {
                        Fail(path + ".name", $"repeats the class name '{className}'");
                    }
                }

                classes.Add(new PulseClass(className, us * 1e-6));
            }

            if (classes.Count < 2)
            {
                Fail("pulseWidth.classes", "must list at least two pulse classes");
            }

            classes.Sort((a, b) => a.Seconds.CompareTo(b.Seconds));
            for (int i = 1; i < classes.Count; i++)
            {
                // Boundaries sit at the geometric mean; closer than 25 % apart, ordinary wow and jitter would mix them up.
                if (classes[i].Seconds < classes[i - 1].Seconds * 1.25)
                {
                    Fail("pulseWidth.classes", $"'{classes[i - 1].Name}' and '{classes[i].Name}' overlap: neighbouring classes must differ by at least 25 %");
                }
            }

            var zero = ClassSequence(d.Zero, "pulseWidth.zero", classes);
            var one = ClassSequence(d.One, "pulseWidth.one", classes);
            if (zero.SequenceEqual(one) || IsPrefix(zero, one) || IsPrefix(one, zero))
            {
                Fail("pulseWidth.one", "must differ from pulseWidth.zero, and neither may begin the other");
            }

            var leadIn = d.LeadIn ?? throw Error("pulseWidth.leadIn", "is required");
            string leadClass = Required(leadIn.Class, "pulseWidth.leadIn.class");
            if (!classes.Exists(c => c.Name == leadClass))
            {
                Fail("pulseWidth.leadIn.class", $"names an unknown pulse class '{leadClass}'");
            }

            int minimum = Required(leadIn.MinimumCount, "pulseWidth.leadIn.minimumCount");
            if (minimum < 8 || minimum > 100_000)
            {
                Fail("pulseWidth.leadIn.minimumCount", $"must be between 8 and 100 000, not {minimum}");
            }

            // Without a class sequence, a block begins at its sync field's bits or at its first byte marker.
            var sync = d.Sync is null && (layout.Header is [{ Role: FieldRole.Sync }, ..] || d.Markers?.BeforeByte is { Count: > 0 })
                ? []
                : ClassSequence(d.Sync, "pulseWidth.sync", classes);

            // The decoder leaves the lead-in on the first pulse of another class and takes it as the sync's first;
            // a sync that began with the lead-in class would be swallowed by the lead-in and never be seen.
            if (sync.Count > 0 && sync[0] == leadClass)
            {
                Fail("pulseWidth.sync[0]", $"must not be the lead-in class '{leadClass}': the lead-in ends on the first pulse of another class, which is where the sync begins");
            }

            return Symbols(d, classes, new PulseWidthEncoding(classes, zero, one, leadClass, minimum, sync), layout);
        }

        private static bool IsPrefix(IReadOnlyList<string> a, IReadOnlyList<string> b)
        {
            if (a.Count > b.Count)
            {
                return false;
            }

            for (int i = 0; i < a.Count; i++)
            {
                if (a[i] != b[i])
                {
                    return false;
                }
            }

            return true;
        }

        private List<string> ClassSequence(List<string?>? items, string path, List<PulseClass> classes)
        {
            if (items is not { Count: > 0 })
            {
                Fail(path, "must list one or more pulse class names");
                return null!;
            }

            if (items.Count > 64)
            {
                Fail(path, "may list at most 64 classes");
            }

            var result = new List<string>();
            for (int i = 0; i < items.Count; i++)
            {
                string item = items[i] ?? throw Error($"{path}[{i}]", "must be a class name");
                if (!classes.Exists(c => c.Name == item))
                {
                    Fail($"{path}[{i}]", $"names an unknown pulse class '{item}'");
                }

                result.Add(item);
            }

            return result;
        }

        private FskEncoding Fsk(FskDocument? d, ByteFraming framing, BlockLayout layout)
        {
            if (d is null)
            {
                Fail("fsk", "is required for the fsk family");
            }

            double mark = Required(d!.MarkHz, "fsk.markHz");
            double space = Required(d.SpaceHz, "fsk.spaceHz");
            double baud = Required(d.Baud, "fsk.baud");
            Positive(mark, "fsk.markHz", 20_000);
            Positive(space, "fsk.spaceHz", 20_000);
            Positive(baud, "fsk.baud", 20_000);
            if (Math.Abs(mark - space) < baud)
            {
                Fail("fsk.spaceHz", "must be at least one baud away from fsk.markHz, or the tones cannot be told apart within a bit");
            }

            if (Math.Min(mark, space) < baud)
            {
                Fail("fsk.baud", "must not exceed the lower tone's frequency: a bit needs at least one whole cycle");
            }

            double leadIn = d.LeadInMinimumSeconds ?? 0.1;
            if (!(leadIn >= 0) || leadIn > 60)
            {
                Fail("fsk.leadInMinimumSeconds", $"must be between 0 and 60, not {leadIn}");
            }

            return new FskEncoding(mark, space, baud, leadIn) { LeadInCharacters = FskLeadIn(d, framing, layout) };
        }

        private BiphaseEncoding Biphase(BiphaseDocument? d)
        {
            if (d is null)
            {
                Fail("biphase", "is required for the biphase family");
            }

            double cell = Required(d!.CellMicroseconds, "biphase.cellMicroseconds");
            Positive(cell, "biphase.cellMicroseconds", 1_000_000);
            string oneIs = Required(d.OneIs, "biphase.oneIs");
            if (oneIs is not ("falling" or "rising"))
            {
                Fail("biphase.oneIs", $"must be 'falling' or 'rising' (the mid-cell transition that means 1), not '{oneIs}'");
            }

            var (pattern, leadIn) = BiphaseLeadIn(d);
            string sync = Required(d.SyncBits, "biphase.syncBits");
            if (pattern == BitPatterns.Zeros
                && (sync.Length is 0 or > 64 || sync.Any(ch => ch is not ('0' or '1')) || !sync.Contains('1', StringComparison.Ordinal)))
            {
                Fail("biphase.syncBits", "must be 1 to 64 characters of 0 and 1 with at least one 1 (the lead-in is zeros)");
            }

            BiphaseSync(pattern, sync);
            return new BiphaseEncoding(cell * 1e-6, oneIs == "falling", leadIn, sync) { LeadInBits = pattern };
        }

        private ByteFraming Framing(FramingDocument? d)
        {
            if (d is null)
            {
                Fail("framing", "is required");
            }

            int bits = Required(d!.DataBits, "framing.dataBits");
            if (bits is < 5 or > 8)
            {
                Fail("framing.dataBits", $"must be between 5 and 8, not {bits}");
            }

            var order = (d.BitOrder ?? "lsb-first") switch
            {
                "lsb-first" => BitOrder.LsbFirst,
                "msb-first" => BitOrder.MsbFirst,
                var other => throw Error("framing.bitOrder", $"must be lsb-first or msb-first, not '{other}'"),
            };
            string start = BitString(d.StartBits ?? string.Empty, "framing.startBits");
            string stop = BitString(d.StopBits ?? string.Empty, "framing.stopBits");
            var parity = (d.Parity ?? "none") switch
            {
                "none" => Parity.None,
                "even" => Parity.Even,
                "odd" => Parity.Odd,
                var other => throw Error("framing.parity", $"must be none, even or odd, not '{other}'"),
            };
            return new ByteFraming(bits, order, start, stop, parity);
        }

        private string BitString(string bits, string path)
        {
            if (bits.Length > 4 || bits.Any(ch => ch is not ('0' or '1')))
            {
                Fail(path, $"must be up to four characters of 0 and 1, not '{bits}'");
            }

            return bits;
        }

        private BlockLayout Layout(LayoutDocument? d, string at = "layout", bool lengthByRule = false)
        {
            if (d is null)
            {
                Fail("layout", "is required (an empty object {} means a stream with no blocks)");
            }

            if (d!.Kinds is not null && at == "layout")
            {
                return Kinds(d);
            }

            bool inKind = at != "layout";

            var header = new List<HeaderField>();
            var fields = d!.Header ?? [];
            if (fields.Count > 32)
            {
                Fail(at + ".header", "may have at most 32 fields");
            }

            for (int i = 0; i < fields.Count; i++)
            {
                string path = $"{at}.header[{i}]";
                var f = fields[i] ?? throw Error(path, "must be an object");
                string fieldName = Required(f.Name, path + ".name");
                int bytes = Required(f.Bytes, path + ".bytes");
                var role = (f.Role ?? "other") switch
                {
                    "other" => FieldRole.Other,
                    "file-name" => FieldRole.FileName,
                    "file-id" => FieldRole.FileId,
                    "block-number" => FieldRole.BlockNumber,
                    "payload-length" => FieldRole.PayloadLength,
                    "sync" => FieldRole.Sync,
                    var other => throw Error(path + ".role", $"must be other, file-name, file-id, block-number, payload-length or sync, not '{other}'"),
                };
                int maxBytes = role switch
                {
                    FieldRole.FileName or FieldRole.Other => 64,
                    FieldRole.Sync => MaximumSyncBytes,
                    _ => 4,
                };
                if (bytes < 1 || bytes > maxBytes)
                {
                    Fail(path + ".bytes", $"must be between 1 and {maxBytes} for role {f.Role ?? "other"}, not {bytes}");
                }

                if (role != FieldRole.Other && header.Exists(h => h.Role == role))
                {
                    Fail(path + ".role", $"repeats the role '{f.Role}'");
                }

                bool big = (f.Endian ?? "little") switch
                {
                    "little" => false,
                    "big" => true,
                    var other => throw Error(path + ".endian", $"must be little or big, not '{other}'"),
                };
                header.Add(new HeaderField(fieldName, bytes, role, big) { Expected = SyncExpected(f, role, bytes, i, path), ZeroMeans = ZeroMeans(f, role, bytes, path) });
            }

            int? payload = d.PayloadBytes;
            bool hasLengthField = header.Exists(h => h.Role == FieldRole.PayloadLength);
            // A block kind may be all header (a file's header block): its payload is empty.
            if (payload is { } p && (p < (inKind ? 0 : 1) || p > MaximumPayloadLimit))
            {
                Fail(at + ".payloadBytes", $"must be between {(inKind ? 0 : 1)} and {MaximumPayloadLimit}, not {p}");
            }

            if (payload is not null && hasLengthField)
            {
                Fail(at + ".payloadBytes", "must not be given when a header field has the role payload-length");
            }

            int maximum = d.MaximumPayloadBytes ?? (hasLengthField ? 65535 : payload ?? 65535);
            if (maximum < (payload == 0 ? 0 : 1) || maximum > MaximumPayloadLimit)
            {
                Fail(at + ".maximumPayloadBytes", $"must be between 1 and {MaximumPayloadLimit}, not {maximum}");
            }

            ChecksumSpec? checksum = d.Checksum is { } c ? Checksum(c, header, at + ".checksum") : null;

            if (header.Count > 0 && payload is null && !hasLengthField && !lengthByRule)
            {
                Fail(at + ".payloadBytes", "is required when the header has no payload-length field (or, in a block kind, payloadLength)");
            }

            if (header.Count == 0 && checksum is not null && payload is null && !lengthByRule)
            {
                Fail(at + ".payloadBytes", "is required when blocks have a checksum but no header");
            }

            int copies = d.Copies ?? 1;
            if (copies is < 1 or > 8)
            {
                Fail("layout.copies", $"must be between 1 and 8, not {copies}");
            }

            SyncCopies(header, copies);
            return new BlockLayout(header, payload, maximum, checksum, copies);
        }

        private ChecksumSpec Checksum(ChecksumDocument c, List<HeaderField> header, string path)
        {
            int given = (c.Algorithm is null ? 0 : 1) + (c.Crc is null ? 0 : 1) + (c.Sum is null ? 0 : 1) + (c.Xor is null ? 0 : 1);
            if (given > 1)
            {
                Fail(path, "must give one of algorithm, crc, sum or xor, not several");
            }

            IBlockChecksum checksum;
            if (c.Crc is { } crc)
            {
                checksum = ChecksumCatalog.Create(Crc(crc, path + ".crc"));
            }
            else if (c.Sum is { } sum)
            {
                checksum = ChecksumCatalog.Create(Sum(sum, path + ".sum"));
            }
            else if (c.Xor is not null)
            {
                checksum = ChecksumCatalog.Create(new XorParameters());
            }
            else
            {
                string algorithm = string.IsNullOrWhiteSpace(c.Algorithm)
                    ? throw Error(path + ".algorithm", "is required (or give the checksum's parameters as crc, sum or xor)")
                    : c.Algorithm;
                if (!ChecksumCatalog.TryGet(algorithm, out var named))
                {
                    Fail(path + ".algorithm", $"names an unknown checksum '{algorithm}' (known: {string.Join(", ", ChecksumCatalog.Names)}; or give crc, sum or xor parameters)");
                }

                checksum = named;
            }

            var (covers, fields) = Coverage(c.Covers, header, path + ".covers");
            bool big = (c.Endian ?? "big") switch
            {
                "little" => false,
                "big" => true,
                var other => throw Error(path + ".endian", $"must be little or big, not '{other}'"),
            };

            // A name the profile wrote is kept as written (an alias stays an alias); parameters are kept by the name
            // the catalogue gives them, which the catalogue resolves again.
            string name = c.Algorithm ?? checksum.Name;
            return new ChecksumSpec(name, covers, big) { CoveredFields = fields };
        }

        private CrcParameters Crc(CrcDocument d, string path)
        {
            int width = Required(d.Width, path + ".width");
            if (width is < CrcParameters.MinimumWidth or > CrcParameters.MaximumWidth)
            {
                Fail(path + ".width", $"must be between {CrcParameters.MinimumWidth} and {CrcParameters.MaximumWidth} bits, not {width}");
            }

            uint mask = CrcParameters.Mask(width);
            uint poly = Number(d.Poly, path + ".poly", mask, width) ?? throw Error(path + ".poly", "is required");
            if ((poly & 1u) == 0)
            {
                Fail(path + ".poly", $"must be odd (a generator has its x^0 term; the top term x^{width} is left out), not 0x{poly:x}");
            }

            uint init = Number(d.Init, path + ".init", mask, width) ?? 0;
            uint xorout = Number(d.Xorout, path + ".xorout", mask, width) ?? 0;
            bool refin = d.Refin ?? false;
            bool refout = d.Refout ?? refin;
            return new CrcParameters(width, poly, init, refin, refout, xorout);
        }

        private uint? Number(JsonElement? element, string path, uint mask, int width)
        {
            if (element is not { } e || e.ValueKind == JsonValueKind.Null)
            {
                return null;
            }

            ulong value;
            if (e.ValueKind == JsonValueKind.Number)
            {
                if (!e.TryGetUInt64(out value))
                {
                    Fail(path, $"must be a whole number from 0, not {e.GetRawText()}");
                }
            }
            else if (e.ValueKind == JsonValueKind.String)
            {
                string text = e.GetString()!;
                bool ok = text.StartsWith("0x", StringComparison.OrdinalIgnoreCase)
                    ? ulong.TryParse(text.AsSpan(2), System.Globalization.NumberStyles.AllowHexSpecifier, System.Globalization.CultureInfo.InvariantCulture, out value)
                    : ulong.TryParse(text, System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out value);
                if (!ok || text.Length is 0 or > 20)
                {
                    Fail(path, $"must be a number, in hex as \"0x1021\" or in decimal, not '{text}'");
                }
            }
            else
            {
                Fail(path, $"must be a number, in hex as \"0x1021\" or in decimal, not {e.ValueKind.ToString().ToLowerInvariant()}");
                return null;
            }

            if (value > mask)
            {
                Fail(path, $"must fit in the CRC's {width} bits (at most 0x{mask:x}), not 0x{value:x}");
            }

            return (uint)value;
        }

        private SumParameters Sum(SumDocument d, string path)
        {
            int bits = Required(d.Bits, path + ".bits");
            if (bits is not (8 or 16))
            {
                Fail(path + ".bits", $"must be 8 or 16, not {bits}");
            }

            var carry = SumParameters.ParseCarry(d.Carry ?? "none")
                ?? throw Error(path + ".carry", $"must be none or end-around, not '{d.Carry}'");
            var complement = SumParameters.ParseComplement(d.Complement ?? "none")
                ?? throw Error(path + ".complement", $"must be none, ones or twos, not '{d.Complement}'");
            var addend = SumParameters.ParseAddend(d.Addend ?? "byte")
                ?? throw Error(path + ".addend", $"must be byte, word-big or word-little, not '{d.Addend}'");
            if (addend != SumAddend.Byte && bits != 16)
            {
                Fail(path + ".addend", $"'{d.Addend}' adds 16-bit words, which needs bits 16, not {bits}");
            }

            return new SumParameters(bits, carry, complement, addend);
        }

        private (ChecksumCoverage Covers, IReadOnlyList<string> Fields) Coverage(JsonElement? element, List<HeaderField> header, string path)
        {
            if (element is not { } e || e.ValueKind == JsonValueKind.Null)
            {
                return (ChecksumCoverage.HeaderAndPayload, []);
            }

            if (e.ValueKind == JsonValueKind.String)
            {
                return e.GetString() switch
                {
                    "header-and-payload" => (ChecksumCoverage.HeaderAndPayload, []),
                    "payload" => (ChecksumCoverage.Payload, []),
                    var other => throw Error(path, $"must be header-and-payload or payload, or a list of field names, not '{other}'"),
                };
            }

            if (e.ValueKind != JsonValueKind.Array)
            {
                Fail(path, $"must be header-and-payload or payload, or a list of field names, not {e.ValueKind.ToString().ToLowerInvariant()}");
            }

            int count = e.GetArrayLength();
            if (count == 0)
            {
                Fail(path, "must name at least one field (header field names, and payload for the payload)");
            }

            if (header.Exists(h => h.Name == ChecksumSpec.PayloadName))
            {
                Fail(path, $"cannot name fields while a header field is itself called '{ChecksumSpec.PayloadName}' (that name stands for the payload); rename the field");
            }

            var fields = new List<string>(count);
            int lastPosition = -1;
            int index = 0;
            foreach (var item in e.EnumerateArray())
            {
                string itemPath = $"{path}[{index}]";
                if (item.ValueKind != JsonValueKind.String || item.GetString() is not { Length: > 0 } name)
                {
                    Fail(itemPath, "must be a field name");
                    return default;
                }

                int position = name == ChecksumSpec.PayloadName ? header.Count : header.FindIndex(h => h.Name == name);
                if (position < 0)
                {
                    string known = string.Join(", ", header.Select(h => h.Name).Append(ChecksumSpec.PayloadName));
                    Fail(itemPath, $"names no field: '{name}' (the fields are {known})");
                }

                if (position < header.Count && header.FindLastIndex(h => h.Name == name) != position)
                {
                    Fail(itemPath, $"names '{name}', which more than one header field is called");
                }

                if (fields.Contains(name))
                {
                    Fail(itemPath, $"repeats '{name}'");
                }

                if (position < lastPosition)
                {
                    Fail(itemPath, $"names '{name}' after a field that follows it on tape: list the covered fields in tape order");
                }

                lastPosition = position;
                fields.Add(name);
                index++;
            }

            // The two keyword coverages, written out as names, are the keywords: the same check, the same spec.
            if (fields.Count == header.Count + 1)
            {
                return (ChecksumCoverage.HeaderAndPayload, []);
            }

            if (fields is [ChecksumSpec.PayloadName])
            {
                return (ChecksumCoverage.Payload, []);
            }

            return (ChecksumCoverage.Fields, fields.AsReadOnly());
        }

        private RecordingLayout Recording(RecordingDocument? d)
        {
            double leadIn = d?.LeadInSeconds ?? 2.0;
            double gap = d?.BlockGapSeconds ?? 0.5;
            double trailer = d?.TrailerSeconds ?? 0.5;
            Positive(leadIn, "recording.leadInSeconds", 600);
            Positive(gap, "recording.blockGapSeconds", 600);
            Positive(trailer, "recording.trailerSeconds", 600);
            return new RecordingLayout(leadIn, gap, trailer);
        }

        private void Positive(double value, string path, double maximum)
        {
            if (!(value > 0) || value > maximum)
            {
                Fail(path, $"must be above 0 and at most {maximum}, not {value}");
            }
        }

        private T Required<T>(T? value, string path)
            where T : struct =>
            value ?? throw Error(path, "is required");

        private string Required(string? value, string path) =>
            string.IsNullOrWhiteSpace(value) ? throw Error(path, "is required") : value;

        private static bool IsIdentifier(string id) =>
            id.Length > 0 && id.All(ch => ch is (>= 'a' and <= 'z') or (>= '0' and <= '9') or '-');

        private ProfileException Error(string path, string message) => new(Messages.OneLine($"Profile {_label}: {path} {message}."));

        [System.Diagnostics.CodeAnalysis.DoesNotReturn]
        private void Fail(string path, string message) => throw Error(path, message);
    }
}
