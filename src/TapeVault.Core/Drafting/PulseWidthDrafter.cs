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

    /// <summary>How far (as a log ratio, about 8 %) a cycle may lie from its class's centre to count as close to it.</summary>
    private const double CloseRatio = 0.077;

    /// <summary>What each main class costs a setting's fit (see <see cref="Draft"/>).</summary>
    private const double ClassCost = 0.03;

    /// <summary>
    /// The share of cycles a class holds to cost a setting's fit: a rare group (a sync pulse once a block, a few
    /// noise or dropout edges) is no sign of a setting that measures between the classes, and a setting that times
    /// the format's edges sees more such groups, not fewer, since it resolves the sync pulse and the noise apart.
    /// </summary>
    private const double MainClassShare = 0.01;

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

        // Whole cycles through each setting that counts one edge a cycle. Two measures of fit: the share of cycles
        // in a group, and the share close to their group's centre less a little for each group (a setting that
        // measures from the other edge than the format's reads a pair of unequal classes as in-between lengths,
        // which wide groups still hold but loosely, and which make tight groups of their own). The best by each is
        // drafted, then the next; the first reading a check value proves wins, else the first reading.
        var fits = new List<(DetectorSetting Setting, List<IntervalCluster> Clusters, double[] Cycles, int[] Symbols, double Grouped, double Close)>();
        foreach (var setting in DetectorBanks.Default.Where(s => s.Edges != EdgeSelection.Both))
        {
            var cycles = IntervalClusters.Intervals(stretch.Edges(setting, cancellation), stretch.SampleRate);
            var clusters = Separate(IntervalClusters.Find(cycles, RareClassShare));
            if (clusters.Count < 2)
            {
                continue;
            }

            var symbols = IntervalClusters.Classify(cycles, clusters);
            int close = 0;
            for (int i = 0; i < symbols.Length; i++)
            {
                close += symbols[i] >= 0 && Math.Abs(Math.Log(cycles[i] / clusters[symbols[i]].Seconds)) < CloseRatio ? 1 : 0;
            }

            double grouped = (double)symbols.Count(x => x >= 0) / Math.Max(1, symbols.Length);
            fits.Add((setting, clusters, cycles, symbols, grouped, Fit(close, symbols.Length, clusters)));
        }

        var order = new List<int>();
        foreach (var ranked in new[] { fits.Select((f, i) => (f.Grouped, i)).OrderByDescending(x => x.Grouped), fits.Select((f, i) => (f.Close, i)).OrderByDescending(x => x.Close) })
        {
            foreach (var (_, i) in ranked.Take(2))
            {
                if (!order.Contains(i))
                {
                    order.Add(i);
                }
            }
        }

        // A proven reading whose check fails on some blocks may come from a setting that reads the sync's neighbours
        // unevenly (the lead-in's last cycle before a long sync pulse read now as a bit, now as the lead-in): the
        // next settings are drafted too, and the proven reading whose check holds on the most of its blocks wins.
        FamilyProposal? first = null;
        FamilyProposal? proven = null;
        foreach (int i in order.Take(3))
        {
            var lengths = Uncrowded(fits[i].Clusters, fits.Select(f => f.Clusters));
            var proposal = DraftThrough(fits[i].Setting, fits[i].Clusters, lengths, fits[i].Cycles, fits[i].Symbols, fits[i].Grouped, cancellation);
            if (proposal is not null && Proven(proposal) && HoldingShare(proposal) > HoldingShare(proven))
            {
                proven = proposal;
                if (HoldingShare(proven) >= WholeHolding)
                {
                    return proven;
                }
            }

            first ??= proposal;
        }

        return proven ?? first;
    }

    /// <summary>The share of a proven reading's blocks its check holds on below which the next settings are drafted too.</summary>
    private const double WholeHolding = 0.9;

    /// <summary>The share of the blocks read that a proposal's check holds on (zero where there is none).</summary>
    private static double HoldingShare(FamilyProposal? proposal) =>
        proposal?.Layout is { HasChecksum: true, BlocksTried: > 0 } layout ? (double)layout.BlocksHolding / layout.BlocksTried : 0;

    /// <summary>
    /// How closely a setting's cycles keep to their classes: the share within <see cref="CloseRatio"/> of their
    /// class's centre, less <see cref="ClassCost"/> for each main class (<see cref="MainClassShare"/>).
    /// </summary>
    internal static double Fit(int close, int cycles, IReadOnlyList<IntervalCluster> clusters) =>
        ((double)close / Math.Max(1, cycles)) - (ClassCost * clusters.Count(c => c.Share >= MainClassShare));

    /// <summary>A reading a check value proves (its checksum measured, not guessed).</summary>
    private static bool Proven(FamilyProposal proposal) => proposal.Findings.Any(f => f.Path == "layout.checksum" && !f.Guessed);

    /// <summary>
    /// The classes' lengths from the setting that reads them farthest apart. Neighbouring transitions crowd one
    /// another's read-back pulses (pulse crowding, or peak shift: Mee and Daniel, <i>Magnetic Recording Technology</i>),
    /// so a setting that times cycles by the pulses' peaks reads a short cycle beside a long one longer and the long one
    /// shorter, and a setting timing from the other edge than the format's reads in-between lengths: both pull the two
    /// bit classes together, never apart. A tape-speed error moves every class alike and leaves their ratio. So where
    /// other settings find the same classes (each within 15 %), the one whose two commonest classes lie farthest apart
    /// gives the lengths; the reading itself (which pulse is which class) stays the given setting's. Lengths pulled
    /// together put the boundary between the bit classes off centre, and on a capture whose cycles the deck's
    /// equalisation times truly a profile with such lengths misreads every block (a 1.48 : 1 pair for 1.63 : 1).
    /// </summary>
    internal static List<IntervalCluster> Uncrowded(List<IntervalCluster> found, IEnumerable<List<IntervalCluster>> others)
    {
        if (found.Count < 2)
        {
            return found;
        }

        var common = Enumerable.Range(0, found.Count).OrderByDescending(c => found[c].Count).Take(2).Order().ToArray();
        double Spread(IReadOnlyList<double> lengths) => Math.Log(lengths[common[1]] / lengths[common[0]]);
        var best = found.Select(c => c.Seconds).ToArray();
        double widest = Spread(best);
        foreach (var other in others)
        {
            // Every class of the reading has one of the other setting's within 15 % (rare classes may be missing
            // there: they keep their own length), the commonest two included.
            var matched = new double[found.Count];
            bool all = true;
            for (int c = 0; c < found.Count; c++)
            {
                var near = other.Where(o => Math.Abs(Math.Log(o.Seconds / found[c].Seconds)) < IntervalClusters.Reach).OrderBy(o => Math.Abs(Math.Log(o.Seconds / found[c].Seconds))).FirstOrDefault();
                if (near is null)
                {
                    all &= !common.Contains(c);
                    matched[c] = found[c].Seconds;
                    continue;
                }

                matched[c] = near.Seconds;
            }

            // The lengths must still make a profile: neighbouring classes 25 % apart at least (as Separate keeps them).
            if (!all || matched.Zip(matched.Skip(1)).Any(p => p.Second < p.First * 1.25))
            {
                continue;
            }

            if (Spread(matched) > widest + 1e-9)
            {
                widest = Spread(matched);
                best = matched;
            }
        }

        return [.. found.Select((c, i) => c with { Seconds = best[i] })];
    }

    private static FamilyProposal? DraftThrough(DetectorSetting setting, List<IntervalCluster> classesFound, List<IntervalCluster> lengths, double[] cycles, int[] sym, double grouped, CancellationToken cancellation, bool syncClassAdded = false, bool narrowed = false)
    {
        // The lead-in: the class of the long runs.
        var longRuns = Runs(sym).Where(r => r.Class >= 0 && r.Length >= LeastLeadInCycles).ToList();
        if (longRuns.Count == 0)
        {
            return null;
        }

        int leadIn = longRuns.GroupBy(r => r.Class).OrderByDescending(g => g.Sum(r => r.Length)).First().Key;
        var leadRuns = longRuns.Where(r => r.Class == leadIn).ToList();
        double median = leadRuns.Select(r => (double)r.Length).Order().ElementAt(leadRuns.Count / 2);
        // Where blocks follow one another after short gaps, most long runs may be gaps (their median one too): a
        // lead-in is also a tenth of the longest run at least.
        int threshold = Math.Max(LeastLeadInCycles, (int)Math.Max(0.25 * median, 0.1 * leadRuns.Max(r => r.Length)));
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

        // A run inside a block's header (zero bits in a row) is no gap: GapCuts keeps the runs that begin blocks.
        var judged = gapped ? GapCuts.Judge(sym, cuts, threshold) : [.. cuts.Select(c => (Run: c, Begins: true))];
        cuts = [.. judged.Select(j => j.Run)];

        // Each block: from the end of a lead-in (or gap) to the next one or a loss of signal (four unclassified cycles).
        var blocks = new List<int[]>();
        for (int k = 0; k < cuts.Count; k++)
        {
            if (!judged[k].Begins)
            {
                continue;
            }

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

        // A sync pulse comes once a block, right after its lead-in: too rare for a group of its own (a few cycles in
        // ten thousand), so every block would begin with a cycle in no class and no sync would be found. Where most
        // lead-ins are followed by such a cycle, and those cycles are alike, they are a class of their own.
        if (!syncClassAdded && SyncClassAfterLeadIns(cycles, sym, leadRuns, classesFound) is { } syncClass)
        {
            var withSync = classesFound.Append(syncClass).OrderBy(c => c.Seconds).ToList();
            var lengthsWithSync = lengths.Append(syncClass).OrderBy(c => c.Seconds).ToList();
            var resymbolled = IntervalClusters.Classify(cycles, withSync);
            var withClass = DraftThrough(setting, withSync, lengthsWithSync, cycles, resymbolled, grouped, cancellation, syncClassAdded: true, narrowed);
            if (withClass is not null && Proven(withClass))
            {
                return withClass;
            }

            var without = DraftThrough(setting, classesFound, lengths, cycles, sym, grouped, cancellation, syncClassAdded: true, narrowed);
            return without is not null && Proven(without) ? without : withClass ?? without;
        }

        // Bits as pairs of pulses with a marker before every byte: a structure of its own, read by PulsePairs.
        if (!gapped && PulsePairs.Read(blocks, classesFound.Count, leadIn, cancellation) is { } pairs)
        {
            return ProposePairs(pairs, setting, grouped, classesFound, LeadInLength(cycles, leadRuns), leadIn, leadRuns, blocks.Count);
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

        // The lead-in's last cycle, lengthened by the long sync pulse after it, may read as a class of its own that
        // every block begins with: it is the lead-in's, and the read path, which times that cycle otherwise, finds
        // no sync that begins with it.
        int stretched = StretchedLeadInCycles(reading.Sync, leadIn, reading.Mapping, classesFound);
        string stretchedEvidence = stretched == 0 ? string.Empty
            : $"; the {Us(classesFound[reading.Sync[0]].Seconds)} µs cycle every block begins with is the lead-in's last cycle ({Us(classesFound[leadIn].Seconds)} µs) lengthened by the sync pulse after it (no class lies between them, no bit uses it): left out of the sync";
        reading = reading with { Sync = reading.Sync[stretched..] };

        // Likewise a bit right after a long sync pulse reads longer, as a rare class of its own that only the sync
        // uses: it is that bit's class, so that the sync's bits after the pulse are bits (and a header byte the sync
        // took is whole frames of them) and the read path, which times it as the bit, finds the sync.
        var unstretched = BitsReadLongInSync(reading.Sync, reading.Mapping, classesFound);
        if (reading.Layout.HasChecksum && !unstretched.SequenceEqual(reading.Sync))
        {
            stretchedEvidence += $"; a {string.Join(", ", reading.Sync.Where((c, i) => unstretched[i] != c).Select(c => $"{Us(classesFound[c].Seconds)} µs"))} cycle after the sync's longer pulse is the bit class just below it read long (no bit uses it): drafted as that bit";
            reading = reading with { Sync = unstretched };
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

        // The read path reads with the classes the profile writes, its boundaries at the geometric means of neighbours
        // (PulseClassifier): a class left out moves its neighbour's boundary. A rare group far above the others (the
        // mains hum's cycles in the silence between blocks, 16.7 ms) stretches the longest class's reach to their
        // geometric mean, so a sync pulse twice a bit's length reads as a bit class here and as no class on the read
        // path, which then finds no sync. Where the classes kept read any cycle otherwise, the cycles are read again
        // with those classes alone, and that reading is drafted where a check proves it.
        if (!narrowed && dropped.Count > 0)
        {
            var keptClasses = kept.Select(i => classesFound[i]).ToList();
            var again = IntervalClusters.Classify(cycles, keptClasses);
            if (ReadsOtherwise(sym, again, kept))
            {
                var reread = DraftThrough(setting, keptClasses, [.. kept.Select(i => lengths[i])], cycles, again, grouped, cancellation, syncClassAdded: false, narrowed: true);
                if (reread is not null && Proven(reread))
                {
                    return reread;
                }
            }
        }
        var proposal = new FamilyProposal();
        bool proven = reading.Layout.HasChecksum;
        int shortestLeadIn = leadRuns.Min(r => r.Length);
        int minimum = Math.Clamp((int)(0.25 * shortestLeadIn), 8, MostLeadIn);
        var sync = reading.Sync.Select(s => names[s]).ToList();
        var read = kept.Select(i => lengths[i].Seconds).ToList();
        var written = LeadInAnchored(read, kept.IndexOf(leadIn), LeadInLength(cycles, leadRuns));
        proposal.Sections["pulseWidth"] = new JsonObject
        {
            ["classes"] = new JsonArray([.. kept.Select((i, at) => (JsonNode)new JsonObject { ["name"] = names[i], ["microseconds"] = Math.Round(written[at] * 1e6, 1) })]),
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

        // Groups no check proves are no more than groups: crowded pulses of one class read as two, or noise's edges as
        // a class, are told from the format's classes only by a reading that holds.
        proposal.Measured("pulseWidth.classes", string.Join(", ", kept.Select((i, at) => $"{names[i]} {Us(written[at])} µs")), proven ? 0.9 : 0.5,
            (proven ? string.Empty : "no check value proves which groups are the format's classes; ") + $"groups of cycle lengths through setting {setting.Name}: {string.Join(", ", classesFound.Select(c => $"{Us(c.Seconds)} µs ({F(100 * c.Share, "0.0")} %)"))}; {F(100 * grouped, "0.0")} % of cycles fall in one; lengths as the tape plays (a tape off speed moves them all alike)"
            + (dropped.Count == 0 ? string.Empty : $"; left out, as no bit, lead-in or sync uses them: {string.Join(", ", dropped.Select(c => $"{Us(c.Seconds)} µs"))}")
            + (lengths.SequenceEqual(classesFound) ? string.Empty : $"; lengths from the setting that reads the bit classes farthest apart (neighbouring pulses crowd one another: {string.Join(", ", kept.Select(i => $"{Us(classesFound[i].Seconds)} → {Us(lengths[i].Seconds)} µs"))})")
            + Anchoring(read, written));
        proposal.Measured("pulseWidth.leadIn.class", names[leadIn], 0.9, $"{leadRuns.Count} runs of {shortestLeadIn}–{leadRuns.Max(r => r.Length)} {names[leadIn]} cycles");
        proposal.Measured("pulseWidth.leadIn.minimumCount", F(minimum), 0.85, $"a quarter (at most {MostLeadIn}) of the shortest lead-in seen ({shortestLeadIn} cycles)");
        string bitEvidence = proven ? "the check value holds with this mapping" : $"{names[bitClasses[0]]} and {names[bitClasses[1]]} are the commonest classes inside blocks; which is 0 is not proven (drafted: {reading.Mapping.Name})";
        proposal.Measured("pulseWidth.zero", names[reading.Mapping.ZeroSymbol], proven ? 0.9 : 0.5, bitEvidence);
        proposal.Measured("pulseWidth.one", names[reading.Mapping.OneSymbol], proven ? 0.9 : 0.5, bitEvidence);
        proposal.Measured("pulseWidth.sync", string.Join(" ", sync), proven ? 0.9 : 0.4,
            $"{blocks.Count} blocks begin alike for {reading.CommonPrefix} cycles after their lead-in; " + (proven ? "the check value holds when bytes start after this sync" : "the shortest sync whose framing holds is drafted") + stretchedEvidence);
        Framing(proposal, reading.Framing, proven, reading.FramingShare, proven && !reading.OrderAmbiguous, OrderEvidence(reading));
        Layout(proposal, reading.Layout);
        AmbiguousOrder(proposal, reading);
        AbsorbedSync(proposal, reading, "pulseWidth.sync");
        AmbiguousMapping(proposal, reading);
        if (gapped || reading.Sync.Length >= 5)
        {
            SyncAsBytes(proposal, reading, leadIn);
        }
        proposal.Notes.Add($"Read through detector setting {setting.Name}: {blocks.Count} blocks after lead-ins; {reading.Candidates} readings of sync, mapping and framing held.");
        return proposal;
    }

    /// <summary>
    /// Whether the classes kept (<paramref name="kept"/>, indices into the classes <paramref name="before"/> was read
    /// with) read any cycle otherwise than <paramref name="before"/> did: a cycle of a kept class in another class or
    /// in none, or a cycle of a class left out (or of none) in a kept class.
    /// </summary>
    internal static bool ReadsOtherwise(int[] before, int[] after, IReadOnlyList<int> kept)
    {
        ArgumentNullException.ThrowIfNull(before);
        ArgumentNullException.ThrowIfNull(after);
        ArgumentNullException.ThrowIfNull(kept);
        var to = new Dictionary<int, int>();
        for (int k = 0; k < kept.Count; k++)
        {
            to[kept[k]] = k;
        }

        for (int i = 0; i < before.Length; i++)
        {
            if (after[i] != to.GetValueOrDefault(before[i], -1))
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>
    /// Where a reading with the bits the other way round (and its own sync) holds its check as well as the one drafted,
    /// with as many header fields and as much text (<see cref="SyncReading.MappingAmbiguous"/>), the check does not
    /// tell which class is 0 nor where the sync ends: the mapping and the sync are guesses for the curator to confirm.
    /// </summary>
    private static void AmbiguousMapping(FamilyProposal proposal, SyncReading reading)
    {
        if (!reading.Layout.HasChecksum || !reading.MappingAmbiguous)
        {
            return;
        }

        const string why = "the check holds as well with the bits the other way round (a one-byte XOR over an even count of bytes holds on every byte complemented, and on bits shifted by one where bytes have no start or stop bits), and neither reading has more header fields or more text";
        foreach (string path in new[] { "pulseWidth.zero", "pulseWidth.one", "pulseWidth.sync" })
        {
            int at = proposal.Findings.FindIndex(f => f.Path == path);
            if (at >= 0)
            {
                var f = proposal.Findings[at];
                proposal.Findings[at] = f with { Guessed = true, Confidence = Math.Min(f.Confidence, 0.5), Evidence = f.Evidence + "; but " + why };
            }
        }

        proposal.Notes.Add("Which class is 0 and where the sync ends are not told by the check: " + why + ".");
    }

    /// <summary>
    /// How many of the sync's first cycles are the lead-in's last cycle read long: a cycle before a long pulse reads
    /// longer (neighbouring transitions crowd one another's read-back pulses; from memory: Mee and Daniel, <i>Magnetic Recording
    /// Technology</i>), so a setting may time the lead-in's last cycle as a group of its own just above the lead-in
    /// class, which every block then begins with. Such a cycle is in the sync only where it is the class next above the
    /// lead-in's, within <see cref="StretchedLeadIn"/> of it, no bit and nothing later in the sync uses it, and a
    /// cycle of the sync is left after it.
    /// </summary>
    internal static int StretchedLeadInCycles(IReadOnlyList<int> sync, int leadIn, BitMapping mapping, IReadOnlyList<IntervalCluster> classes)
    {
        ArgumentNullException.ThrowIfNull(sync);
        ArgumentNullException.ThrowIfNull(mapping);
        ArgumentNullException.ThrowIfNull(classes);
        double lead = classes[leadIn].Seconds;
        int n = 0;
        while (n < sync.Count - 1)
        {
            int c = sync[n];
            double length = classes[c].Seconds;
            bool nextAbove = classes.All(k => k.Seconds <= lead || k.Seconds >= length);
            if (c == leadIn || mapping.Bit(c) >= 0 || sync.Skip(n + 1).Contains(c) || length <= lead || length > StretchedLeadIn * lead || !nextAbove)
            {
                break;
            }

            n++;
        }

        return n;
    }

    /// <summary>
    /// The sync with each cycle that is a bit read long after a longer pulse given its bit's class: a cycle after a long
    /// pulse reads longer (neighbouring transitions crowd one another's read-back pulses; from memory: Mee and Daniel,
    /// <i>Magnetic Recording Technology</i>), so a setting may time a sync's first bit after its long pulse as a group
    /// of its own just above the bit's class. Such a cycle is that class's where its class is no bit and no lead-in,
    /// comes once in the sync, follows a longer cycle of the sync, and lies within <see cref="StretchedLeadIn"/> of the
    /// bit class next below it.
    /// </summary>
    internal static int[] BitsReadLongInSync(IReadOnlyList<int> sync, BitMapping mapping, IReadOnlyList<IntervalCluster> classes)
    {
        ArgumentNullException.ThrowIfNull(sync);
        ArgumentNullException.ThrowIfNull(mapping);
        ArgumentNullException.ThrowIfNull(classes);
        var result = sync.ToArray();
        for (int p = 1; p < result.Length; p++)
        {
            int c = sync[p];
            if (c <= 0 || mapping.Bit(c) >= 0 || sync.Count(x => x == c) != 1 || sync[p - 1] < 0 || classes[sync[p - 1]].Seconds <= classes[c].Seconds)
            {
                continue;
            }

            // Classes are shortest first: the one next below is the bit the cycle would be.
            int below = c - 1;
            if (mapping.Bit(below) >= 0 && classes[c].Seconds <= StretchedLeadIn * classes[below].Seconds)
            {
                result[p] = below;
            }
        }

        return result;
    }

    /// <summary>How much longer than a lead-in cycle (as a ratio) its last one may read before a long sync pulse.</summary>
    private const double StretchedLeadIn = 1.4;

    /// <summary>
    /// Plain bytes (no start, stop or parity bits) after a sync whose pulses are bits, where the lead-in's pulses
    /// are bits too: the sync is whole bytes whose first bits the lead-in took (a sync byte that begins with the
    /// lead-in's bits), so it is written as a sync field of those bytes, which the reader searches for bit by bit,
    /// lead-in bits included, and which is then part of each block as written. Done where the sync is long (five
    /// pulses or more) or blocks follow one another after short gaps (where formats write a sync byte); a sync of a
    /// few pulses after a lead-in stays a class sequence.
    /// </summary>
    private static void SyncAsBytes(FamilyProposal proposal, SyncReading reading, int leadIn)
    {
        var framing = reading.Framing;
        int leadBit = reading.Mapping.Bit(leadIn);
        if (!reading.Layout.HasChecksum || framing.BitsPerByte != framing.DataBits || leadBit < 0 || reading.Sync.Length == 0
            || reading.Sync.Any(x => reading.Mapping.Bit(x) < 0)
            || proposal.Sections["layout"] is not JsonObject layout || layout["header"] is not JsonArray header || layout["checksum"] is not JsonObject checksum)
        {
            return;
        }

        int count = (reading.Sync.Length + framing.DataBits - 1) / framing.DataBits;
        int pad = (count * framing.DataBits) - reading.Sync.Length;
        var bits = Enumerable.Repeat(leadBit, pad).Concat(reading.Sync.Select(reading.Mapping.Bit)).ToArray();
        var bytes = new List<byte>();
        for (int b = 0; b < count; b++)
        {
            int value = 0;
            for (int d = 0; d < framing.DataBits; d++)
            {
                value |= bits[(b * framing.DataBits) + d] << framing.DataBitShift(d);
            }

            bytes.Add((byte)value);
        }

        // A sync field already there (constant bytes ahead of the check) follows these bytes in one field.
        string? existing = null;
        if (header.Count > 0 && header[0]?["role"]?.GetValue<string>() == "sync")
        {
            existing = header[0]!["expect"]![0]!.GetValue<string>();
            header.RemoveAt(0);
        }

        var all = string.Join(' ', bytes.Select(x => x.ToString("X2", System.Globalization.CultureInfo.InvariantCulture)));
        all = existing is null ? all : all + " " + existing;
        int length = all.Split(' ').Length;
        if (length > 16 || (length > 1 && all.Split(' ').Distinct().Count() == 1))
        {
            return;
        }

        // The check's coverage leaves the sync out: name the fields it covers.
        if (checksum["covers"] is JsonValue covers && covers.GetValue<string>() == "header-and-payload")
        {
            var names = new JsonArray();
            foreach (var field in header)
            {
                names.Add(field!["name"]!.GetValue<string>());
            }

            names.Add("payload");
            checksum["covers"] = names;
        }

        header.Insert(0, new JsonObject { ["name"] = "sync", ["bytes"] = length, ["role"] = "sync", ["expect"] = new JsonArray(all) });
        ((JsonObject)proposal.Sections["pulseWidth"]!).Remove("sync");
        int at = proposal.Findings.FindIndex(f => f.Path == "pulseWidth.sync");
        if (at >= 0)
        {
            var f = proposal.Findings[at];
            proposal.Findings[at] = f with { Value = $"written as the sync field {all}", Evidence = f.Evidence + $"; with {pad} bits of the lead-in before it the sync is {length} whole byte(s), {all}, written as the layout's sync field" };
        }
    }

    /// <summary>The sections and findings of a reading of pulse pairs with byte markers (<see cref="PulsePairs"/>).</summary>
    private static FamilyProposal ProposePairs(PairReading r, DetectorSetting setting, double grouped, List<IntervalCluster> classesFound, double leadInSeconds, int leadIn, List<(int Class, int Start, int Length)> leadRuns, int blockCount)
    {
        var used = new SortedSet<int> { leadIn, r.Marker, r.MarkerSecond, r.Zero.First, r.Zero.Second, r.One.First, r.One.Second };
        if (r.EndSecond is { } e)
        {
            used.Add(e);
        }

        var kept = used.ToList();
        var keptNames = kept.Count < ClassNames.Length ? ClassNames[kept.Count] : [.. Enumerable.Range(1, kept.Count).Select(i => $"class-{i}")];
        string Name(int c) => keptNames[kept.IndexOf(c)];
        var written = LeadInAnchored([.. kept.Select(i => classesFound[i].Seconds)], kept.IndexOf(leadIn), leadInSeconds);
        JsonArray Sequence(params int[] classes) => new([.. classes.Select(c => (JsonNode)JsonValue.Create(Name(c))!)]);

        // The layout the kinds search found, so that the check's proof is weighed as for any other reading.
        var proposal = new FamilyProposal { Layout = r.Kinds.Layout };
        int shortestLeadIn = leadRuns.Min(x => x.Length);
        int minimum = Math.Clamp((int)(0.25 * shortestLeadIn), 8, MostLeadIn);
        var markers = new JsonObject { ["beforeByte"] = Sequence(r.Marker, r.MarkerSecond) };
        if (r.EndSecond is { } end)
        {
            markers["endOfBlock"] = Sequence(r.Marker, end);
        }

        proposal.Sections["pulseWidth"] = new JsonObject
        {
            ["classes"] = new JsonArray([.. kept.Select((i, at) => (JsonNode)new JsonObject { ["name"] = Name(i), ["microseconds"] = Math.Round(written[at] * 1e6, 1) })]),
            ["zero"] = Sequence(r.Zero.First, r.Zero.Second),
            ["one"] = Sequence(r.One.First, r.One.Second),
            ["leadIn"] = new JsonObject { ["class"] = Name(leadIn), ["minimumCount"] = minimum },
            ["markers"] = markers,
        };
        string order = r.Order == BitOrder.LsbFirst ? "lsb-first" : "msb-first";
        string parity = r.Parity.ToString().ToLowerInvariant();
        proposal.Sections["framing"] = new JsonObject { ["dataBits"] = r.DataBits, ["bitOrder"] = order, ["startBits"] = string.Empty, ["stopBits"] = string.Empty, ["parity"] = parity };

        var k = r.Kinds;
        var sync = new JsonObject
        {
            ["name"] = "sync",
            ["bytes"] = k.SyncBytes,
            ["role"] = "sync",
            ["expect"] = new JsonArray([.. k.SyncPerCopy.Select(v => (JsonNode)JsonValue.Create(BlockKindSearch.Hex(v))!)]),
        };
        var header = new JsonArray(sync.DeepClone());
        var covered = new JsonArray();
        var fields = new List<(int Offset, int Bytes, JsonObject Node)>();
        var length = k.Length;
        if (length.IsAddressPair)
        {
            fields.Add((length.Offset, 2, new JsonObject { ["name"] = "start", ["bytes"] = 2, ["endian"] = length.BigEndian ? "big" : "little" }));
            fields.Add((length.EndOffset!.Value, 2, new JsonObject { ["name"] = "end", ["bytes"] = 2, ["endian"] = length.BigEndian ? "big" : "little" }));
        }
        else
        {
            var node = new JsonObject { ["name"] = "length", ["bytes"] = length.Bytes };
            if (length.Bytes > 1)
            {
                node["endian"] = length.BigEndian ? "big" : "little";
            }

            fields.Add((length.Offset, length.Bytes, node));
        }

        if (k.Name is { } nameField)
        {
            fields.Add((nameField.Offset, nameField.Bytes, new JsonObject { ["name"] = "name", ["bytes"] = nameField.Bytes, ["role"] = "file-name" }));
        }

        int at = 0;
        foreach (var (offset, bytes, node) in fields.OrderBy(f => f.Offset))
        {
            if (offset > at)
            {
                header.Add(new JsonObject { ["name"] = $"field-{at}", ["bytes"] = offset - at });
                covered.Add($"field-{at}");
            }

            header.Add(node);
            covered.Add(node["name"]!.GetValue<string>());
            at = offset + bytes;
        }

        if (k.HeaderBodyBytes > at)
        {
            header.Add(new JsonObject { ["name"] = $"field-{at}", ["bytes"] = k.HeaderBodyBytes - at });
            covered.Add($"field-{at}");
        }

        string endian = k.ChecksumBigEndian ? "big" : "little";
        var payloadLength = length.IsAddressPair
            ? new JsonObject { ["kind"] = "header", ["start"] = "start", ["end"] = "end", ["endIs"] = length.InclusiveEnd ? "inclusive" : "exclusive" }
            : new JsonObject { ["kind"] = "header", ["field"] = "length" };
        proposal.Sections["layout"] = new JsonObject
        {
            ["copies"] = k.Copies,
            ["kinds"] = new JsonArray(
                new JsonObject
                {
                    ["name"] = "header",
                    ["header"] = header,
                    ["payloadBytes"] = 0,
                    ["checksum"] = new JsonObject { ["algorithm"] = k.Checksum.Name, ["covers"] = covered, ["endian"] = endian },
                },
                new JsonObject
                {
                    ["name"] = "data",
                    ["header"] = new JsonArray(sync.DeepClone()),
                    ["payloadLength"] = payloadLength,
                    ["maximumPayloadBytes"] = 65536,
                    ["checksum"] = new JsonObject { ["algorithm"] = k.Checksum.Name, ["covers"] = new JsonArray("payload"), ["endian"] = endian },
                }),
        };

        string held = $"holds after the sync on {k.BlocksHolding} of {k.BlocksTried} blocks read";
        proposal.Measured("pulseWidth.classes", string.Join(", ", kept.Select((i, at) => $"{Name(i)} {Us(written[at])} µs")), 0.9,
            $"groups of cycle lengths through setting {setting.Name}: {string.Join(", ", classesFound.Select(c => $"{Us(c.Seconds)} µs ({F(100 * c.Share, "0.0")} %)"))}; {F(100 * grouped, "0.0")} % of cycles fall in one; lengths as the tape plays"
            + Anchoring([.. kept.Select(i => classesFound[i].Seconds)], written));
        proposal.Measured("pulseWidth.leadIn.class", Name(leadIn), 0.9, $"{leadRuns.Count} runs of {shortestLeadIn}–{leadRuns.Max(x => x.Length)} {Name(leadIn)} cycles");
        proposal.Measured("pulseWidth.leadIn.minimumCount", F(minimum), 0.85, $"a quarter (at most {MostLeadIn}) of the shortest lead-in seen ({shortestLeadIn} cycles)");
        proposal.Measured("pulseWidth.markers.beforeByte", $"{Name(r.Marker)} {Name(r.MarkerSecond)}", 0.9,
            $"{Name(r.Marker)} comes every {2 + (2 * r.FrameBits)} pulses in {F(100 * r.MarkerShare, "0")} % of its places, {Name(r.MarkerSecond)} after it: a marker pair before each of {r.Frames} frames of {r.FrameBits} bit pairs");
        if (r.EndSecond is { } endClass)
        {
            proposal.Measured("pulseWidth.markers.endOfBlock", $"{Name(r.Marker)} {Name(endClass)}", 0.85, $"after the last marker of most blocks {Name(endClass)} follows instead of {Name(r.MarkerSecond)}");
        }

        string bitEvidence = $"{F(100 * r.PairShare, "0.0")} % of the pairs in frames are {Name(r.Zero.First)} {Name(r.Zero.Second)} or {Name(r.One.First)} {Name(r.One.Second)}; "
            + (r.Told ? "this way round the check holds and the header's text reads (the other way complements every byte)" : "which is 0 is not told by the check or by text");
        proposal.Measured("pulseWidth.zero", $"{Name(r.Zero.First)} {Name(r.Zero.Second)}", r.Told ? 0.9 : 0.5, bitEvidence);
        proposal.Measured("pulseWidth.one", $"{Name(r.One.First)} {Name(r.One.Second)}", r.Told ? 0.9 : 0.5, bitEvidence);
        proposal.Measured("framing.parity", parity, r.Parity == Parity.None ? 0.6 : 0.9, $"{F(100 * r.ParityShare, "0.0")} % of frames of {r.FrameBits} bits have {(r.Parity == Parity.Even ? "an even" : "an odd")} number of ones");
        proposal.Measured("framing.dataBits", F(r.DataBits), 0.9, $"{r.FrameBits} bit pairs between markers" + (r.Parity == Parity.None ? string.Empty : ", the last a parity bit"));
        proposal.Measured("framing.startBits", "''", 0.9, "the marker pair frames each byte; no start or stop bits are left over between markers");
        proposal.Measured("framing.stopBits", "''", 0.9, "as for the start bits");
        proposal.Measured("framing.bitOrder", order, r.Told ? 0.85 : 0.5, r.Told ? "the header's text reads in this order (an XOR holds in both)" : "no text tells the order, and an XOR holds in both");
        proposal.Measured("layout.checksum", $"{k.Checksum.Name}, {endian}-endian, over what follows the sync", 0.97, held);
        proposal.Measured("layout.header", $"sync {k.SyncBytes} bytes ({string.Join(" / ", k.SyncPerCopy.Select(BlockKindSearch.Hex))})", 0.9,
            $"every block begins with these bytes{(k.SyncPerCopy.Count > 1 ? ", one value for each copy" : string.Empty)}, and the check holds on what follows");
        proposal.Measured("layout.copies", F(k.Copies), k.CopiesShare >= 0.6 ? 0.9 : 0.6, $"{F(100 * k.CopiesShare, "0")} % of the blocks read come in runs of {k.Copies} alike after the sync"
            + (k.SyncPerCopy.Count > 1 ? " or in part of such a run, each copy with its own sync" : string.Empty));
        proposal.Findings.Add(new DraftFinding("layout.kinds", $"header ({k.HeaderBodyBytes} bytes after the sync), data", k.LengthApproximate, k.LengthApproximate ? 0.5 : 0.85,
            (k.LengthApproximate ? "no data block read held its check, so the length its header gives is matched only to within a few bytes of the damaged blocks read (which field, and whether the end is inclusive, are guesses): " : string.Empty) +
            $"{k.Files} times a block of {k.HeaderBodyBytes + k.Checksum.Width} bytes after the sync is followed by one of another length, which "
            + (length.IsAddressPair ? $"its bytes {length.Offset}–{length.Offset + 3} give as start and {(length.InclusiveEnd ? "inclusive" : "exclusive")} end address, {(length.BigEndian ? "big" : "little")}-endian" : $"its bytes {length.Offset}–{length.Offset + length.Bytes - 1} give as a length")
            + (k.Name is { } n ? $"; bytes {n.Offset}–{n.Offset + n.Bytes - 1} are printable text in every header block (the name)" : string.Empty)
            + "; other header bytes' meaning is not known (written without a role)"));
        proposal.Notes.Add($"Read through detector setting {setting.Name}: {blockCount} blocks after lead-ins, bits as pairs of pulses with a marker before every byte.");
        return proposal;
    }

    /// <summary>
    /// The class of the cycle right after the lead-ins, where it is in none of the classes found: at least six in ten
    /// lead-ins are followed by a cycle in no class, and six in ten by one within the group's reach of their
    /// geometric mean, which lies 25 % or more from every class found (the profile language's rule). Null otherwise.
    /// </summary>
    internal static IntervalCluster? SyncClassAfterLeadIns(double[] cycles, int[] sym, IReadOnlyList<(int Class, int Start, int Length)> leadRuns, IReadOnlyList<IntervalCluster> classes)
    {
        ArgumentNullException.ThrowIfNull(cycles);
        ArgumentNullException.ThrowIfNull(sym);
        ArgumentNullException.ThrowIfNull(leadRuns);
        ArgumentNullException.ThrowIfNull(classes);
        var after = leadRuns.Select(r => r.Start + r.Length).Where(i => i < sym.Length && sym[i] < 0).Select(i => cycles[i]).Order().ToList();
        int least = (int)Math.Ceiling(SyncClassShare * leadRuns.Count);
        if (leadRuns.Count < 2 || after.Count < Math.Max(2, least))
        {
            return null;
        }

        double median = after[after.Count / 2];
        var near = after.Where(x => Math.Abs(Math.Log(x / median)) < Math.Log(1 + IntervalClusters.Reach)).ToList();
        double centre = Math.Exp(near.Average(Math.Log));
        if (near.Count < Math.Max(2, least) || classes.Any(c => Math.Max(c.Seconds, centre) < 1.25 * Math.Min(c.Seconds, centre)))
        {
            return null;
        }

        return new IntervalCluster(centre, (double)near.Count / cycles.Length, near.Count);
    }

    /// <summary>The share of lead-ins a cycle in no class must follow, alike, to be a class (<see cref="SyncClassAfterLeadIns"/>).</summary>
    private const double SyncClassShare = 0.6;

    /// <summary>
    /// The lead-in class's length as its lead-ins play it: the geometric mean of the lead-in runs' cycles, the first
    /// and last few of each (whose neighbours are of other classes) left out. A lead-in's cycles are all alike, so no
    /// neighbour crowds them (see <see cref="Uncrowded"/>); the same class inside blocks reads longer or shorter.
    /// </summary>
    internal static double LeadInLength(double[] cycles, IReadOnlyList<(int Class, int Start, int Length)> leadRuns)
    {
        ArgumentNullException.ThrowIfNull(cycles);
        ArgumentNullException.ThrowIfNull(leadRuns);
        double logSum = 0;
        long count = 0;
        foreach (var run in leadRuns)
        {
            for (int i = run.Start + LeadInEdgeCycles; i < run.Start + run.Length - LeadInEdgeCycles; i++)
            {
                logSum += Math.Log(cycles[i]);
                count++;
            }
        }

        return count == 0 ? double.NaN : Math.Exp(logSum / count);
    }

    /// <summary>Cycles at each end of a lead-in run left out of its length.</summary>
    private const int LeadInEdgeCycles = 4;

    /// <summary>
    /// Class lengths for the read path, which sets its speed from the lead-in (its cycles over the lead-in class's
    /// length) and puts the boundary between neighbouring classes at their geometric mean (<c>PulseClassifier</c>).
    /// Lengths taken from the blocks' cycles, where pulse crowding moves a class, set the speed from a lead-in class
    /// length the lead-in does not play, and so move every boundary away from where the blocks' cycles put it (three
    /// classes read 306, 413 and 599 µs, the lead-in 291 µs: every boundary 5 % low, and the shorter data cycles read
    /// as the next class). So the lead-in class gets its lead-in's length, and each other class, outwards from it, the
    /// length that keeps its boundary with the class before it where the blocks' groups put it (b² = cᵢ·cᵢ₊₁). Where
    /// that would put two classes under 25 % apart (the profile language's rule) the lengths stay as read.
    /// </summary>
    internal static double[] LeadInAnchored(IReadOnlyList<double> read, int leadIn, double leadInSeconds)
    {
        ArgumentNullException.ThrowIfNull(read);
        var result = read.ToArray();
        if (leadIn < 0 || leadIn >= read.Count || !double.IsFinite(leadInSeconds) || leadInSeconds <= 0)
        {
            return result;
        }

        result[leadIn] = leadInSeconds;
        for (int i = leadIn + 1; i < read.Count; i++)
        {
            result[i] = read[i - 1] * read[i] / result[i - 1];
        }

        for (int i = leadIn - 1; i >= 0; i--)
        {
            result[i] = read[i] * read[i + 1] / result[i + 1];
        }

        for (int i = 1; i < result.Length; i++)
        {
            if (result[i] < result[i - 1] * LeastClassRatio)
            {
                return [.. read];
            }
        }

        return result;
    }

    /// <summary>The profile language's least ratio of neighbouring classes, with room for rounding to 0.1 µs.</summary>
    private const double LeastClassRatio = 1.252;

    private static string Anchoring(IReadOnlyList<double> read, IReadOnlyList<double> written) =>
        read.SequenceEqual(written) ? string.Empty
        : $"; the lead-in class as its lead-ins play it, the others keeping their boundaries with it where the blocks' cycles put them: {string.Join(", ", read.Select((r, i) => $"{Us(r)} → {Us(written[i])} µs"))}";

    /// <summary>Neighbouring classes closer than the profile language allows (25 %) are one class: the larger keeps its place.</summary>
    private static List<IntervalCluster> Separate(List<IntervalCluster> clusters)
    {
        var result = new List<IntervalCluster>();
        foreach (var cluster in clusters)
        {
            if (result.Count > 0 && cluster.Seconds < result[^1].Seconds * 1.25)
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
