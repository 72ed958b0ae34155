using System.Text.Json.Nodes;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Drafting;

/// <summary>Which fields confirming a draft's guesses may take from the reference (see <see cref="GuessConfirmation"/>).</summary>
public enum ConfirmationRule
{
    /// <summary>
    /// Only the fields the draft marked as guesses: a guessed family confirms the family's name, and the draft keeps
    /// its own encoding sections, so a draft whose family was wrong has no section for the right one and reads
    /// nothing. What a curator who only confirms the guesses gets.
    /// </summary>
    GuessedFieldsOnly,

    /// <summary>
    /// The earlier measure, kept only so that figures taken with it can be compared: a guessed family brought the
    /// reference's whole encoding section (tones, classes or cell the draft never marked as guesses), and a guessed
    /// header the reference's payload length and coverage. It overstates a draft whose family was guessed.
    /// </summary>
    Earlier,
}

/// <summary>
/// Confirms a draft's guesses from a reference profile, as a curator who knows the format would: each guessed field
/// takes the reference's value and every field the draft did not mark keeps the draft's value. Used to measure how
/// good a draft's measured fields are (the guesses are then right by construction). Pulse class names are the
/// draft's: a class the reference names is the draft's class nearest to it in length. A guessed payload length is the
/// payload's length however the reference writes it (fixed, or a maximum with a length field); a guessed header keeps
/// the draft's coverage start and its rule for the largest payload, applied to the reference's fields. A guessed
/// family confirms the family's name only (<see cref="ConfirmationRule.GuessedFieldsOnly"/>).
/// </summary>
public static class GuessConfirmation
{
    private static readonly string[] FamilySections = ["pulseWidth", "fsk", "biphase"];

    private static readonly string[] PayloadLength = ["payloadBytes", "maximumPayloadBytes", "payloadLength"];

    public static string Confirm(string draftJson, string referenceJson, IEnumerable<string> guessedPaths, ConfirmationRule rule = ConfirmationRule.GuessedFieldsOnly)
    {
        ArgumentNullException.ThrowIfNull(guessedPaths);
        var draft = JsonNode.Parse(draftJson)!.AsObject();
        var reference = JsonNode.Parse(referenceJson)!.AsObject();
        var paths = guessedPaths.ToList();

        // Measured before the sync is confirmed: how many whole bytes of the reference's header the draft's sync took.
        int absorbed = paths.Contains("pulseWidth.sync") ? AbsorbedFrames(draft, reference)
            : paths.Contains("biphase.syncBits") ? AbsorbedBitFrames(draft, reference)
            : 0;

        // The family first: with the whole-section rule the other guesses are then taken into the reference's section.
        if (paths.Contains("family"))
        {
            draft["family"] = reference["family"]!.DeepClone();
            if (rule == ConfirmationRule.Earlier)
            {
                foreach (string section in FamilySections)
                {
                    draft.Remove(section);
                    if (reference[section] is { } node)
                    {
                        draft[section] = node.DeepClone();
                    }
                }
            }
        }

        // The classes before the fields that name them: each class the draft names elsewhere becomes the reference's
        // class nearest it in length, and the guessed names confirmed after them are the reference's own.
        if (paths.Contains("pulseWidth.classes"))
        {
            ConfirmClasses(draft, reference);
        }

        foreach (string path in paths)
        {
            switch (path)
            {
                case "family" or "pulseWidth.classes":
                    break;
                case "layout.header" when rule == ConfirmationRule.Earlier:
                    foreach (string part in new[] { "header", "payloadBytes", "maximumPayloadBytes" })
                    {
                        Replace(draft, reference, $"layout.{part}");
                    }

                    if (draft["layout"]?["checksum"]?["covers"] is JsonArray && reference["layout"]?["checksum"]?["covers"] is { } covers)
                    {
                        draft["layout"]!["checksum"]!["covers"] = covers.DeepClone();
                    }

                    break;
                case "layout.header":
                    ConfirmHeader(draft, reference, checksumGuessed: paths.Contains("layout.checksum"), syncConfirmed: paths.Contains("pulseWidth.sync") && reference["pulseWidth"]?["sync"] is not null, absorbed);
                    break;
                case "layout.payloadBytes" when rule == ConfirmationRule.GuessedFieldsOnly:
                    foreach (string part in PayloadLength)
                    {
                        Replace(draft, reference, $"layout.{part}");
                    }

                    break;
                case "pulseWidth.zero" or "pulseWidth.one" or "pulseWidth.sync" or "pulseWidth.leadIn.class":
                    Replace(draft, reference, path);
                    Rename(draft, reference, path);
                    break;
                default:
                    Replace(draft, reference, path);
                    break;
            }
        }

        return draft.ToJsonString(ProfileDraft.Indented);
    }

