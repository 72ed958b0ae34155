using System.Globalization;
using System.Text.Json.Nodes;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Drafting;

/// <summary>
/// One format family's part of a draft: how well the survey's structure fits the family, and, for the family
/// chosen, its encoding, framing and layout with a finding for every field. A new family is a new implementation
/// registered in <see cref="ProfileDrafter.Families"/>.
/// </summary>
public interface IFamilyDrafter
{
    /// <summary>The family's name in the profile language (pulse-width, fsk, biphase).</summary>
    string Family { get; }

    /// <summary>How well the intervals' structure fits the family, 0..1, with the evidence in words.</summary>
    FamilyScore Score(StretchSurvey survey);

    /// <summary>The family's sections of the profile, or null when the stretch holds nothing this family can read.</summary>
    FamilyProposal? Draft(StretchSurvey survey, CancellationToken cancellation);
}

/// <summary>What a family drafter proposes: the profile's JSON sections and a finding for each field it set.</summary>
public sealed class FamilyProposal
{
    public JsonObject Sections { get; } = [];

    public List<DraftFinding> Findings { get; } = [];

    public List<string> Notes { get; } = [];

    /// <summary>The layout the proposal was written from (set by the common layout section), for weighing its proof.</summary>
    public LayoutFinding? Layout { get; set; }

    /// <summary>
    /// Whether a check value proves the reading beyond chance: a check of 16 bits or more, its bit order told, holding
    /// on three different blocks. A one-byte check tried at several offsets, byte orders and block ends holds by chance
    /// now and then, the more so on the repetitive bytes another family's signal reads as.
    /// </summary>
    public bool StronglyProven => Layout is { HasChecksum: true, ChecksumBytes: >= 2, BlocksHolding: >= 3 } l
        && l.Blocks.Select(Convert.ToHexString).Distinct().Count() >= 3
        && Findings.Any(f => f.Path == "layout.checksum" && !f.Guessed);

    /// <summary>
    /// Whether the reading's own framing proves it beyond chance: serial characters whose start, stop and parity bits
    /// hold on all but 2 % of 50 characters or more (random bits fit one start and one stop bit a quarter of the time,
    /// so fifty framed characters in a row are no accident). Set by the FSK drafter; a stream has no check value to
    /// prove it otherwise.
    /// </summary>
    public bool FramingHolds { get; set; }

    /// <summary>
    /// Whether the reading's framing holds far above chance: start, stop or parity bits right on
    /// <see cref="CommonSections.FramedAboveChance"/> of the bytes or more. A byte of random bits fits one decided stop
    /// or parity bit half the time, so a reading that frames this well has found the signal's characters, even where
    /// damage breaks too many of them for <see cref="FramingHolds"/> and for every block's check value; a reading whose
    /// framing holds nothing (plain bytes, all guessed) has found nothing of its own. Set where the framing is written.
    /// </summary>
    public bool FramingAboveChance { get; set; }

    public void Measured(string path, string value, double confidence, string evidence) =>
        Findings.Add(new DraftFinding(path, value, confidence < DraftFinding.MeasuredThreshold, confidence, evidence));

    public void Guessed(string path, string value, double confidence, string evidence) =>
        Findings.Add(new DraftFinding(path, value, true, confidence, evidence));
}

/// <summary>The framing and layout sections every family writes the same way, from what the searches found.</summary>
internal static class CommonSections
{
    /// <summary>
    /// The most a drafted lead-in minimum asks for: a quarter of the shortest lead-in seen, but no more than 128 pulses
    /// or bits, so that a lead-in shortened by a dropout still counts (a data run that long before a sync is rare).
    /// </summary>
    public const int MostLeadIn = 128;

    /// <summary>
    /// The least share of bytes whose start, stop and parity bits hold for a framing to stand above chance: a share a
    /// framing of one decided bit reaches by chance (a half) with a probability near 1e-7 over 50 bytes (binomial tail: 43 or more of 50 at a half).
    /// </summary>
    public const double FramedAboveChance = 0.85;

    public static string Us(double seconds) => (seconds * 1e6).ToString("0.#", CultureInfo.InvariantCulture);

