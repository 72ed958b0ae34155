using TapeVault.Core.Edges;
using TapeVault.Core.Pulses;

namespace TapeVault.Core.Drafting;

/// <summary>One group of near-equal intervals: its centre (a geometric mean) and the share of all intervals it holds.</summary>
public sealed record IntervalCluster(double Seconds, double Share, long Count);

/// <summary>
/// Finds the groups of interval lengths in a pulse-length histogram (<see cref="PulseHistogram"/>, log-spaced, so a
/// group keeps its width in ratio wherever it lies): the peaks of the lightly smoothed counts that hold a few per
/// cent of all intervals, each refined to the geometric mean of the intervals within ±15 % of it.
/// </summary>
public static class IntervalClusters
{
    /// <summary>The shortest and longest interval a tape format of the period writes (20 µs to 20 ms, common practice with room to spare).</summary>
    public const double LowestSeconds = 20e-6;

    public const double HighestSeconds = 20e-3;

    /// <summary>A group must hold this share of the intervals to count.</summary>
    public const double LeastShare = 0.015;

    /// <summary>How far (in ratio) an interval may lie from a group's centre and still belong to it.</summary>
    public const double Reach = 0.15;

    /// <summary>The time in seconds between consecutive edges.</summary>
    public static double[] Intervals(IReadOnlyList<Edge> edges, double sampleRate)
    {
        ArgumentNullException.ThrowIfNull(edges);
        var result = new double[Math.Max(0, edges.Count - 1)];
        for (int i = 1; i < edges.Count; i++)
        {
            result[i - 1] = (edges[i].Sample - edges[i - 1].Sample) / sampleRate;
        }

        return result;
    }

    public static PulseHistogramResult Histogram(ReadOnlySpan<double> intervals)
    {
        var histogram = new PulseHistogram(LowestSeconds, HighestSeconds, 300);
        foreach (double interval in intervals)
        {
            histogram.Add(interval);
        }

        return histogram.ToResult();
    }

    /// <summary>The groups holding at least <paramref name="leastShare"/> of the intervals, shortest first.</summary>
    public static List<IntervalCluster> Find(ReadOnlySpan<double> intervals, double leastShare = LeastShare)
    {
        var histogram = Histogram(intervals);
        int bins = histogram.Bins;
        var smooth = new double[bins];
        for (int i = 0; i < bins; i++)
        {
            double sum = 0;
            for (int k = -2; k <= 2; k++)
            {
                int j = i + k;
                if (j >= 0 && j < bins)
                {
                    sum += histogram.Counts[j] * (3 - Math.Abs(k));
                }
            }

            smooth[i] = sum / 9;
        }

        long total = Math.Max(1, histogram.InRange);
        var peaks = new List<double>();
        for (int i = 0; i < bins; i++)
        {
            bool peak = smooth[i] > 0 && (i == 0 || smooth[i] >= smooth[i - 1]) && (i == bins - 1 || smooth[i] > smooth[i + 1]);
            if (peak)
            {
                peaks.Add(Math.Sqrt(histogram.BinEdgesSeconds[i] * histogram.BinEdgesSeconds[i + 1]));
            }
        }

        // Refine each peak to the intervals near it, then merge peaks that refined onto one another.
        var clusters = new List<IntervalCluster>();
        foreach (double peak in peaks)
        {
            double center = peak;
            long count = 0;
            for (int pass = 0; pass < 3; pass++)
            {
                double logSum = 0;
                count = 0;
                foreach (double x in intervals)
                {
                    if (x > center / (1 + Reach) && x < center * (1 + Reach))
                    {
                        logSum += Math.Log(x);
                        count++;
                    }
                }

                if (count == 0)
                {
                    break;
                }

                center = Math.Exp(logSum / count);
            }

            if ((double)count / total < leastShare || count < 4)
            {
                continue;
            }

            int near = clusters.FindIndex(c => Math.Abs(Math.Log(c.Seconds / center)) < Math.Log(1 + Reach));
            if (near >= 0)
            {
                if (clusters[near].Count < count)
                {
                    clusters[near] = new IntervalCluster(center, (double)count / total, count);
                }

                continue;
            }

            clusters.Add(new IntervalCluster(center, (double)count / total, count));
        }

        clusters.Sort((a, b) => a.Seconds.CompareTo(b.Seconds));
        return clusters;
    }

    /// <summary>The group each interval belongs to (−1 for none), through the read path's classifier: boundaries at the geometric means.</summary>
    public static int[] Classify(ReadOnlySpan<double> intervals, IReadOnlyList<IntervalCluster> clusters, double outerRatio = 1 + Reach)
    {
        ArgumentNullException.ThrowIfNull(clusters);
        var result = new int[intervals.Length];
        if (clusters.Count == 0)
        {
            Array.Fill(result, -1);
            return result;
        }

        var classifier = new PulseClassifier([.. clusters.Select(c => c.Seconds)], outerRatio);
        for (int i = 0; i < intervals.Length; i++)
        {
            result[i] = classifier.ClassOf(intervals[i], 1);
        }

        return result;
    }
}