    /// <summary>
    /// The reference's header fields in place of the draft's. What the draft measured around the header stays its
    /// own: the check's coverage starts at the same byte (named now by the reference's fields there), and the largest
    /// payload follows the confirmed length field by the drafter's own rule (<see cref="CommonSections.Layout"/>).
    /// Where the reference's blocks are of several kinds (a header block that gives the next block's length), its
    /// kinds are the confirmed header (see <see cref="ConfirmKinds"/>).
    /// </summary>
    private static void ConfirmHeader(JsonObject draft, JsonObject reference, bool checksumGuessed, bool syncConfirmed, int absorbed)
    {
        if (draft["layout"] is JsonObject drafted && drafted["kinds"] is null && reference["layout"]?["kinds"] is JsonArray kinds)
        {
            ConfirmKinds(drafted, kinds, checksumGuessed, absorbed);
            return;
        }

        if (draft["layout"] is not JsonObject layout || reference["layout"]?["header"] is not JsonArray confirmed)
        {
            Replace(draft, reference, "layout.header");
            return;
        }

        // A check the draft wrote as covering its payload (its header no more than a sync, say) covers from the end
        // of that header on: the same byte, named now by the reference's fields there.
        // A draft whose sync took the header's first bytes counts its header from after them.
        int? coverageStart = (layout["checksum"]?["covers"] is JsonValue covers && covers.GetValue<string>() == "payload"
            ? CoverageStart(layout, bySection: true)
            : CoverageStart(layout)) + absorbed;

        // A sync the draft measured and wrote as the header's first field (a sync of whole bytes) is the sync's, not
        // the header's: where the reference writes its sync elsewhere (as pulse classes, say), it stays. Unless that
        // sync was the guess confirmed too: the draft's sync field is its reading of the same pulses (the lead-in's last
        // bits and the sync's, as bytes), and kept after the reference's class sequence it would be looked for twice.
        var header = (JsonArray)confirmed.DeepClone();
        if (!syncConfirmed && layout["header"] is JsonArray own && own.Count > 0 && own[0]?["role"]?.GetValue<string>() == "sync"
            && !header.Any(f => f?["role"]?.GetValue<string>() == "sync"))
        {
            header.Insert(0, own[0]!.DeepClone());
        }

        confirmed = header;
        FitSyncsToCopies(header, Copies(layout));
        layout["header"] = header;
        if (coverageStart is { } start && layout["checksum"] is JsonObject checksum)
        {
            checksum["covers"] = Covered(confirmed, start);
        }

        var length = confirmed.FirstOrDefault(f => f?["role"]?.GetValue<string>() == "payload-length");
        if (length is not null && layout["payloadBytes"] is not null)
        {
            // A fixed length the draft measured, and a length field now confirmed: the field decides, up to its
            // largest value (as the drafter writes it).
            layout.Remove("payloadBytes");
            layout["maximumPayloadBytes"] = length["zeroMeans"]?.GetValue<int>() ?? (length["bytes"]!.GetValue<int>() == 1 ? 255 : 65535);
        }
    }