    public static string F(double value, string format = "0.###") => value.ToString(format, CultureInfo.InvariantCulture);

    public static void Framing(FamilyProposal proposal, ByteFraming framing, bool checkHolds, double framingShare, bool orderMeasured, string orderEvidence)
    {
        proposal.Sections["framing"] = new JsonObject
        {
            ["dataBits"] = framing.DataBits,
            ["bitOrder"] = framing.BitOrder == BitOrder.LsbFirst ? "lsb-first" : "msb-first",
            ["startBits"] = framing.StartBits,
            ["stopBits"] = framing.StopBits,
            ["parity"] = framing.Parity.ToString().ToLowerInvariant(),
        };
        string proof = checkHolds ? "the blocks' check value holds with this framing" : null!;
        bool constrained = framing.BitsPerByte > framing.DataBits;
        proposal.FramingAboveChance = constrained && framingShare >= FramedAboveChance;
        string share = $"{F(100 * framingShare, "0.0")} % of bytes have their start, stop and parity bits right";
        if (checkHolds)
        {
            proposal.Measured("framing.startBits", $"'{framing.StartBits}'", 0.95, proof);
            proposal.Measured("framing.stopBits", $"'{framing.StopBits}'", 0.95, proof);
            proposal.Measured("framing.parity", framing.Parity.ToString().ToLowerInvariant(), 0.95, proof);
            proposal.Measured("framing.dataBits", F(framing.DataBits), 0.9, proof);
        }
        else if (constrained)
        {
            proposal.Measured("framing.startBits", $"'{framing.StartBits}'", framingShare >= 0.98 ? 0.85 : 0.7, share);
            proposal.Measured("framing.stopBits", $"'{framing.StopBits}'", framingShare >= 0.98 ? 0.85 : 0.7, share);
            proposal.Measured("framing.parity", framing.Parity.ToString().ToLowerInvariant(), framing.Parity == Parity.None ? 0.6 : 0.85, share);
            proposal.Guessed("framing.dataBits", F(framing.DataBits), 0.6, "eight data bits are the usual choice; no check value confirms it");
        }
        else
        {
            proposal.Guessed("framing.startBits", "''", 0.5, "no start, stop or parity bits were found that hold; no check value confirms plain bytes");
            proposal.Guessed("framing.stopBits", "''", 0.5, "as for the start bits");
            proposal.Guessed("framing.parity", "none", 0.5, "no parity bit holds in nine-bit frames");
            proposal.Guessed("framing.dataBits", F(framing.DataBits), 0.5, "eight data bits are the usual choice; no check value confirms it");
        }

        if (orderMeasured)
        {
            proposal.Measured("framing.bitOrder", framing.BitOrder == BitOrder.LsbFirst ? "lsb-first" : "msb-first", 0.9, orderEvidence);
        }
        else
        {
            proposal.Guessed("framing.bitOrder", framing.BitOrder == BitOrder.LsbFirst ? "lsb-first" : "msb-first", 0.5, orderEvidence);
        }
    }

