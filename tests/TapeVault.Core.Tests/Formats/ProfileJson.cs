using System.Text.Json.Nodes;
using Xunit;

namespace TapeVault.Core.Tests.Formats;

/// <summary>
/// Valid profiles of our own invention, as JSON trees the tests can break one field at a time. Each is a complete,
/// loadable profile of one family; a test edits a copy and expects the loader to name what it broke.
/// </summary>
internal static class ProfileJson
{
    public const string PulseWidthText = """
        {
          "id": "test-pulse",
          "name": "Test pulse-width format",
          "description": "Invented for the loader tests.",
          "family": "pulse-width",
          "pulseWidth": {
            "classes": [
              { "name": "short", "microseconds": 250 },
              { "name": "long", "microseconds": 500 },
              { "name": "mark", "microseconds": 1000 }
            ],
            "zero": [ "short", "short" ],
            "one": [ "long" ],
            "leadIn": { "class": "short", "minimumCount": 64 },
            "sync": [ "mark", "long" ]
          },
          "framing": { "dataBits": 8, "bitOrder": "lsb-first", "startBits": "0", "stopBits": "1", "parity": "none" },
          "layout": {
            "header": [
              { "name": "block", "bytes": 1, "role": "block-number" },
              { "name": "length", "bytes": 1, "role": "payload-length" }
            ],
            "maximumPayloadBytes": 200,
            "checksum": { "algorithm": "sum8", "covers": "payload" },
            "copies": 1
          },
          "recording": { "leadInSeconds": 0.5, "blockGapSeconds": 0.1, "trailerSeconds": 0.1 }
        }
        """;

    public const string FskText = """
        {
          "id": "test-tones",
          "name": "Test tone format",
          "family": "fsk",
          "fsk": { "markHz": 2000, "spaceHz": 1000, "baud": 500 },
          "framing": { "dataBits": 7, "startBits": "0", "stopBits": "1", "parity": "even" },
          "layout": { "payloadBytes": 32, "checksum": { "algorithm": "xor8" } }
        }
        """;

    public const string BiphaseText = """
        {
          "id": "test-cells",
          "name": "Test biphase format",
          "family": "biphase",
          "biphase": { "cellMicroseconds": 500, "oneIs": "rising", "leadInMinimumBits": 32, "syncBits": "1101" },
          "framing": { "dataBits": 8 },
          "layout": { "payloadBytes": 64, "checksum": { "algorithm": "crc16-xmodem" } }
        }
        """;

    public static JsonObject PulseWidth() => Parse(PulseWidthText);

    public static JsonObject Fsk() => Parse(FskText);

    public static JsonObject Biphase() => Parse(BiphaseText);

    public static JsonObject Parse(string text) => (JsonObject)JsonNode.Parse(text)!;

    /// <summary>The node at a dotted path with optional [index] steps, e.g. "pulseWidth.classes[1]".</summary>
    public static JsonNode At(JsonObject root, string path)
    {
        JsonNode node = root;
        foreach (string step in path.Split('.'))
        {
            string name = step;
            int? index = null;
            int bracket = step.IndexOf('[', StringComparison.Ordinal);
            if (bracket >= 0)
            {
                name = step[..bracket];
                index = int.Parse(step[(bracket + 1)..^1], System.Globalization.CultureInfo.InvariantCulture);
            }

            node = node[name] ?? throw new ArgumentException($"No node '{name}' on the path {path}.", nameof(path));
            if (index is { } i)
            {
                node = node[i] ?? throw new ArgumentException($"No element {i} on the path {path}.", nameof(path));
            }
        }

        return node;
    }

    /// <summary>Sets the last step of <paramref name="path"/> (a property) to <paramref name="value"/>.</summary>
    public static JsonObject With(JsonObject root, string path, JsonNode? value)
    {
        int dot = path.LastIndexOf('.');
        var parent = dot < 0 ? root : (JsonObject)At(root, path[..dot]);
        parent[path[(dot + 1)..]] = value;
        return root;
    }

    /// <summary>Removes the property at the last step of <paramref name="path"/>.</summary>
    public static JsonObject Without(JsonObject root, string path)
    {
        int dot = path.LastIndexOf('.');
        var parent = dot < 0 ? root : (JsonObject)At(root, path[..dot]);
        Assert.True(parent.Remove(path[(dot + 1)..]), $"The base profile has no {path} to remove.");
        return root;
    }
}
