using System.Diagnostics;

namespace TapeVault.Bench;

/// <summary>
/// Reliability of the merged confidence: every recovered (not missing) position of the recovery corpus, binned by
/// its confidence, beside the observed rate of right ones (ground truth: the bytes we synthesised). Expected
/// calibration error = Σ over bins (count / total) × |mean confidence − observed rate|. The tapes here (seeds 101
/// onwards) are disjoint from those the stream byte error floors were fitted on (seeds 1 onwards, fewer than 100).
/// </summary>
public static class Calibration
{
    private static readonly double[] Edges = [0, 0.5, 0.8, 0.9, 0.95, 0.99, 0.999, 1.0000001];

    public static void Run(string work, int seeds)
    {
        var stopwatch = Stopwatch.StartNew();

        // The fit: the stream byte error floors of MergeOptions, by the smallest calibration error on seeds 1 onwards.
        var fitTapes = Recovery.Decoded(work, 1, seeds).Where(t => t.Profile.Layout.IsStream).ToList();
        double[] grid = [2e-4, 5e-4, 1e-3, 2e-3, 5e-3, 1e-2, 2e-2, 5e-2];
        double[] factors = [0.1, 0.2, 0.3, 0.5, 0.7, 1];
        var fits = new List<(double Single, double Factor, double Ece)>();
        foreach (double single in grid)
        {
            foreach (double factor in factors)
            {
                var options = new TapeVault.Core.Merge.MergeOptions { StreamByteErrorFloor = single, StreamAfterGapFactor = factor };
                var items = fitTapes.Select(t => RecoveryCorpus.Score(t, options)).SelectMany(t => t.MergedBlocks.Select(b => (b.Confidence, b.Right))).ToList();
                fits.Add((single, factor, Ece(items)));
            }
        }

        var best = fits.MinBy(f => f.Ece);
        var defaults = new TapeVault.Core.Merge.MergeOptions();
        var atDefaults = fits.Find(f => f.Single == defaults.StreamByteErrorFloor && f.Factor == defaults.StreamAfterGapFactor);
        Console.WriteLine($"Fit on the stream tapes of seeds 1 to {seeds} (streams only): byte error floor {best.Single:0e0} (one capture; k captures agreeing: its k-th power), after-gap factor {best.Factor}: ECE {best.Ece:0.0000} there.");
        Console.WriteLine($"Defaults in use: {defaults.StreamByteErrorFloor:0e0}, {defaults.StreamAfterGapFactor}: ECE {atDefaults.Ece:0.0000} on the fit tapes.");
        var heldOut = Recovery.Decoded(work, 101, seeds);
        var tapes = heldOut.Select(t => RecoveryCorpus.Score(t)).ToList();
        var streamPositions = tapes.Where(t => IsStream(t.ProfileId)).SelectMany(t => t.MergedBlocks.Select(b => (b.Confidence, b.Right))).ToList();
        var fitted = new TapeVault.Core.Merge.MergeOptions { StreamByteErrorFloor = best.Single, StreamAfterGapFactor = best.Factor };
        double fittedEce = Ece([.. heldOut.Where(t => t.Profile.Layout.IsStream).Select(t => RecoveryCorpus.Score(t, fitted)).SelectMany(t => t.MergedBlocks.Select(b => (b.Confidence, b.Right)))]);
        Console.WriteLine($"Stream positions of the tapes from seed 101: ECE {Ece(streamPositions):0.0000} with the defaults, {fittedEce:0.0000} with the fit.");
        Console.WriteLine($"Calibration of merged confidence (tapes from seed 101, {seeds} per stream profile and level, {2 * seeds} per block profile and level)");
        Print("merged positions", tapes.SelectMany(t => t.MergedBlocks.Select(b => (b.Confidence, b.Right))).ToList());
        Print("of them, stream positions (the fitted constants act on these alone)", streamPositions);
        Print("single readings (each pass's best per position, for comparison)", tapes.SelectMany(t => t.SingleCandidates).ToList());
        Console.WriteLine($"{stopwatch.Elapsed.TotalSeconds:0} s.");
        Console.WriteLine();
    }

    private static bool IsStream(string profileId) => TapeVault.Core.Formats.ProfileCatalog.BuiltIn.Get(profileId).Layout.IsStream;

    /// <summary>The non-empty bins of <paramref name="items"/>: their edges, count, mean confidence and observed rate of right ones.</summary>
    private static IEnumerable<(int Bin, int Count, double Mean, double Right)> Bins(List<(double Confidence, bool Right)> items)
    {
        for (int b = 0; b + 1 < Edges.Length; b++)
        {
            var bin = items.Where(i => i.Confidence >= Edges[b] && i.Confidence < Edges[b + 1]).ToList();
            if (bin.Count > 0)
            {
                yield return (b, bin.Count, bin.Average(i => i.Confidence), bin.Count(i => i.Right) / (double)bin.Count);
            }
        }
    }

    /// <summary>
    /// Expected calibration error over <paramref name="bins"/> equal bins of confidence ([0, 0.1), …, [0.9, 1]):
    /// Σ over bins (count / total) × |mean confidence − observed rate of right ones|; 0 for no items.
    /// </summary>
    public static double EqualBinEce(IReadOnlyCollection<(double Confidence, bool Right)> items, int bins = 10)
    {
        ArgumentNullException.ThrowIfNull(items);
        var count = new int[bins];
        var confidence = new double[bins];
        var right = new int[bins];
        foreach (var (c, r) in items)
        {
            int b = Math.Clamp((int)(c * bins), 0, bins - 1);
            count[b]++;
            confidence[b] += c;
            right[b] += r ? 1 : 0;
        }

        double ece = 0;
        for (int b = 0; b < bins; b++)
        {
            if (count[b] > 0)
            {
                ece += Math.Abs(confidence[b] - right[b]) / items.Count;
            }
        }

        return ece;
    }

    private static double Ece(List<(double Confidence, bool Right)> items) =>
        Bins(items).Sum(bin => bin.Count / (double)items.Count * Math.Abs(bin.Mean - bin.Right));

    public static void Print(string title, List<(double Confidence, bool Right)> items)
    {
        Console.WriteLine(title);
        Console.WriteLine($"{"bin",-14} {"count",6} {"mean conf",10} {"right",8} {"gap",7}");
        foreach (var (b, count, mean, right) in Bins(items))
        {
            Console.WriteLine($"{$"[{Edges[b]:0.###}, {Math.Min(1, Edges[b + 1]):0.###}{(b + 2 == Edges.Length ? "]" : ")")}",-14} {count,6} {mean,10:0.0000} {right,8:0.0000} {mean - right,7:+0.000;-0.000}");
        }

        Console.WriteLine($"{items.Count} items, expected calibration error {Ece(items):0.0000} (goal <= 0.05)");
    }
}