    public static void Layout(FamilyProposal proposal, LayoutFinding layout)
    {
        proposal.Layout = layout;
        if (!layout.HasChecksum)
        {
            proposal.Sections["layout"] = new JsonObject();
            proposal.Guessed("layout", "{} (a stream)", 0.3,
                $"no check value of the catalogue (sums, XOR, {Checksums.ChecksumCatalog.Models.Count} CRC models) holds on the {layout.BlocksTried} blocks read, in either byte order, from any of the first {LayoutSearch.MaximumCoverageStart + 1} bytes on; drafted as an unchecked stream");
            return;
        }

        var header = new JsonArray();
        int at = 0;

        // Bytes before the check's coverage that every block holds alike (or that a search proved the sync, see
        // LayoutFinding.Sync) are a sync field (sync characters the check leaves out); a field's name goes into the
        // coverage when it starts inside it. Bytes no sync may expect (one value repeated: the end of a leader of
        // characters read into the block) stay a plain field outside the check, as read.
        var covered = new JsonArray();
        byte[]? sync = layout.Sync ?? AlikeBeforeCoverage(layout);
        if (sync is not null && ProfileLoader.SyncProblem(sync) is not null)
        {
            proposal.Notes.Add($"The {sync.Length} byte(s) before the check's coverage read {Convert.ToHexString(sync)} in every block, which no sync may expect; drafted as a field outside the check.");
            sync = null;
        }

        if (sync is not null && !layout.Fields.Any(f => f.Offset < layout.CoverageStart))
        {
            header.Add(new JsonObject
            {
                ["name"] = "sync",
                ["bytes"] = layout.CoverageStart,
                ["role"] = "sync",
                ["expect"] = new JsonArray(string.Join(' ', sync.Select(b => b.ToString("X2", CultureInfo.InvariantCulture)))),
            });
            at = layout.CoverageStart;
        }

        void Add(JsonObject node, int offset)
        {
            header.Add(node);
            if (offset >= layout.CoverageStart)
            {
                covered.Add(node["name"]!.GetValue<string>());
            }
        }

        foreach (var field in layout.Fields.OrderBy(f => f.Offset))
        {
            if (field.Offset > at)
            {
                Add(Other(at, field.Offset - at), at);
            }

            var node = new JsonObject { ["name"] = field.Role switch { "payload-length" => "length", "block-number" => "block", "file-name" => "name", _ => $"field-{at}" }, ["bytes"] = field.Bytes, ["role"] = field.Role };
            if (field.Bytes > 1 && field.Role != "file-name")
            {
                node["endian"] = field.BigEndian ? "big" : "little";
            }

            if (field.ZeroMeans is { } zeroMeans)
            {
                node["zeroMeans"] = zeroMeans;
            }

            Add(node, field.Offset);
            at = field.Offset + field.Bytes;
        }

        if (layout.HeaderBytes > at)
        {
            Add(Other(at, layout.HeaderBytes - at), at);
        }

        covered.Add("payload");

        var section = new JsonObject { ["header"] = header };
        var lengthField = layout.Fields.FirstOrDefault(f => f.Role == "payload-length");
        if (lengthField is null)
        {
            section["payloadBytes"] = Math.Max(1, layout.FixedPayloadBytes ?? 1);
        }
        else
        {
            section["maximumPayloadBytes"] = lengthField.ZeroMeans ?? (lengthField.Bytes == 1 ? 255 : 65535);
        }

        section["checksum"] = new JsonObject
        {
            ["algorithm"] = layout.Checksum,
            ["covers"] = layout.CoverageStart == 0 ? "header-and-payload" : covered.Count == 1 ? "payload" : covered,
            ["endian"] = layout.ChecksumBigEndian ? "big" : "little",
        };
        section["copies"] = layout.Copies;
        proposal.Sections["layout"] = section;

        string held = $"holds on {layout.BlocksHolding} of {layout.BlocksTried} blocks read";
        proposal.Measured("layout.checksum", $"{layout.Checksum}, {(layout.ChecksumBigEndian ? "big" : "little")}-endian, over {(layout.CoverageStart == 0 ? "header and payload" : "the payload")}", 0.97, held);
        if (lengthField is not null)
        {
            proposal.Measured("layout.header", $"{layout.HeaderBytes} bytes", layout.HeaderExplained ? 0.85 : 0.5,
                string.Join("; ", layout.Fields.Select(f => $"bytes {f.Offset}–{f.Offset + f.Bytes - 1}: {f.Role}, {f.Evidence}"))
                + (layout.HeaderExplained ? string.Empty : "; the other header bytes' meaning is not known (written as role other)"));
        }
        else
        {
            proposal.Guessed("layout.header", $"{layout.HeaderBytes} bytes", 0.4, $"every block read is {layout.FixedPayloadBytes + layout.HeaderBytes + layout.ChecksumBytes} bytes long, so no length field can be told from the rest of a header; drafted as fixed-length blocks");
            proposal.Guessed("layout.payloadBytes", F(layout.FixedPayloadBytes ?? 1), 0.5, "the length of the blocks read, less the check value and any header");
        }

        if (layout.Copies > 1 || layout.CopiesShare >= 0.6)
        {
            proposal.Measured("layout.copies", F(layout.Copies), layout.CopiesShare >= 0.6 ? 0.9 : 0.6, $"{F(100 * layout.CopiesShare, "0")} % of the blocks read come in runs of {layout.Copies} alike");
        }
        else
        {
            proposal.Guessed("layout.copies", F(layout.Copies), 0.5, "too few blocks alike to tell how often each is written");
        }
    }

