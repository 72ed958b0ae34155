using System.Text.Json.Nodes;

namespace TapeVault.Core.Drafting;

/// <summary>
/// Confirms a draft's guesses from a reference profile, as a curator who knows the format would: each guessed field
/// takes the reference's value and every measured field keeps the draft's. Used to measure how good a draft's
/// measured fields are (the guesses are then right by construction). Pulse class names are the draft's: a class the
/// reference names is the draft's class nearest to it in length. A guessed header brings the payload length with it
/// (the two decide one another) and a coverage that names header fields, and a guessed family brings the family's own
/// section.
/// </summary>
public static class GuessConfirmation
{
    private static readonly string[] FamilySections = ["pulseWidth", "fsk", "biphase"];

    public static string Confirm(string draftJson, string referenceJson, IEnumerable<string> guessedPaths)
    {
        ArgumentNullException.ThrowIfNull(guessedPaths);
        var draft = JsonNode.Parse(draftJson)!.AsObject();
        var reference = JsonNode.Parse(referenceJson)!.AsObject();
        foreach (string path in guessedPaths)
        {
            switch (path)
            {
                case "family":
                    foreach (string section in FamilySections)
                    {
                        draft.Remove(section);
                        if (reference[section] is { } node)
                        {
                            draft[section] = node.DeepClone();
                        }
                    }

                    draft["family"] = reference["family"]!.DeepClone();
                    break;
                case "layout.header":
                    foreach (string part in new[] { "header", "payloadBytes", "maximumPayloadBytes" })
                    {
                        Replace(draft, reference, $"layout.{part}");
                    }

                    // A coverage that names header fields names the draft's fields: it goes with the header.
                    if (draft["layout"]?["checksum"]?["covers"] is JsonArray && reference["layout"]?["checksum"]?["covers"] is { } covers)
                    {
                        draft["layout"]!["checksum"]!["covers"] = covers.DeepClone();
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

    /// <summary>Class names taken from the reference, renamed to the draft's class nearest in length.</summary>
    private static void Rename(JsonObject draft, JsonObject reference, string path)
    {
        var draftClasses = Classes(draft);
        var referenceClasses = Classes(reference);
        string Nearest(string name)
        {
            if (!referenceClasses.TryGetValue(name, out double length) || draftClasses.Count == 0)
            {
                return name;
            }

            return draftClasses.MinBy(c => Math.Abs(Math.Log(c.Value / length))).Key;
        }

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
