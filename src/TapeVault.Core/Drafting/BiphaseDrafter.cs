using System.Runtime.CompilerServices;
using System.Text.Json.Nodes;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;
using static TapeVault.Core.Drafting.CommonSections;

namespace TapeVault.Core.Drafting;

/// <summary>
/// Biphase (Manchester): intervals are half a cell or a whole one. Halves come in pairs (two make a cell with a
/// boundary transition), wholes come alone (a change of bit), so the whole group has odd runs where no other family
/// has. A lead-in of zeros is a long run of halves; the first whole after it ends on the mid-cell transition of the
/// first 1, from where each whole flips the bit and each pair of halves repeats it. A preamble of alternating bits is
/// a long run of wholes; the first pair of halves after it repeats the preamble's last bit, whose value only a check
/// value tells (both readings are searched).
/// </summary>
public sealed class BiphaseDrafter : IFamilyDrafter
{
    /// <summary>Half cells in a run that may be a lead-in (32 bits of zeros).</summary>
    public const int LeastLeadInHalves = 64;

    public string Family => "biphase";

    public FamilyScore Score(StretchSurvey survey)
    {
        ArgumentNullException.ThrowIfNull(survey);
        survey = Evened(survey);
        if (Pair(survey) is not var (half, whole))
        {
            return new FamilyScore(Family, 0, "no two main groups of intervals one twice the other");
        }

        // Runs counted through the draft's own halves and wholes (not the survey's groups, where an interval left
        // in a small group of its own breaks a run of halves in two odd ones), and by their oddness alone: halves
        // come in pairs, in runs of 2, 4, 6..., whose commonest length a count that weighs neighbouring lengths
        // together takes for 3.
        var kind = Kinds(survey, half, whole);
        var (halfOdd, wholeOdd) = (OddShare(kind, 0), OddShare(kind, 1));
        bool fits = halfOdd < 0.25 && wholeOdd >= 0.35 && BlockRunMean(survey, whole) < 3;
        double score = fits ? 0.9 * survey.GroupedShare : 0.1;
        return new FamilyScore(Family, score, $"halves at {Us(survey.Clusters[half].Seconds)} µs come in odd runs in {F(100 * halfOdd, "0")} % of runs; wholes at {Us(survey.Clusters[whole].Seconds)} µs in {F(100 * wholeOdd, "0")} %");
    }

    /// <summary>Each interval as the read path's classifier takes it: a half (0), a whole (1), or neither (−1), with its acceptance limits.</summary>
    private static int[] Kinds(StretchSurvey survey, int half, int whole)
    {
        var classifier = new PulseClassifier([Cell(survey, half, whole) / 2, Cell(survey, half, whole)], outerRatio: 1.45);
        var intervals = survey.Intervals;
        var kind = new int[intervals.Length];
        for (int i = 0; i < kind.Length; i++)
        {
            kind[i] = classifier.ClassOf(intervals[i], 1);
        }

        return kind;
    }

    /// <summary>The cell: the geometric mean of two halves and a whole.</summary>
    private static double Cell(StretchSurvey survey, int half, int whole) => Math.Sqrt(2 * survey.Clusters[half].Seconds * survey.Clusters[whole].Seconds);

    /// <summary>The share of odd runs of a kind among its runs between two classified intervals of the other kind, lead-ins left out.</summary>
    private static double OddShare(int[] kind, int of)
    {
        int runs = 0;
        int odd = 0;
        for (int i = 0; i < kind.Length;)
        {
            int j = i;
            while (j < kind.Length && kind[j] == kind[i])
            {
                j++;
            }

            if (kind[i] == of && i > 0 && j < kind.Length && kind[i - 1] == 1 - of && kind[j] == 1 - of && j - i < LeastLeadInHalves / 2)
            {
                runs++;
                odd += (j - i) % 2;
            }

            i = j;
        }

        return runs == 0 ? 0 : (double)odd / runs;
    }

    /// <summary>
    /// The mean length of a group's runs shorter than a preamble of alternating bits: such a preamble is one long run
    /// of wholes before every block, which would lift the mean of the wholes' runs past what the blocks' bits make.
    /// </summary>
    internal static double BlockRunMean(StretchSurvey survey, int group) =>
        survey.AllRuns().Where(r => r.Class == group && r.Length < LeastLeadInHalves / 2).Select(r => (double)r.Length).DefaultIfEmpty(0).Average();

    private static (int Half, int Whole)? Pair(StretchSurvey survey)
    {
        var top = survey.Dominant.Take(2).ToList();
        if (top.Count < 2 || survey.Clusters[top[1]].Share < 0.05)
        {
            return null;
        }

        int half = Math.Min(top[0], top[1]);
        int whole = Math.Max(top[0], top[1]);
        double ratio = survey.Clusters[whole].Seconds / survey.Clusters[half].Seconds;
        return ratio is > 1.7 and < 2.3 ? (half, whole) : null;
    }

