using TapeVault.Core.Detection;
using TapeVault.Core.Edges;

namespace TapeVault.Core.Drafting;

/// <summary>How one group of intervals comes in runs: the commonest run length (its step), the share of odd runs, the mean length.</summary>
public sealed record RunStatistics(int Granularity, double OddShare, int Runs, double MeanLength);

/// <summary>
/// The first look at a stretch: the intervals between every transition (a detector setting that counts both edges,
/// the one whose intervals group best), their groups, and how each group comes in runs. Half a cycle is one
/// interval here, so a whole cycle of a pulse-width format is two of a group, a bit of FSK a fixed number of
/// half cycles of its tone, and a biphase cell one whole interval or two halves.
/// </summary>
public sealed class StretchSurvey
{
    private StretchSurvey(CaptureStretch stretch, DetectorSetting setting, IReadOnlyList<Edge> edges, double[] intervals, List<IntervalCluster> clusters, int[] classes)
    {
        Stretch = stretch;
        Setting = setting;
        Edges = edges;
        Intervals = intervals;
        Clusters = clusters;
        Classes = classes;
        Runs = [.. Enumerable.Range(0, clusters.Count).Select(Statistics)];
    }

    public CaptureStretch Stretch { get; }

    public DetectorSetting Setting { get; }

    public IReadOnlyList<Edge> Edges { get; }

    public double[] Intervals { get; }

    public List<IntervalCluster> Clusters { get; }

    /// <summary>The group of each interval (−1 for none).</summary>
    public int[] Classes { get; }

    public IReadOnlyList<RunStatistics> Runs { get; }

    /// <summary>The settings that count both edges, of the default bank.</summary>
    public static IEnumerable<DetectorSetting> BothEdgeSettings => DetectorBanks.Default.Where(s => s.Edges == EdgeSelection.Both);

    /// <summary>The survey through the setting whose intervals group best.</summary>
    public static StretchSurvey Take(CaptureStretch stretch, CancellationToken cancellation = default) => TakeEach(stretch, cancellation)[0];

    /// <summary>
    /// A survey through every setting that counts both edges, the one whose intervals group best first (the first of
    /// equals in the bank's order). Filtering and equalisation treat the settings differently, so a family whose
    /// structure one setting blurs (a tone's half cycles falling out of their group) may show through another.
    /// A survey of fewer than two groups comes after every other: no family is one length of interval, and a setting
    /// that hears only mains hum under a faint recording groups its long half cycles best of all.
    /// </summary>
    public static IReadOnlyList<StretchSurvey> TakeEach(CaptureStretch stretch, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(stretch);
        var surveys = new List<StretchSurvey>();
        foreach (var setting in BothEdgeSettings)
        {
            var edges = stretch.Edges(setting, cancellation);
            var intervals = IntervalClusters.Intervals(edges, stretch.SampleRate);
            var clusters = IntervalClusters.Find(intervals);
            var classes = IntervalClusters.Classify(intervals, clusters);
            surveys.Add(new StretchSurvey(stretch, setting, edges, intervals, clusters, classes));
        }

        return [.. surveys.Select((s, i) => (Survey: s, Index: i)).OrderByDescending(x => x.Survey.Clusters.Count >= 2).ThenByDescending(x => x.Survey.GroupedShare).ThenBy(x => x.Index).Select(x => x.Survey)];
    }

    /// <summary>The same edges surveyed through other intervals (one for each of <see cref="Edges"/>' gaps, evened out, say): their groups and runs found anew.</summary>
    internal StretchSurvey WithIntervals(double[] intervals)
    {
        ArgumentNullException.ThrowIfNull(intervals);
        if (intervals.Length != Intervals.Length)
        {
            throw new ArgumentException($"{intervals.Length} intervals for {Intervals.Length} gaps between edges.", nameof(intervals));
        }

        var clusters = IntervalClusters.Find(intervals);
        return new StretchSurvey(Stretch, Setting, Edges, intervals, clusters, IntervalClusters.Classify(intervals, clusters));
    }

    /// <summary>The share of intervals that fall in a group.</summary>
    public double GroupedShare => Classes.Length == 0 ? 0 : (double)Classes.Count(c => c >= 0) / Classes.Length;

    /// <summary>The groups that hold most intervals, by share, largest first.</summary>
    public IEnumerable<int> Dominant => Enumerable.Range(0, Clusters.Count).OrderByDescending(i => Clusters[i].Share);

    /// <summary>Runs of one group between two other groups (runs next to an interval in no group are left out).</summary>
    public IEnumerable<(int Class, int Start, int Length)> AllRuns()
    {
        int i = 0;
        while (i < Classes.Length)
        {
            int c = Classes[i];
            int j = i + 1;
            while (j < Classes.Length && Classes[j] == c)
            {
                j++;
            }

            if (c >= 0 && i > 0 && j < Classes.Length && Classes[i - 1] >= 0 && Classes[j] >= 0)
            {
                yield return (c, i, j - i);
            }

            i = j;
        }
    }

    private RunStatistics Statistics(int cluster)
    {
        var lengths = AllRuns().Where(r => r.Class == cluster).Select(r => r.Length).ToList();
        if (lengths.Count == 0)
        {
            return new RunStatistics(1, 0, 0, 0);
        }

        // The commonest run length (a run of one bit, or one cycle), counting its neighbours: a run may lose or gain
        // one interval where the tone changes and filtering moves a crossing.
        var counts = new Dictionary<int, int>();
        foreach (int l in lengths)
        {
            counts[l] = counts.GetValueOrDefault(l) + 1;
        }

        int granularity = counts.Keys.MaxBy(l => counts[l] + (l >= 3 ? counts.GetValueOrDefault(l - 1) + counts.GetValueOrDefault(l + 1) : 0) + (l % 2 == 0 ? 0.5 : 0));
        double mean = lengths.Average();
        return new RunStatistics(granularity, lengths.Count(l => l % 2 == 1) / (double)lengths.Count, lengths.Count, mean);
    }
}
