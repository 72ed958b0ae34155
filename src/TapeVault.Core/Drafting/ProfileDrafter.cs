using System.Globalization;
using System.Text;
using System.Text.Json.Nodes;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Drafting;

/// <summary>The stretch holds nothing a family can read (silence, noise, or a format no family describes).</summary>
public sealed class ProfileDraftException(string message) : Exception(message);

/// <summary>
/// Drafts a format profile from a capture: a survey of the intervals between transitions (grouped in a pulse-length
/// histogram) says which family's structure the stretch has; that family's drafter measures its encoding, finds the
/// lead-in and the sync the blocks share, the framing and the layout; everything is written in the profile language
/// with a finding per field, guesses marked, and loaded once to prove the draft is a profile.
/// </summary>
public static class ProfileDrafter
{
    /// <summary>The families a draft can propose, in the order they are tried when their scores tie.</summary>
    public static IReadOnlyList<IFamilyDrafter> Families { get; } = [new PulseWidthDrafter(), new FskDrafter(), new BiphaseDrafter()];

    public static ProfileDraft Draft(string path, double maximumSeconds = CaptureStretch.DefaultSeconds, CancellationToken cancellation = default) =>
        Draft(CaptureStretch.Read(path, maximumSeconds, cancellation: cancellation), cancellation);

    public static ProfileDraft Draft(CaptureStretch stretch, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(stretch);
        var survey = StretchSurvey.Take(stretch, cancellation);
        if (survey.Clusters.Count < 2)
        {
            throw new ProfileDraftException($"The first {stretch.Seconds:0.#} s of {stretch.Source} hold no groups of interval lengths: silence, noise, or no recording.");
        }

        var scores = Families.Select(f => (Drafter: f, Score: f.Score(survey))).OrderByDescending(s => s.Score.Score).ToList();
        var refusals = new List<string>();

        // The best-fitting family's reading stands unless no check value proves it and a later family's check value
        // proves its own beyond chance (an alternating biphase preamble looks like two pulse classes, say).
        ProfileDraft? TryAssemble(IFamilyDrafter drafter, FamilyScore score, FamilyProposal proposal, double familyConfidence)
        {
            try
            {
                return Assemble(stretch, drafter.Family, familyConfidence, score, proposal, [.. scores.Select(s => s.Score)], refusals);
            }
            catch (ProfileException e)
            {
                // What this family found cannot be written as a profile (a sync too short to be found, say): its
                // reason is kept, and the next family is tried.
                refusals.Add($"The {drafter.Family} reading found cannot be a profile: {e.Message}");
                return null;
            }
        }

        (IFamilyDrafter Drafter, FamilyScore Score, FamilyProposal Proposal)? unproven = null;
        foreach (var (drafter, score) in scores)
        {
            if (score.Score <= 0)
            {
                continue;
            }

            // A family that fits the intervals may still read nothing (biphase's half and whole cells look like two
            // tones): its reason is kept, and the next family is tried.
            FamilyProposal? proposal;
            try
            {
                proposal = drafter.Draft(survey, cancellation);
            }
            catch (ProfileDraftException e)
            {
                refusals.Add(e.Message);
                continue;
            }

            if (proposal is null)
            {
                continue;
            }

            bool proofHere = proposal.Findings.Any(f => f.Path == "layout.checksum");
            if (unproven is not null && !proposal.StronglyProven)
            {
                continue;
            }

            if (unproven is null && !proofHere)
            {
                unproven = (drafter, score, proposal);
                continue;
            }

            // Every proposal that gets here has a check that holds on its blocks (the two tests above): the family is
            // as sure as that check.
            if (TryAssemble(drafter, score, proposal, 0.97) is { } proven)
            {
                return proven;
            }
        }

        if (unproven is { } first)
        {
            double runnerUp = scores.Where(s => s.Drafter != first.Drafter).Select(s => s.Score.Score).DefaultIfEmpty(0).Max();
            if (TryAssemble(first.Drafter, first.Score, first.Proposal, Math.Clamp(0.5 + first.Score.Score - runnerUp, 0.3, 0.95)) is { } draft)
            {
                return draft;
            }
        }

        throw new ProfileDraftException(
            $"No family reads the first {stretch.Seconds:0.#} s of {stretch.Source}: " +
            string.Join("; ", scores.Select(s => $"{s.Score.Family} {s.Score.Score:0.00} ({s.Score.Evidence})")) + "."
            + (refusals.Count == 0 ? string.Empty : " " + string.Join(" ", refusals)));
    }

    private static ProfileDraft Assemble(CaptureStretch stretch, string family, double familyConfidence, FamilyScore score, FamilyProposal proposal, IReadOnlyList<FamilyScore> scores, IReadOnlyList<string> refusals)
    {
        var findings = new List<DraftFinding>
        {
            new("family", family, familyConfidence < DraftFinding.MeasuredThreshold, familyConfidence,
                score.Evidence + (familyConfidence >= 0.97 ? "; a check value of the catalogue holds on the blocks read this way" : string.Empty)),
        };
        findings.AddRange(proposal.Findings);
        findings.Add(new DraftFinding("recording", "lead-in 1 s, gaps 0.3 s, trailer 0.3 s", true, 0.5, "how a writer lays blocks down, for synthesis only; reading does not use it"));
        proposal.Notes.AddRange(refusals.Select(r => "Not drafted as another family: " + r));
        var guessed = findings.Where(f => f.Guessed).Select(f => f.Path).ToList();
        string id = Identifier(stretch.Source);
        var root = new JsonObject
        {
            ["id"] = id,
            ["name"] = $"Draft from {stretch.Source}",
            ["description"] = $"Drafted by TapeVault from the first {stretch.Seconds.ToString("0.#", CultureInfo.InvariantCulture)} s of {stretch.Source}; not yet confirmed. Guessed: {(guessed.Count == 0 ? "nothing" : string.Join(", ", guessed))}.",
            ["family"] = family,
        };
        foreach (var (name, node) in proposal.Sections.ToList())
        {
            proposal.Sections.Remove(name);
            root[name] = node;
        }

        root["recording"] = new JsonObject { ["leadInSeconds"] = 1.0, ["blockGapSeconds"] = 0.3, ["trailerSeconds"] = 0.3 };
        string json = root.ToJsonString(ProfileDraft.Indented);

        // A draft is a profile: it must load, or the drafter wrote something the language cannot hold.
        ProfileLoader.Parse(json, "draft");
        double geometric = Math.Exp(findings.Average(f => Math.Log(Math.Max(0.01, f.Confidence))));
        return new ProfileDraft(json, findings, scores, familyConfidence * geometric, stretch.Seconds, proposal.Notes);
    }

    /// <summary>A profile id from a capture's file name: lower-case letters, digits and hyphens.</summary>
    public static string Identifier(string source)
    {
        ArgumentNullException.ThrowIfNull(source);
        var text = new StringBuilder("draft-");
        foreach (char c in Path.GetFileNameWithoutExtension(source).ToLowerInvariant())
        {
            char d = c is (>= 'a' and <= 'z') or (>= '0' and <= '9') ? c : '-';
            if (d != '-' || text[^1] != '-')
            {
                text.Append(d);
            }
        }

        string id = text.ToString().TrimEnd('-');
        return id.Length > 64 ? id[..64].TrimEnd('-') : id;
    }
}