    public static string OrderEvidence(SyncReading reading) =>
        !reading.Layout.HasChecksum ? "no check value tells the bit order"
        : reading.OrderAmbiguous ? "a check value holds in both bit orders (a reflected CRC over bit-reversed bytes is another CRC that holds), and neither reading has more header fields or more text"
        : "the check value holds with this bit order";

    /// <summary>
    /// Bytes alike in every block and outside the check were taken into the sync, but a capture cannot tell sync
    /// bytes from a header field that never changed in it (the high byte of a block number, say): the sync and the
    /// header are both guesses then.
    /// </summary>
    public static void AbsorbedSync(FamilyProposal proposal, SyncReading reading, string syncPath)
    {
        if (reading.AbsorbedBytes == 0)
        {
            return;
        }

        string why = $"the last {reading.AbsorbedBytes} byte(s) of it are alike in every block and outside the check: sync bytes or a header field that never changed in this capture, which the capture cannot tell";
        foreach (string path in new[] { syncPath, "layout.header" })
        {
            int at = proposal.Findings.FindIndex(f => f.Path == path);
            if (at >= 0)
            {
                var f = proposal.Findings[at];
                proposal.Findings[at] = f with { Guessed = true, Confidence = Math.Min(f.Confidence, 0.6), Evidence = f.Evidence + "; but " + why };
            }
            else if (path == "layout.header")
            {
                proposal.Guessed(path, "as drafted", 0.6, why);
            }
        }
    }

    /// <summary>Where the check holds in both bit orders, the order and the checksum stand or fall together: both are guesses.</summary>
    public static void AmbiguousOrder(FamilyProposal proposal, SyncReading reading)
    {
        if (!reading.Layout.HasChecksum || !reading.OrderAmbiguous)
        {
            return;
        }

        int at = proposal.Findings.FindIndex(f => f.Path == "layout.checksum");
        if (at >= 0)
        {
            var f = proposal.Findings[at];
            proposal.Findings[at] = f with { Guessed = true, Confidence = 0.5, Evidence = f.Evidence + "; but the bit order is not told, and the checksum goes with it" };
        }
    }

    /// <summary>The bytes before the check's coverage where every block (two or more) holds them alike; else null.</summary>
    public static byte[]? AlikeBeforeCoverage(LayoutFinding layout) =>
        layout.CoverageStart > 0 && layout.Blocks.Count >= 2 && layout.Blocks.All(b => b.Length > layout.CoverageStart && b.AsSpan(0, layout.CoverageStart).SequenceEqual(layout.Blocks[0].AsSpan(0, layout.CoverageStart)))
            ? layout.Blocks[0][..layout.CoverageStart]
            : null;

    private static JsonObject Other(int offset, int bytes) => new() { ["name"] = $"field-{offset}", ["bytes"] = Math.Min(64, bytes), ["role"] = "other" };

    /// <summary>The share of bytes that are printable text (and line ends), for telling bit order from content.</summary>
    public static double PrintableShare(IEnumerable<byte[]> blocks)
    {
        long total = 0;
        long printable = 0;
        foreach (var block in blocks)
        {
            foreach (byte b in block)
            {
                total++;
                printable += b is (>= 0x20 and < 0x7f) or 0x0a or 0x0d ? 1 : 0;
            }
        }

        return total == 0 ? 0 : (double)printable / total;
    }

    public static byte Reverse(byte value, int bits)
    {
        int result = 0;
        for (int i = 0; i < bits; i++)
        {
            result |= ((value >> i) & 1) << (bits - 1 - i);
        }

        return (byte)result;
    }
}
