using System.Globalization;
using System.Text.Json;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Text;

namespace TapeVault.Cli.Commands;

/// <summary>The table and the JSON document of a decode.</summary>
public static class DecodeReport
{
    private static readonly JsonSerializerOptions BextJson = new(JsonSerializerDefaults.Web);

    public static void WriteTable(TextWriter output, DecodeResult result)
    {
        ArgumentNullException.ThrowIfNull(output);
        ArgumentNullException.ThrowIfNull(result);
        var c = result.Capture;
        output.WriteLine($"Capture  {c.Sha256[..16]}…  {c.SampleRate} Hz, {c.Channels} ch, {c.DurationSeconds:0.0} s");
        if (c.Truncated)
        {
            output.WriteLine("         cut off: the file ends before the audio its header declares; what is there was decoded");
        }

        if (c.Container != "wav")
        {
            output.WriteLine($"         {c.Container.ToUpperInvariant()} file");
        }

        if (c.FixityFinding is { } finding)
        {
            output.WriteLine($"         fixity: {finding}");
        }

        var suggestion = c.Metadata.Suggestion();
        if (!suggestion.IsEmpty)
        {
            // What the file's own metadata (Broadcast WAV bext, iXML, FLAC comments) says; the curator decides.
            output.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"File says deck '{suggestion.Deck}', operator '{suggestion.Operator}', captured {suggestion.CapturedOn?.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture) ?? "(no date)"}"));
            if (suggestion.Notes.Length > 0)
            {
                output.WriteLine($"         notes: {suggestion.Notes}");
            }
        }

        if (c.Metadata.Bext is { CodingHistory.Length: > 0 } bext)
        {
            foreach (string line in bext.CodingHistory.Split('\n'))
            {
                output.WriteLine($"         coding history: {line.Trim()}");
            }
        }

        output.WriteLine($"Profile  {result.Profile.Id} ({result.Profile.Name}); bank of {result.Settings.Count} settings");
        output.WriteLine();
        output.WriteLine($"{"pos",4}  {"block",-16} {"status",-9} {"confidence",10}  {"bytes",5}  {"margin",6}  {"speed",8}  {"won by",-12} {"agree",5}");
        // The readings are read back from the decode's spool: once for the best of each position, once for the rest.
        var bests = result.Best.ToList();
        var bestAt = new Dictionary<int, int>(bests.Count);
        for (int b = 0; b < bests.Count; b++)
        {
            bestAt[bests[b].Position] = b;
        }

        var readers = new int[bests.Count];
        var agreeing = new int[bests.Count];
        foreach (var candidate in result.Candidates)
        {
            if (!bestAt.TryGetValue(candidate.Position, out int b))
            {
                continue;
            }

            readers[b]++;
            if (candidate.Status == bests[b].Status && candidate.Payload.AsSpan().SequenceEqual(bests[b].Payload.AsSpan()))
            {
                agreeing[b]++;
            }
        }

        for (int b = 0; b < bests.Count; b++)
        {
            var best = bests[b];
            output.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{best.Position,4}  {Truncate(best.Identity.Key, 16),-16} {Status(best.Status),-9} {best.Confidence,10:0.0000}  {best.Payload.Length,5}  {best.MinimumMargin,6:0.00}  {Vocabulary.SpeedPercent(best.Speed),8}  {best.SettingName,-12} {agreeing[b],2}/{readers[b],-2}"));
        }

        int clean = bests.Count(b => b.Status == BlockStatus.Clean);
        int failed = bests.Count(b => b.Status == BlockStatus.Failed);
        int unchecked_ = bests.Count(b => b.Status == BlockStatus.Unchecked);
        output.WriteLine();
        output.WriteLine($"{bests.Count} positions: {clean} clean, {failed} failed, {unchecked_} unchecked.");
        output.WriteLine(Vocabulary.ConfidenceSentence);
        output.WriteLine("margin: how far the least certain decision was from a wrong one (0 to 1). agree: readings of the position with");
        output.WriteLine("the same status and bytes, of all.");
    }

    public static string Status(BlockStatus status) => Vocabulary.Of(status).Name;

    public static void WriteJson(Stream stream, DecodeResult result)
    {
        ArgumentNullException.ThrowIfNull(result);
        using var json = new Utf8JsonWriter(stream, new JsonWriterOptions { Indented = true });
        json.WriteStartObject();
        json.WriteStartObject("capture");
        json.WriteString("sha256", result.Capture.Sha256);
        json.WriteNumber("sampleRate", result.Capture.SampleRate);
        json.WriteNumber("channels", result.Capture.Channels);
        json.WriteNumber("durationSeconds", result.Capture.DurationSeconds);
        json.WriteBoolean("truncated", result.Capture.Truncated);
        json.WriteString("container", result.Capture.Container);
        if (result.Capture.FixityFinding is { } finding)
        {
            json.WriteString("fixityFinding", finding);
        }

        var metadata = result.Capture.Metadata;
        if (!metadata.IsEmpty)
        {
            var suggestion = metadata.Suggestion();
            json.WriteStartObject("fileSays");
            json.WriteString("deck", suggestion.Deck);
            json.WriteString("operator", suggestion.Operator);
            if (suggestion.CapturedOn is { } date)
            {
                json.WriteString("capturedOn", date.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture));
            }

            json.WriteString("notes", suggestion.Notes);
            if (metadata.Bext is { } bext)
            {
                json.WritePropertyName("bext");
                JsonSerializer.Serialize(json, bext, BextJson);
            }

            if (metadata.Ixml is { } ixml)
            {
                json.WriteString("ixml", ixml);
            }

            if (metadata.Comments.Count > 0)
            {
                json.WriteStartArray("comments");
                foreach (string comment in metadata.Comments)
                {
                    json.WriteStringValue(comment);
                }

                json.WriteEndArray();
            }

            json.WriteEndObject();
        }

        json.WriteEndObject();
        json.WriteString("profile", result.Profile.Id);
        json.WriteString("codeVersion", result.CodeVersion);
        json.WriteStartArray("settings");
        foreach (var s in result.Settings)
        {
            json.WriteStringValue(s.Describe());
        }

        json.WriteEndArray();
        WriteBlocks(json, "blocks", result.Candidates);
        WriteBlocks(json, "best", result.Best);
        json.WriteEndObject();
    }

    private static void WriteBlocks(Utf8JsonWriter json, string name, IReadOnlyList<BlockCandidate> blocks)
    {
        json.WriteStartArray(name);
        foreach (var b in blocks)
        {
            json.WriteStartObject();
            json.WriteNumber("position", b.Position);
            json.WriteString("setting", b.SettingName);
            json.WriteString("status", Status(b.Status));
            json.WriteNumber("confidence", Math.Round(b.Confidence, 6));
            json.WriteString("payloadHex", b.PayloadHex);
            json.WriteString("block", b.Identity.Key);
            json.WriteNumber("startSeconds", Math.Round(b.StartSeconds, 6));
            json.WriteNumber("endSeconds", Math.Round(b.EndSeconds, 6));
            json.WriteNumber("minimumMargin", Math.Round(b.MinimumMargin, 4));
            json.WriteNumber("meanMargin", Math.Round(b.MeanMargin, 4));
            json.WriteNumber("ambiguousDecisions", b.AmbiguousDecisions);
            json.WriteNumber("decisions", b.Decisions);
            json.WriteNumber("framingErrors", b.FramingErrors);
            json.WriteNumber("levelDbfs", Math.Round(b.LevelDbfs, 2));
            json.WriteNumber("snrDb", Math.Round(b.SnrDb, 2));
            json.WriteNumber("speed", Math.Round(b.Speed, 5));
            json.WriteBoolean("truncated", b.Truncated);
            json.WriteStartArray("doubts");
            foreach (var doubt in Enum.GetValues<BlockDoubts>())
            {
                if (doubt != BlockDoubts.None && b.Doubts.HasFlag(doubt))
                {
                    json.WriteStringValue(JsonNamingPolicy.KebabCaseLower.ConvertName(doubt.ToString()));
                }
            }

            json.WriteEndArray();
            json.WriteEndObject();
        }

        json.WriteEndArray();
    }

    private static string Truncate(string text, int width) => text.Length <= width ? text : text[..(width - 1)] + "…";
}
