using System.Text.Json.Nodes;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;
using static TapeVault.Core.Drafting.CommonSections;

namespace TapeVault.Core.Drafting;

/// <summary>
/// Pulse-width formats: bits are whole cycles of two or more lengths. In the survey each cycle is two equal half
/// cycles, so every group comes in even runs, and the groups' bit times (a group's run step times its length) differ,
/// unlike FSK's. The draft reads cycles through a setting that counts one edge a cycle: the groups are the pulse
/// classes, the class of the long runs is the lead-in, and the symbols after each lead-in go to the sync search.
/// </summary>
public sealed class PulseWidthDrafter : IFamilyDrafter
{
    /// <summary>A run of one class this long (in cycles) may be a lead-in; data rarely holds so many equal bits in a row.</summary>
    public const int LeastLeadInCycles = 48;

    private static readonly string[][] ClassNames =
    [
        [],
        ["single"],
        ["short", "long"],
        ["short", "medium", "long"],
        ["short", "medium", "long", "extra-long"],
    ];

    /// <summary>A run of the lead-in class this long (in cycles) but shorter than a lead-in may be a gap between blocks.</summary>
    public const int LeastGapCycles = 16;

    /// <summary>
    /// A class may be rare: a sync pulse comes once a block, one cycle in a thousand or so. Groups this small count
    /// here, where the survey (which judges structure) leaves them out.
    /// </summary>
    public const double RareClassShare = 0.0005;

    public string Family => "pulse-width";

