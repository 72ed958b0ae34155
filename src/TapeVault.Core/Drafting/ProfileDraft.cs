using System.Text.Json;
using System.Text.Json.Nodes;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Drafting;

/// <summary>
/// What a draft says about one field of the profile (a JSON path such as <c>framing.parity</c>): the value it wrote,
/// whether the value was measured or is a guess, how sure it is (0..1) and the evidence, in words.
/// </summary>
public sealed record DraftFinding(string Path, string Value, bool Guessed, double Confidence, string Evidence)
{
    /// <summary>Below this a measured value is reported as a guess too: the evidence was not strong enough to stand on.</summary>
    public const double MeasuredThreshold = 0.8;
}

/// <summary>How well one family explained the capture, for the curator to see why the draft chose the one it did.</summary>
public sealed record FamilyScore(string Family, double Score, string Evidence);

/// <summary>
/// A profile drafted from a capture: the profile's JSON (the language <see cref="ProfileLoader"/> reads, loadable as
/// it stands), every field with how it was found, the guesses among them, and an overall confidence.
/// </summary>
public sealed record ProfileDraft(
    string Json,
    IReadOnlyList<DraftFinding> Findings,
    IReadOnlyList<FamilyScore> Families,
    double Confidence,
    double SecondsRead,
    IReadOnlyList<string> Notes)
{
    public IEnumerable<DraftFinding> Guesses => Findings.Where(f => f.Guessed);

    /// <summary>The JSON paths of the guessed fields, which the curator must confirm or correct.</summary>
    public IReadOnlyList<string> GuessedPaths => [.. Guesses.Select(g => g.Path)];

    /// <summary>The drafted profile, loaded (a draft is always loadable; its guesses may still be wrong).</summary>
    public FormatProfile Load() => ProfileLoader.Parse(Json, "draft");

    /// <summary>The side list written beside a drafted profile: every finding, the family scores and the confidence.</summary>
    public string SideListJson()
    {
        var root = new JsonObject
        {
            ["confidence"] = Math.Round(Confidence, 3),
            ["secondsRead"] = Math.Round(SecondsRead, 1),
            ["guessed"] = new JsonArray([.. GuessedPaths.Select(p => (JsonNode)JsonValue.Create(p)!)]),
            ["findings"] = new JsonArray([.. Findings.Select(f => (JsonNode)new JsonObject
            {
                ["path"] = f.Path,
                ["value"] = f.Value,
                ["guessed"] = f.Guessed,
                ["confidence"] = Math.Round(f.Confidence, 3),
                ["evidence"] = f.Evidence,
            })]),
            ["families"] = new JsonArray([.. Families.Select(f => (JsonNode)new JsonObject
            {
                ["family"] = f.Family,
                ["score"] = Math.Round(f.Score, 3),
                ["evidence"] = f.Evidence,
            })]),
            ["notes"] = new JsonArray([.. Notes.Select(n => (JsonNode)JsonValue.Create(n)!)]),
        };
        return root.ToJsonString(Indented);
    }

    internal static JsonSerializerOptions Indented { get; } = new() { WriteIndented = true };
}