    public FamilyProposal? Draft(StretchSurvey survey, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(survey);
        survey = Evened(survey);
        if (Pair(survey) is not var (halfGroup, wholeGroup))
        {
            return null;
        }

        double cell = Cell(survey, halfGroup, wholeGroup);
        var kind = Kinds(survey, halfGroup, wholeGroup);

        // A lead-in of equal bits is a long run of halves; a preamble of alternating bits a long run of wholes.
        var halfRuns = LongRuns(kind, 0, LeastLeadInHalves);
        var wholeRuns = LongRuns(kind, 1, LeastLeadInHalves / 2);
        bool alternating = wholeRuns.Sum(r => 2L * r.Length) > halfRuns.Sum(r => (long)r.Length);
        var leadRuns = alternating ? wholeRuns : halfRuns;
        if (leadRuns.Count == 0)
        {
            return null;
        }

        double median = leadRuns.Select(r => (double)r.Length).Order().ElementAt(leadRuns.Count / 2);
        int least = alternating ? LeastLeadInHalves / 2 : LeastLeadInHalves;
        leadRuns = [.. leadRuns.Where(r => r.Length >= Math.Max(least, 0.3 * median))];
        var blocks = new List<int[]>();
        int risingOnes = 0;
        int firstOnes = 0;
        for (int k = 0; k < leadRuns.Count; k++)
        {
            int at = leadRuns[k].Start + leadRuns[k].Length;
            int limit = k + 1 < leadRuns.Count ? leadRuns[k + 1].Start : kind.Length;
            if (at >= limit || kind[at] != (alternating ? 0 : 1))
            {
                continue;
            }

            // The edge that begins the walk is a mid-cell transition read as a 1: in an alternating preamble the last
            // whole ends on one (its bit's value the preamble cannot tell: its phase depends on the polarity, so the
            // search tries the reading with every bit inverted too); after a lead-in of zeros the edge that ends the
            // first whole is the first 1's, and its direction is a 1's.
            int anchor = alternating ? at : at + 1;
            firstOnes++;
            risingOnes += survey.Edges[anchor].Rising ? 1 : 0;
            var bits = CellWalk(survey.Edges, anchor, limit, cell * survey.Stretch.SampleRate);
            if (bits.Count >= 24)
            {
                blocks.Add([.. bits]);
            }
        }

        if (blocks.Count == 0)
        {
            return null;
        }

        BitMapping[] mappings = alternating
            ? [new BitMapping("the preamble's last bit is 1", 0, 1), new BitMapping("the preamble's last bit is 0", 1, 0)]
            : [new BitMapping("zeros lead in", 0, 1)];
        var reading = SyncFormatSearch.Search(blocks, mappings, alternating ? -1 : 0, cancellation);
        if (reading is null)
        {
            return null;
        }

        bool proven = reading.Layout.HasChecksum;
        int shortest = alternating ? leadRuns.Min(r => r.Length) : leadRuns.Min(r => r.Length) / 2;
        int minimum = Math.Clamp((int)(0.25 * shortest), 8, MostLeadIn);
        string syncBits = string.Concat(reading.Sync.Select(b => reading.Mapping.Bit(b) == 1 ? '1' : '0'));
        bool syncLengthened = false;
        if (alternating && !proven && BitPatterns.FirstMatch(BitPatterns.Alternating, syncBits) < syncBits.Length)
        {
            // With no check value to place the bytes, the shortest sync whose framing holds may be the preamble's last
            // bit alone, which the preamble itself plays: the sync drafted is then the bits the blocks share up to
            // where they first break the preamble's alternation, so that the draft is a profile whose guesses can be
            // confirmed (a draft that does not load proposes nothing).
            string shared = string.Concat(SharedBits(blocks).Select(b => reading.Mapping.Bit(b) == 1 ? '1' : '0'));
            for (int length = syncBits.Length + 1; length <= shared.Length; length++)
            {
                if (BitPatterns.FirstMatch(BitPatterns.Alternating, shared[..length]) >= length)
                {
                    syncBits = shared[..length];
                    syncLengthened = true;
                    break;
                }
            }
        }

        bool risingFirst = risingOnes * 2 >= firstOnes;
        string oneIs = risingFirst == (reading.Mapping.OneSymbol == 1) ? "rising" : "falling";
        var proposal = new FamilyProposal();
        proposal.Sections["biphase"] = new JsonObject
        {
            ["cellMicroseconds"] = Math.Round(cell * 1e6, 2),
            ["oneIs"] = oneIs,
            ["syncBits"] = syncBits,
        };
        if (alternating)
        {
            proposal.Sections["biphase"]!["leadIn"] = new JsonObject { ["bits"] = "01", ["minimumBits"] = minimum };
        }
        else
        {
            proposal.Sections["biphase"]!["leadInMinimumBits"] = minimum;
        }

        proposal.Measured("biphase.cellMicroseconds", Us(cell), 0.9,
            $"intervals of half a cell ({Us(survey.Clusters[halfGroup].Seconds)} µs) and a whole one ({Us(survey.Clusters[wholeGroup].Seconds)} µs) through setting {survey.Setting.Name}; as the tape plays");
        proposal.Guessed("biphase.oneIs", oneIs, 0.5,
            $"the first 1 after {firstOnes} lead-ins has a {oneIs} mid-cell transition in this capture, but a capture's polarity depends on the deck and its wiring (the detector bank reads both)");
        if (alternating)
        {
            proposal.Measured("biphase.leadIn", $"alternating bits, at least {F(minimum)}", 0.85, $"{leadRuns.Count} runs of whole-cell intervals (a transition in every cell and none between: alternating bits); a quarter (at most {MostLeadIn}) of the shortest ({shortest} bits)");
        }
        else
        {
            proposal.Measured("biphase.leadInMinimumBits", F(minimum), 0.85, $"a quarter (at most {MostLeadIn}) of the shortest lead-in seen ({shortest} zeros)");
        }
        proposal.Measured("biphase.syncBits", syncBits, proven ? 0.9 : 0.4,
            $"{blocks.Count} blocks begin alike for {reading.CommonPrefix} bits from the {(alternating ? "preamble's last bit" : "first 1 after their lead-in")}; " + (proven ? "the check value holds when bytes start after this sync" : syncLengthened ? "no check value places the bytes; drafted up to the first bit that breaks the preamble's alternation" : "the shortest sync whose framing holds is drafted"));
        Framing(proposal, reading.Framing, proven, reading.FramingShare, proven && !reading.OrderAmbiguous, OrderEvidence(reading));
        Layout(proposal, reading.Layout);
        AmbiguousOrder(proposal, reading);
        AbsorbedSync(proposal, reading, "biphase.syncBits");
        proposal.Notes.Add($"Read through detector setting {survey.Setting.Name}: {blocks.Count} blocks after {(alternating ? "alternating preambles" : "lead-ins of equal bits")}; {reading.Candidates} readings of sync and framing held.");
        return proposal;
    }

    /// <summary>The survey of each stretch's edges through their evened intervals, made once for its score and its draft.</summary>
    private static readonly ConditionalWeakTable<StretchSurvey, StretchSurvey> EvenedSurveys = [];

    /// <summary>The survey through <see cref="EvenIntervals"/>: halves and wholes each one group again where the edges lean.</summary>
    internal static StretchSurvey Evened(StretchSurvey survey) =>
        EvenedSurveys.GetValue(survey, s => s.WithIntervals(EvenIntervals(s.Edges, s.Intervals)));

    /// <summary>Neighbouring pairs of intervals of one kind (lengths within this ratio) each side of an interval that measure its lean.</summary>
    private const int LeanReach = 4;

    /// <summary>Two intervals nearer than this ratio are taken as one kind (a half and a whole are 2 apart, a lean of a fifth of a half makes 1.5).</summary>
    private const double SameKindRatio = 1.5;

    /// <summary>
    /// The intervals with the edges' lean taken out. An offset on the signal (mains hum, a read chain's wander, a
    /// detector's threshold) moves every rising crossing one way and every falling one the other, so that an interval
    /// from a rising edge to a falling one is shortened by as much as the next is lengthened: a lead-in of halves reads
    /// as two lengths a quarter apart, which the survey groups apart, and the pair of groups one twice the other is
    /// lost. The lean is measured where it is, from the neighbouring pairs of intervals of one kind (two halves or two
    /// wholes, whose lengths differ by twice the lean): hum moves it within a block. The sum of two intervals in a row
    /// keeps its length, so the lean taken out moves no cell.
    /// </summary>
    internal static double[] EvenIntervals(IReadOnlyList<Edge> edges, double[] intervals)
    {
        ArgumentNullException.ThrowIfNull(edges);
        ArgumentNullException.ThrowIfNull(intervals);
        int n = intervals.Length;

        // The lean measured at each pair (i, i + 1) of one kind: how much later than its place a rising edge falls.
        var lean = new double[n];
        var measured = new bool[n];
        for (int i = 0; i + 1 < n; i++)
        {
            double a = intervals[i];
            double b = intervals[i + 1];
            if (a > 0 && b > 0 && Math.Max(a, b) < SameKindRatio * Math.Min(a, b))
            {
                lean[i] = (edges[i].Rising ? 1 : -1) * (b - a) / 2;
                measured[i] = true;
            }
        }

        var result = new double[n];
        Span<double> near = stackalloc double[(2 * LeanReach) + 1];
        for (int i = 0; i < n; i++)
        {
            int count = 0;
            for (int j = Math.Max(0, i - LeanReach); j <= Math.Min(n - 1, i + LeanReach); j++)
            {
                if (measured[j])
                {
                    near[count++] = lean[j];
                }
            }

            double shift = 0;
            if (count > 0)
            {
                var found = near[..count];
                found.Sort();
                shift = found[count / 2];
            }

            // An interval from a rising edge ends on a falling one: both moved shorten it by the lean.
            result[i] = Math.Max(intervals[i] + ((edges[i].Rising ? 1 : -1) * shift), intervals[i] / 2);
        }

        return result;
    }

    /// <summary>How far, in cells, a mid-cell transition may stray from the walk's cell clock and still keep time.</summary>
    private const double ClockTolerance = 0.4;

    /// <summary>Cells a walk bridges between two mid-cell transitions (the transitions between them lost); more ends the block.</summary>
    private const int MostCellsBridged = 3;

    /// <summary>
    /// A block's bits from its first mid-cell transition (<paramref name="anchor"/>, read as a 1) on, walked on a cell
    /// clock as the read path's decoder walks it, not interval by interval: a transition moved by a quarter cell (a
    /// crossing after a whole read late, so that a half and a whole read as two lengths between them) still falls
    /// nearer its place on the clock than any other, and a cell whose transitions were lost is bridged with a bit
    /// guessed (the count kept, so that the bytes after it stay in place). A transition after a mid-cell one is a
    /// boundary where it comes about half a cell on (where it could be either, the one after it tells: a boundary is
    /// followed by the mid-cell transition a cell after the last, a mid-cell one by a transition later than that),
    /// else the next cell's; each mid-cell transition's direction is its bit. The block ends at a transition off the
    /// clock, a glitch, or a gap longer than <see cref="MostCellsBridged"/> cells.
    /// </summary>
    internal static List<int> CellWalk(IReadOnlyList<Edge> edges, int anchor, int limit, double cellSamples)
    {
        ArgumentNullException.ThrowIfNull(edges);
        var bits = new List<int> { 1 };
        bool oneRising = edges[anchor].Rising;
        double lastMid = edges[anchor].Sample;
        double cell = cellSamples;
        bool afterBoundary = false;
        int end = Math.Min(limit, edges.Count - 1);
        for (int e = anchor + 1; e <= end; e++)
        {
            double halves = 2 * (edges[e].Sample - lastMid) / cell;
            if (!afterBoundary)
            {
                bool boundary = halves < 1.25
                    || (halves < 1.75 && e + 1 <= end && 2 * (edges[e + 1].Sample - lastMid) / cell < 2.5);
                if (halves < 0.5)
                {
                    break;
                }

                if (boundary)
                {
                    afterBoundary = true;
                    continue;
                }
            }
            else if (halves < 1.5)
            {
                break;
            }

            int cells = Math.Max(1, (int)Math.Round(halves / 2));
            double error = edges[e].Sample - (lastMid + (cells * cell));
            if (cells > MostCellsBridged || Math.Abs(error) > ClockTolerance * cell)
            {
                break;
            }

            for (int bridged = 1; bridged < cells; bridged++)
            {
                bits.Add(bits[^1]);
            }

            bits.Add(edges[e].Rising == oneRising ? 1 : 0);
            lastMid += (cells * cell) + (ClockPhaseGain * error);
            cell += ClockPeriodGain * error / cells;
            afterBoundary = false;
        }

        return bits;
    }

    /// <summary>How much of a mid-cell transition's error moves the walk's clock, in phase and in period (a first-order loop, as the decoder's).</summary>
    private const double ClockPhaseGain = 0.25;

    private const double ClockPeriodGain = 0.02;

    /// <summary>The symbols most blocks share from their start, up to where fewer than seven in ten agree (at most 64).</summary>
    private static int[] SharedBits(List<int[]> blocks)
    {
        int length = Math.Min(64, SyncFormatSearch.CommonPrefix(blocks));
        var shared = new int[length];
        for (int i = 0; i < length; i++)
        {
            shared[i] = blocks.Where(b => b.Length > i).GroupBy(b => b[i]).OrderByDescending(g => g.Count()).First().Key;
        }

        return shared;
    }

    /// <summary>Runs of at least <paramref name="least"/> intervals of one kind (0 half, 1 whole), as (start, length).</summary>
    private static List<(int Start, int Length)> LongRuns(int[] kind, int of, int least)
    {
        var runs = new List<(int Start, int Length)>();
        for (int i = 0; i < kind.Length;)
        {
            int j = i;
            while (j < kind.Length && kind[j] == of)
            {
                j++;
            }

            if (j - i >= least)
            {
                runs.Add((i, j - i));
            }

            i = j + 1;
        }

        return runs;
    }
}