    public FamilyScore Score(StretchSurvey survey)
    {
        ArgumentNullException.ThrowIfNull(survey);
        var runs = survey.Runs;
        var top = survey.Dominant.Take(3).Where(i => survey.Clusters[i].Share >= 0.05).ToList();
        if (top.Count < 2)
        {
            return new FamilyScore(Family, 0, "fewer than two groups of interval lengths");
        }

        int even = top.Count(i => runs[i].Granularity == 2 && runs[i].OddShare < 0.25);
        bool sameBitTime = top.Count >= 2 && runs[top[0]].Granularity * survey.Clusters[top[0]].Seconds is var a && runs[top[1]].Granularity * survey.Clusters[top[1]].Seconds is var b && Math.Abs(Math.Log(a / b)) < 0.12;
        double score = even == top.Count && !sameBitTime ? 0.8 * survey.GroupedShare : 0.3 * survey.GroupedShare;
        return new FamilyScore(Family, score, $"{even} of the {top.Count} main groups come most often in runs of one whole cycle (two half cycles){(sameBitTime ? ", but the two main groups make one bit time, as FSK's tones do" : string.Empty)}");
    }

    public FamilyProposal? Draft(StretchSurvey survey, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(survey);
        var stretch = survey.Stretch;

        // Whole cycles: the setting (one edge a cycle) whose intervals group best.
        (DetectorSetting Setting, double[] Cycles, List<IntervalCluster> Clusters, int[] Symbols, double Share)? best = null;
        foreach (var setting in DetectorBanks.Default.Where(s => s.Edges != EdgeSelection.Both))
        {
            var cycles = IntervalClusters.Intervals(stretch.Edges(setting, cancellation), stretch.SampleRate);
            var clusters = Separate(IntervalClusters.Find(cycles, RareClassShare));
            if (clusters.Count < 2)
            {
                continue;
            }

            var symbols = IntervalClusters.Classify(cycles, clusters);
            double share = (double)symbols.Count(s => s >= 0) / Math.Max(1, symbols.Length);
            if (best is null || share > best.Value.Share)
            {
                best = (setting, cycles, clusters, symbols, share);
            }
        }

        if (best is not { } chosen)
        {
            return null;
        }

        var classesFound = chosen.Clusters;
        var sym = chosen.Symbols;

        // The lead-in: the class of the long runs.
        var longRuns = Runs(sym).Where(r => r.Class >= 0 && r.Length >= LeastLeadInCycles).ToList();
        if (longRuns.Count == 0)
        {
            return null;
        }

        int leadIn = longRuns.GroupBy(r => r.Class).OrderByDescending(g => g.Sum(r => r.Length)).First().Key;
        var leadRuns = longRuns.Where(r => r.Class == leadIn).ToList();
        double median = leadRuns.Select(r => (double)r.Length).Order().ElementAt(leadRuns.Count / 2);
        int threshold = Math.Max(LeastLeadInCycles, (int)(0.25 * median));
        leadRuns = [.. leadRuns.Where(r => r.Length >= threshold)];

        // Blocks that follow one another after a short run of the lead-in class (a block gap) instead of a lead-in:
        // runs too short for a lead-in but too long for data, seen again and again, cut blocks too.
        var cuts = Runs(sym).Where(r => r.Class == leadIn && r.Length >= LeastGapCycles).ToList();
        var gaps = cuts.Where(r => r.Length < threshold).ToList();
        bool gapped = gaps.Count >= Math.Max(2, leadRuns.Count);
        if (!gapped)
        {
            cuts = leadRuns;
        }

        // Each block: from the end of a lead-in (or gap) to the next one or a loss of signal (four unclassified cycles).
        var blocks = new List<int[]>();
        for (int k = 0; k < cuts.Count; k++)
        {
            int from = cuts[k].Start + cuts[k].Length;
            int limit = k + 1 < cuts.Count ? cuts[k + 1].Start : sym.Length;
            int to = from;
            int invalid = 0;
            while (to < limit && invalid < 4)
            {
                invalid = sym[to] < 0 ? invalid + 1 : 0;
                to++;
            }

            to -= invalid;
            if (to - from >= 24)
            {
                blocks.Add(sym[from..to]);
            }
        }

        if (blocks.Count == 0)
        {
            return null;
        }

        // The bit classes: the two commonest inside blocks.
        var counts = new long[classesFound.Count];
        foreach (var block in blocks)
        {
            foreach (int s in block.Skip(4))
            {
                if (s >= 0)
                {
                    counts[s]++;
                }
            }
        }

        var bitClasses = Enumerable.Range(0, counts.Length).OrderByDescending(i => counts[i]).Take(2).Order().ToArray();
        int zeroFirst = bitClasses.Contains(leadIn) ? leadIn : bitClasses[0];
        int oneFirst = bitClasses[0] == zeroFirst ? bitClasses[1] : bitClasses[0];
        var mappings = new[] { new BitMapping("lead-in class is 0", zeroFirst, oneFirst), new BitMapping("lead-in class is 1", oneFirst, zeroFirst) };
        var reading = SyncFormatSearch.Search(blocks, mappings, leadIn, cancellation);
        if (reading is null)
        {
            return null;
        }

        // Only the classes the reading uses (bits, lead-in, sync) go into the profile: a rare group of noise or
        // dropout edges written as a class would take pulses from the classes beside it when the profile reads.
        // Where no check proves the reading, every class stays: the curator's bit mapping may need the others.
        var used = new SortedSet<int>(reading.Sync) { leadIn, reading.Mapping.ZeroSymbol, reading.Mapping.OneSymbol };
        if (!reading.Layout.HasChecksum)
        {
            used.UnionWith(Enumerable.Range(0, classesFound.Count));
        }

        used.RemoveWhere(c => c < 0);
        var kept = used.ToList();
        var keptNames = kept.Count < ClassNames.Length ? ClassNames[kept.Count] : [.. Enumerable.Range(1, kept.Count).Select(i => $"class-{i}")];
        var names = new string[classesFound.Count];
        for (int i = 0; i < names.Length; i++)
        {
            int at = kept.IndexOf(i);
            names[i] = at >= 0 ? keptNames[at] : $"unused-{i}";
        }

        var dropped = Enumerable.Range(0, classesFound.Count).Where(i => !used.Contains(i)).Select(i => classesFound[i]).ToList();
        var proposal = new FamilyProposal();
        bool proven = reading.Layout.HasChecksum;
        int shortestLeadIn = leadRuns.Min(r => r.Length);
        int minimum = Math.Clamp((int)(0.25 * shortestLeadIn), 8, MostLeadIn);
        var sync = reading.Sync.Select(s => names[s]).ToList();
        proposal.Sections["pulseWidth"] = new JsonObject
        {
            ["classes"] = new JsonArray([.. kept.Select(i => (JsonNode)new JsonObject { ["name"] = names[i], ["microseconds"] = Math.Round(classesFound[i].Seconds * 1e6, 1) })]),
            ["zero"] = new JsonArray(JsonValue.Create(names[reading.Mapping.ZeroSymbol])),
            ["one"] = new JsonArray(JsonValue.Create(names[reading.Mapping.OneSymbol])),
            ["leadIn"] = new JsonObject { ["class"] = names[leadIn], ["minimumCount"] = minimum },
            ["sync"] = new JsonArray([.. sync.Select(s => (JsonNode)JsonValue.Create(s)!)]),
        };
        if (gapped)
        {
            int shortestGap = gaps.Min(r => r.Length);
            int count = Math.Clamp(shortestGap, 16, 4 * minimum);
            proposal.Sections["pulseWidth"]!["blockGap"] = new JsonObject { ["count"] = count };
            proposal.Measured("pulseWidth.blockGap.count", F(count), 0.85,
                $"{gaps.Count} runs of {shortestGap}–{gaps.Max(r => r.Length)} {names[leadIn]} cycles, too short for a lead-in, come before blocks: blocks that follow one another without a lead-in");
        }

        proposal.Measured("pulseWidth.classes", string.Join(", ", kept.Select(i => $"{names[i]} {Us(classesFound[i].Seconds)} µs")), 0.9,
            $"groups of cycle lengths through setting {chosen.Setting.Name}: {string.Join(", ", classesFound.Select(c => $"{Us(c.Seconds)} µs ({F(100 * c.Share, "0.0")} %)"))}; {F(100 * chosen.Share, "0.0")} % of cycles fall in one; lengths as the tape plays (a tape off speed moves them all alike)"
            + (dropped.Count == 0 ? string.Empty : $"; left out, as no bit, lead-in or sync uses them: {string.Join(", ", dropped.Select(c => $"{Us(c.Seconds)} µs"))}"));
        proposal.Measured("pulseWidth.leadIn.class", names[leadIn], 0.9, $"{leadRuns.Count} runs of {shortestLeadIn}–{leadRuns.Max(r => r.Length)} {names[leadIn]} cycles");
        proposal.Measured("pulseWidth.leadIn.minimumCount", F(minimum), 0.85, $"a quarter (at most {MostLeadIn}) of the shortest lead-in seen ({shortestLeadIn} cycles)");
        string bitEvidence = proven ? "the check value holds with this mapping" : $"{names[bitClasses[0]]} and {names[bitClasses[1]]} are the commonest classes inside blocks; which is 0 is not proven (drafted: {reading.Mapping.Name})";
        proposal.Measured("pulseWidth.zero", names[reading.Mapping.ZeroSymbol], proven ? 0.9 : 0.5, bitEvidence);
        proposal.Measured("pulseWidth.one", names[reading.Mapping.OneSymbol], proven ? 0.9 : 0.5, bitEvidence);
        proposal.Measured("pulseWidth.sync", string.Join(" ", sync), proven ? 0.9 : 0.4,
            $"{blocks.Count} blocks begin alike for {reading.CommonPrefix} cycles after their lead-in; " + (proven ? "the check value holds when bytes start after this sync" : "the shortest sync whose framing holds is drafted"));
        Framing(proposal, reading.Framing, proven, reading.FramingShare, proven && !reading.OrderAmbiguous, OrderEvidence(reading));
        Layout(proposal, reading.Layout);
        AmbiguousOrder(proposal, reading);
        AbsorbedSync(proposal, reading, "pulseWidth.sync");
        proposal.Notes.Add($"Read through detector setting {chosen.Setting.Name}: {blocks.Count} blocks after lead-ins; {reading.Candidates} readings of sync, mapping and framing held.");
        return proposal;
    }

    /// <summary>Neighbouring classes closer than the profile language allows (25 %) are one class: the larger keeps its place.</summary>
    private static List<IntervalCluster> Separate(List<IntervalCluster> clusters)
    {
        var result = new List<IntervalCluster>();
        foreach (var cluster in clusters)
        {
            if (result.Count > 0 && cluster.Seconds < result[^1].Seconds * 1.3)
            {
                if (cluster.Count > result[^1].Count)
                {
                    result[^1] = cluster;
                }

                continue;
            }

            result.Add(cluster);
        }

        return result;
    }

    private static IEnumerable<(int Class, int Start, int Length)> Runs(int[] symbols)
    {
        int i = 0;
        while (i < symbols.Length)
        {
            int j = i + 1;
            while (j < symbols.Length && symbols[j] == symbols[i])
            {
                j++;
            }

            yield return (symbols[i], i, j - i);
            i = j;
        }
    }
}