    /// <summary>
    /// The reference's block kinds in place of the draft's one layout: a draft that read every block alike (each block
    /// at one length, say) guessed its header and payload length, and the reference answers both with its kinds, each
    /// with its header and its rule for the payload's length. The check the draft measured stays its own in every
    /// kind (its algorithm and byte order, its coverage from the same byte on), and so do its copies; a guessed check
    /// is each kind's as the reference writes it.
    /// </summary>
    private static void ConfirmKinds(JsonObject layout, JsonArray referenceKinds, bool checksumGuessed, int absorbed)
    {
        int? coverageStart = CoverageStart(layout, bySection: true) + absorbed;
        var measured = checksumGuessed ? null : layout["checksum"] as JsonObject;
        var kinds = (JsonArray)referenceKinds.DeepClone();
        foreach (var kind in kinds.OfType<JsonObject>())
        {
            if (kind["header"] is JsonArray header)
            {
                FitSyncsToCopies(header, Copies(layout));
            }
        }

        if (measured is not null)
        {
            foreach (var kind in kinds.OfType<JsonObject>())
            {
                var check = (JsonObject)measured.DeepClone();
                if (coverageStart is { } start && kind["header"] is JsonArray header)
                {
                    check["covers"] = Covered(header, start);
                }

                kind["checksum"] = check;
            }
        }

        // The kinds replace the one layout's header, payload length and check (the language allows them in the kinds only).
        foreach (string part in new[] { "header", "checksum" }.Concat(PayloadLength))
        {
            layout.Remove(part);
        }

        layout["kinds"] = kinds;
    }

    /// <summary>The copies of each block the draft's layout says (one where it says none).</summary>
    private static int Copies(JsonObject layout) => layout["copies"]?.GetValue<int>() ?? 1;

    /// <summary>
    /// A confirmed sync field that expects one value per copy (a countdown that differs between the first and second
    /// copy), fitted to the copies the draft measured, which confirming keeps: a draft that read each block once
    /// expects the first copy's value, one that read fewer copies than the reference writes the first copies' values.
    /// A field with one value for all copies, or one per copy as the draft counts them, is left as it is; one whose
    /// values are fewer than the draft's copies keeps its first value for all, since the language reads one value for
    /// all copies or exactly one per copy and a confirmed draft must load.
    /// </summary>
    private static void FitSyncsToCopies(JsonArray header, int copies)
    {
        foreach (var field in header.OfType<JsonObject>())
        {
            if (field["role"]?.GetValue<string>() != "sync" || field["expect"] is not JsonArray expect || expect.Count <= 1 || expect.Count == copies)
            {
                continue;
            }

            int kept = copies < expect.Count ? Math.Max(1, copies) : 1;
            field["expect"] = new JsonArray([.. expect.Take(kept).Select(v => v!.DeepClone())]);
        }
    }

    /// <summary>
    /// How many whole frames (bytes as written, with their start, parity and stop bits) the draft's pulse sync holds
    /// after the reference's sync: a drafter that finds the blocks begin alike past the sync (the first header byte
    /// never changed in the capture, a block number's high byte say) takes those bytes into the sync and counts its
    /// header from after them, so the check's coverage it measured starts that many bytes later in the reference's
    /// header. Zero unless the draft's sync is the reference's (its classes renamed to the draft's nearest) followed by
    /// whole frames of bit pulses, and where bytes have markers (whose pulses are no bits).
    /// </summary>
    private static int AbsorbedFrames(JsonObject draft, JsonObject reference)
    {
        if (draft["pulseWidth"] is not JsonObject pulses || pulses["sync"] is not JsonArray drafted || reference["pulseWidth"]?["sync"] is not JsonArray confirmed
            || pulses["zero"] is not JsonArray zero || pulses["one"] is not JsonArray one || zero.Count != one.Count || zero.Count == 0
            || pulses["markers"] is not null)
        {
            return 0;
        }

        var draftClasses = Classes(draft);
        var referenceClasses = Classes(reference);
        var bitClasses = zero.Concat(one).Select(n => n!.GetValue<string>()).ToHashSet(StringComparer.Ordinal);
        return WholeFrames(
            [.. drafted.Select(n => n!.GetValue<string>())],
            [.. confirmed.Select(n => NearestClass(draftClasses, referenceClasses, n!.GetValue<string>()))],
            FrameBits(draft) * zero.Count,
            bitClasses.Contains);
    }

