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
        var surveys = StretchSurvey.TakeEach(stretch, cancellation);
        var survey = surveys[0];
        if (survey.Clusters.Count < 2)
        {
            throw new ProfileDraftException($"The first {stretch.Seconds:0.#} s of {stretch.Source} hold no groups of interval lengths: silence, noise, or no recording.");
        }

        var scores = Families.Select(f => (Drafter: f, Score: f.Score(survey))).OrderByDescending(s => s.Score.Score).ToList();
        var refusals = new List<string>();
        var allScores = scores.Select(s => s.Score).ToList();

        // Every family the evidence allows is drafted (tones in the spectrum, a 1 : 2 pair of interval lengths,
        // classes of whole cycles), and each draft is checked against the stretch with the read path (ProfileCheck):
        // the run steps that score a family can mislead (a filtered tone's half cycles fall in and out of their group,
        // an alternating preamble looks like two pulse classes), where the blocks a draft reads and the check values
        // that hold on them do not.
        var drafts = new List<Drafted>();
        for (int rank = 0; rank < scores.Count; rank++)
        {
            var drafter = scores[rank].Drafter;

            // A family that fits the intervals may still read nothing (biphase's half and whole cells look like two
            // tones): its reason is kept, and the family is tried through the next setting's survey where that one
            // sees the family otherwise (other groups or runs), then the next family. A reading no check value
            // proves gives way to the next survey's too (a setting that loses some of a preamble's edges reads its
            // blocks with no check holding, where one that keeps them finds the check): the first proven reading
            // is drafted, else the reading through the survey the family fits best. The first survey groups its
            // intervals best, but may still blur the family's runs (an interval group between the halves and the
            // wholes breaks the halves' pairs), while the next survey shows them: taking the first reading there
            // weighed the family by the blurred survey's fit, below a family that fits neither.
            FamilyProposal? proposal = null;
            FamilyScore score = scores[rank].Score;
            var seen = new HashSet<string>();
            foreach (var through in surveys.Take(MostSurveys))
            {
                var fit = through == survey ? scores[rank].Score : drafter.Score(through);
                if (fit.Score <= 0 || !seen.Add(fit.Evidence))
                {
                    continue;
                }

                FamilyProposal? reading = null;
                try
                {
                    reading = drafter.Draft(through, cancellation);
                }
                catch (ProfileDraftException e)
                {
                    refusals.Add(e.Message);
                }

                if (reading is not null && (proposal is null || CheckMeasured(reading) || (!CheckMeasured(proposal) && fit.Score > score.Score)))
                {
                    (proposal, score) = (reading, fit);
                }

                if (proposal is not null && CheckMeasured(proposal))
                {
                    break;
                }
            }

            if (proposal is null)
            {
                continue;
            }

            ProfileDraft draft;
            try
            {
                draft = Assemble(stretch, drafter.Family, 0.5, score, proposal, allScores, []);
            }
            catch (ProfileException e)
            {
                // What this family found cannot be written as a profile (a sync too short to be found, say): its
                // reason is kept, and the next family is tried.
                refusals.Add($"The {drafter.Family} reading found cannot be a profile: {e.Message}");
                continue;
            }

            var check = ProfileCheck.Run(draft.Load(), CheckStretch(stretch), cancellation);
            drafts.Add(new Drafted(drafter, score, proposal, check, rank));
        }

        if (drafts.Count == 0)
        {
            throw new ProfileDraftException(
                $"No family reads the first {stretch.Seconds:0.#} s of {stretch.Source}: " +
                string.Join("; ", scores.Select(s => $"{s.Score.Family} {s.Score.Score:0.00} ({s.Score.Evidence})")) + "."
                + (refusals.Count == 0 ? string.Empty : " " + string.Join(" ", refusals)));
        }

        // A draft proven beyond chance (a check of 16 bits or more, its bit order told, holding on three different
        // blocks) first: another family's misreading of the same signal (biphase cells over FSK tones) finds hundreds
        // of short blocks, some of which hold a one-byte check in both bit orders and outweigh it in bytes. Then the
        // draft whose check reads most (the bytes of the different blocks whose check holds, times the share of
        // checked blocks that hold), then (no draft proven) the family that fits the intervals best through the
        // survey it was drafted from (a family the first survey blurs and the next one shows is scored by that one).
        // A reading whose serial framing holds comes before one proven only by a narrower check: a pair of tones at one
        // and two cycles a bit read as biphase is every FSK bit doubled, bytes of 16 values, on which a one-byte check
        // holds on one block in sixteen, and an FSK stream has no check value to answer with.
        // A one-byte check measured in one bit order and holding on three blocks or more, three in four of those
        // checked, is beyond chance too (one block in sixteen by chance, as above): it comes before framing, which a
        // format of constant bit time with a marker before each byte and a parity bit after (three pulse classes in
        // pairs) shows to an FSK reading as start, parity and stop bits that hold.
        // Where no check holds beyond chance and none frames cleanly, a reading whose framing still holds far above
        // chance (a capture whose damage breaks a character in ten) comes before one whose framing holds nothing:
        // the intervals' fit cannot tell a tone pair of two and four cycles a bit, whose runs the survey breaks, from
        // pulse classes, where the characters the FSK reading frames can.
        var chosen = drafts.OrderByDescending(d => d.CheckBeyondChance).ThenByDescending(d => d.Proposal.FramingHolds).ThenByDescending(d => d.Reading)
            .ThenByDescending(d => d.Proposal.FramingAboveChance).ThenByDescending(d => d.Score.Score).ThenBy(d => d.Rank).First();
        var rivals = drafts.Where(d => d != chosen).ToList();
        string weighed = string.Join("; ", drafts.Select(d => $"{d.Drafter.Family}: {d.Check.Positions} block(s), the check holds on {d.Check.Clean}, {d.Check.CleanBytes} different bytes"));
        double familyConfidence;
        string familyEvidence;
        if (chosen.Proven)
        {
            // A check of the catalogue holding on blocks read through the whole stretch proves the family, when no
            // other family's draft reads as many, and a one-byte check (which holds by chance now and then) holds
            // on three blocks or more than another family's reading.
            // A check that holds in both bit orders (its finding a guess) proves nothing about the family: a reflected
            // CRC over bit-reversed bytes is another CRC, and another family's reading of a tone pair finds such pairs.
            double runnerUp = rivals.Select(d => d.Reading).DefaultIfEmpty(0).Max();
            bool checkMeasured = CheckMeasured(chosen.Proposal);
            bool beyondChance = chosen.Proposal.StronglyProven || (checkMeasured && chosen.Check.Clean >= 3 && chosen.Reading >= 3 * runnerUp);
            familyConfidence = chosen.Reading > 2 * runnerUp && beyondChance ? 0.97 : 0.6;
            familyEvidence = familyConfidence >= 0.97
                ? $"; a check value of the catalogue holds on {chosen.Check.Clean} block(s) read this way through the stretch ({weighed})"
                : $"; a check value holds on {chosen.Check.Clean} block(s) read this way, not enough more than another family's reading to tell the family beyond chance ({weighed})";
        }
        else
        {
            double runnerUp = scores.Where(s => s.Drafter != chosen.Drafter).Select(s => s.Score.Score).DefaultIfEmpty(0).Max();
            familyConfidence = Math.Clamp(0.5 + chosen.Score.Score - runnerUp, 0.3, 0.95);
            familyEvidence = drafts.Count > 1 ? $"; no draft's check value holds on the stretch ({weighed})" : string.Empty;
        }

        refusals.AddRange(rivals.Select(d => $"The {d.Drafter.Family} draft reads {d.Check.Positions} block(s) of the stretch, its check holding on {d.Check.Clean}."));
        return Assemble(stretch, chosen.Drafter.Family, familyConfidence, chosen.Score with { Evidence = chosen.Score.Evidence + familyEvidence }, chosen.Proposal, allScores, refusals);
    }

    /// <summary>Whether a reading's check value was measured (found holding in one bit order), not guessed or absent.</summary>
    private static bool CheckMeasured(FamilyProposal proposal) => proposal.Findings.Any(f => f.Path == "layout.checksum" && !f.Guessed);

    /// <summary>The most surveys (one a setting that counts both edges) a family is drafted through before the next family is tried.</summary>
    public const int MostSurveys = 3;

    /// <summary>The seconds of the stretch a family's draft is checked on: enough for dozens of blocks of any family.</summary>
    public const double CheckSeconds = 60;

    private static CaptureStretch CheckStretch(CaptureStretch stretch)
    {
        int limit = (int)Math.Min(stretch.Samples.Length, (long)(CheckSeconds * stretch.SampleRate));
        return limit == stretch.Samples.Length ? stretch : CaptureStretch.FromSamples(stretch.Samples[..limit], stretch.SampleRate, stretch.Source);
    }

    /// <summary>One family's draft and what checking it against the stretch read.</summary>
    private sealed record Drafted(IFamilyDrafter Drafter, FamilyScore Score, FamilyProposal Proposal, ProfileCheckReport Check, int Rank)
    {
        /// <summary>The draft found a check value (not a stream), and the check holds on blocks of the stretch.</summary>
        public bool Proven => Reading > 0;

        /// <summary>
        /// The check proves the reading beyond chance: strongly (<see cref="FamilyProposal.StronglyProven"/>), or a
        /// check measured in one bit order holding on three blocks or more and on three in four of those checked.
        /// </summary>
        public bool CheckBeyondChance => Proven && (Proposal.StronglyProven
            || (CheckMeasured(Proposal) && Check.Clean >= 3 && 4 * Check.Clean >= 3 * (Check.Clean + Check.Failed)));

        /// <summary>What the draft reads with its check holding (<see cref="ProfileCheckReport.CheckedReading"/>): two clean blocks at least, a quarter of those checked.</summary>
        public double Reading => Proposal.Findings.Any(f => f.Path == "layout.checksum") && Check.Clean >= 2 && Check.Clean * 4 >= Check.Clean + Check.Failed ? Check.CheckedReading : 0;
    }

    private static ProfileDraft Assemble(CaptureStretch stretch, string family, double familyConfidence, FamilyScore score, FamilyProposal proposal, IReadOnlyList<FamilyScore> scores, IReadOnlyList<string> refusals)
    {
        var findings = new List<DraftFinding>
        {
            new("family", family, familyConfidence < DraftFinding.MeasuredThreshold, familyConfidence,
                score.Evidence),
        };
        findings.AddRange(proposal.Findings);
        findings.Add(new DraftFinding("recording", "lead-in 1 s, gaps 0.3 s, trailer 0.3 s", true, 0.5, "how a writer lays blocks down, for synthesis only; reading does not use it"));
        var notes = proposal.Notes.Concat(refusals.Select(r => "Not drafted as another family: " + r)).ToList();
        var guessed = findings.Where(f => f.Guessed).Select(f => f.Path).ToList();
        string id = Identifier(stretch.Source);
        var root = new JsonObject
        {
            ["id"] = id,
            ["name"] = $"Draft from {stretch.Source}",
            ["description"] = $"Drafted by TapeVault from the first {stretch.Seconds.ToString("0.#", CultureInfo.InvariantCulture)} s of {stretch.Source}; not yet confirmed. Guessed: {(guessed.Count == 0 ? "nothing" : string.Join(", ", guessed))}.",
            ["family"] = family,
        };
        // Copied, not moved: a family's proposal is assembled once to be checked and again when it is chosen.
        foreach (var (name, node) in proposal.Sections)
        {
            root[name] = node?.DeepClone();
        }

        root["recording"] = new JsonObject { ["leadInSeconds"] = 1.0, ["blockGapSeconds"] = 0.3, ["trailerSeconds"] = 0.3 };
        string json = root.ToJsonString(ProfileDraft.Indented);

        // A draft is a profile: it must load, or the drafter wrote something the language cannot hold.
        ProfileLoader.Parse(json, "draft");
        double geometric = Math.Exp(findings.Average(f => Math.Log(Math.Max(0.01, f.Confidence))));
        return new ProfileDraft(json, findings, scores, familyConfidence * geometric, stretch.Seconds, notes);
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