    /// <summary>As <see cref="AbsorbedFrames"/> for a sync written as bits (biphase): the reference's sync bits, then whole frames.</summary>
    private static int AbsorbedBitFrames(JsonObject draft, JsonObject reference) =>
        draft["biphase"]?["syncBits"]?.GetValue<string>() is { } own && reference["biphase"]?["syncBits"]?.GetValue<string>() is { } theirs
            ? WholeFrames([.. own.Select(c => c.ToString())], [.. theirs.Select(c => c.ToString())], FrameBits(draft), _ => true)
            : 0;

    /// <summary>The frames after <paramref name="theirs"/> that make up the rest of <paramref name="own"/>, each <paramref name="frame"/> symbols of bits; zero where it is not so.</summary>
    private static int WholeFrames(List<string> own, List<string> theirs, int frame, Func<string, bool> isBit)
    {
        int extra = own.Count - theirs.Count;
        return frame > 0 && theirs.Count > 0 && extra > 0 && extra % frame == 0 && own.Take(theirs.Count).SequenceEqual(theirs, StringComparer.Ordinal) && own.Skip(theirs.Count).All(isBit)
            ? extra / frame
            : 0;
    }

    /// <summary>The bits of one frame as the draft's framing writes a byte (<see cref="ByteFraming.BitsPerByte"/>); zero where the draft does not load.</summary>
    private static int FrameBits(JsonObject draft)
    {
        try
        {
            return ProfileLoader.Parse(draft.ToJsonString(), "draft").Framing.BitsPerByte;
        }
        catch (ProfileException)
        {
            return 0;
        }
    }

    /// <summary>
    /// The byte of the header the draft's check coverage starts at: where the first field it names begins, or, with
    /// <paramref name="bySection"/>, also the start (header-and-payload) or the end (payload) of the draft's header.
    /// Null where the draft has no check or its coverage says no place.
    /// </summary>
    private static int? CoverageStart(JsonObject layout, bool bySection = false)
    {
        var drafted = layout["header"] as JsonArray ?? [];
        var coverage = layout["checksum"]?["covers"];
        if (bySection && coverage is JsonValue section)
        {
            return section.GetValue<string>() == "payload" ? drafted.Sum(f => f!["bytes"]!.GetValue<int>()) : 0;
        }

        if (coverage is not JsonArray covers || layout["header"] is not JsonArray)
        {
            return null;
        }

        var names = covers.Select(c => c!.GetValue<string>()).ToHashSet(StringComparer.Ordinal);
        int offset = 0;
        foreach (var field in drafted)
        {
            if (names.Contains(field!["name"]!.GetValue<string>()))
            {
                return offset;
            }

            offset += field["bytes"]!.GetValue<int>();
        }

        return offset;
    }

    /// <summary>The names of a header's fields from byte <paramref name="start"/> on, and the payload: a check's coverage.</summary>
    private static JsonArray Covered(JsonArray header, int start)
    {
        var named = new JsonArray();
        int offset = 0;
        foreach (var field in header)
        {
            if (offset >= start)
            {
                named.Add(field!["name"]!.GetValue<string>());
            }

            offset += field!["bytes"]!.GetValue<int>();
        }

        named.Add("payload");
        return named;
    }

    private static void Replace(JsonObject draft, JsonObject reference, string path)
    {
        var parts = path.Split('.');
        JsonObject? target = draft;
        JsonNode? source = reference;
        for (int i = 0; i < parts.Length - 1; i++)
        {
            source = source?[parts[i]];
            if (target[parts[i]] is not JsonObject next)
            {
                next = [];
                target[parts[i]] = next;
            }

            target = next;
        }

        string last = parts[^1];
        if (source?[last] is { } value)
        {
            target[last] = value.DeepClone();
        }
        else
        {
            target.Remove(last);
        }
    }

    /// <summary>
    /// The reference's pulse classes in place of the draft's. Every name of a draft class in the pulse section
    /// (bits, lead-in, sync, markers) becomes the name of the reference's class nearest to it in length, so that what
    /// the draft measured with its classes (a lead-in class, say) is kept, read with the confirmed classes.
    /// </summary>
    private static void ConfirmClasses(JsonObject draft, JsonObject reference)
    {
        var draftClasses = Classes(draft);
        var referenceClasses = Classes(reference);
        Replace(draft, reference, "pulseWidth.classes");
        if (draftClasses.Count == 0 || referenceClasses.Count == 0 || draft["pulseWidth"] is not JsonObject pulses)
        {
            return;
        }

        var renamed = draftClasses.ToDictionary(c => c.Key, c => referenceClasses.MinBy(r => Math.Abs(Math.Log(r.Value / c.Value))).Key, StringComparer.Ordinal);
        foreach (var (key, node) in pulses.ToList())
        {
            if (key != "classes")
            {
                pulses[key] = RenameClasses(node, renamed);
            }
        }
    }

    /// <summary>A copy of a node with every string that names a renamed class replaced by its new name.</summary>
    private static JsonNode? RenameClasses(JsonNode? node, Dictionary<string, string> renamed) => node switch
    {
        JsonArray array => new JsonArray([.. array.Select(n => RenameClasses(n, renamed))]),
        JsonObject obj => new JsonObject(obj.Select(p => KeyValuePair.Create(p.Key, RenameClasses(p.Value, renamed)))),
        JsonValue value when value.TryGetValue(out string? name) && renamed.TryGetValue(name, out string? other) => JsonValue.Create(other),
        _ => node?.DeepClone(),
    };

    /// <summary>Class names taken from the reference, renamed to the draft's class nearest in length.</summary>
    private static void Rename(JsonObject draft, JsonObject reference, string path)
    {
        var draftClasses = Classes(draft);
        var referenceClasses = Classes(reference);
        string Nearest(string name) => NearestClass(draftClasses, referenceClasses, name);

        var parts = path.Split('.');
        JsonNode? node = draft;
        foreach (string part in parts[..^1])
        {
            node = node?[part];
        }

        if (node is not JsonObject parent)
        {
            return;
        }

        switch (parent[parts[^1]])
        {
            case JsonArray array:
                for (int i = 0; i < array.Count; i++)
                {
                    array[i] = Nearest(array[i]!.GetValue<string>());
                }

                break;
            case JsonValue value:
                parent[parts[^1]] = Nearest(value.GetValue<string>());
                break;
        }
    }

    /// <summary>The draft's class nearest in length to a class the reference names (the name itself where the reference has no such class).</summary>
    private static string NearestClass(Dictionary<string, double> draftClasses, Dictionary<string, double> referenceClasses, string name) =>
        referenceClasses.TryGetValue(name, out double length) && draftClasses.Count > 0
            ? draftClasses.MinBy(c => Math.Abs(Math.Log(c.Value / length))).Key
            : name;

    private static Dictionary<string, double> Classes(JsonObject profile)
    {
        var result = new Dictionary<string, double>(StringComparer.Ordinal);
        if (profile["pulseWidth"]?["classes"] is JsonArray classes)
        {
            foreach (var c in classes)
            {
                if (c?["name"]?.GetValue<string>() is { } name && c["microseconds"] is { } us)
                {
                    result[name] = us.GetValue<double>();
                }
            }
        }

        return result;
    }
}
