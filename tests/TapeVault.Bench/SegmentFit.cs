using System.Globalization;

namespace TapeVault.Bench;

/// <summary>
/// Whether merged stream segments can be calibrated by a map over a few of their features, fitted on tuning tapes and
/// checked on others: <c>segment-fit --fit A.tsv[,B.tsv...] --check C.tsv[,D.tsv...] [--cells ah|ahl] [--per-profile]
/// [--least N]</c>, where each file is a dump of <c>stream-merge --dump</c> (one merged segment a row: its confidence,
/// whether it is right, the captures agreeing on its least agreed character, its length, and whether bytes no capture
/// kept lie beside it). Segments are put in cells by captures agreeing (one, two or more) and beside a hole or not
/// (<c>ah</c>), and by length (one to three characters, four to fifteen, sixteen or more: <c>ahl</c>); per cell (and
/// per profile with --per-profile) the rate of right segments is fitted as a step function of the merge's confidence,
/// as trust-fit fits a reading's (<see cref="TrustFit.Fit(List{ValueTuple{double, bool}}, int, int)"/>: bins of equal
/// count of at least <c>--least</c> segments, ten at most, pool-adjacent-violators, Laplace's rule); a cell with fewer
/// segments keeps the confidence as it is. Printed per profile and checked file: the ECE (10 equal bins), the
/// log-likelihood of right and wrong and the segments wrong at 0.99 or more, before and after the map. The fit files
/// must be of tuning seeds; the map is not written anywhere: this measures whether one would hold.
/// </summary>
public static class SegmentFit
{
    private sealed record Segment(string Profile, double Confidence, bool Right, int Agreeing, int Length, bool BesideHole);

    public static int Run(string[] args)
    {
        string[] fit = [], check = [];
        string cells = "ah";
        bool perProfile = false;
        int least = 20;
        for (int i = 0; i < args.Length; i++)
        {
            switch (args[i])
            {
                case "--fit": fit = args[++i].Split(','); break;
                case "--check": check = args[++i].Split(','); break;
                case "--cells": cells = args[++i]; break;
                case "--per-profile": perProfile = true; break;
                case "--least": least = int.Parse(args[++i], CultureInfo.InvariantCulture); break;
                default: throw new ArgumentException($"Unknown option {args[i]}; segment-fit takes --fit FILES --check FILES [--cells ah|ahl] [--per-profile] [--least N].");
            }
        }

        if (fit.Length == 0 || check.Length == 0 || cells is not ("ah" or "ahl"))
        {
            throw new ArgumentException("segment-fit needs --fit and --check (stream-merge dumps, comma-separated); --cells is ah or ahl.");
        }

        var tuning = fit.SelectMany(Read).ToList();
        string Cell(Segment s) => string.Create(CultureInfo.InvariantCulture,
            $"{(perProfile ? s.Profile : "*")} {(s.Agreeing <= 1 ? "one" : "two+")} {(s.BesideHole ? "hole" : "-")}{(cells == "ahl" ? s.Length < 4 ? " 1-3" : s.Length < 16 ? " 4-15" : " 16+" : string.Empty)}");
        var curves = new Dictionary<string, (double[] X, double[] Y)>(StringComparer.Ordinal);
        foreach (var group in tuning.GroupBy(Cell).OrderBy(g => g.Key, StringComparer.Ordinal))
        {
            var items = group.Select(s => (s.Confidence, s.Right)).ToList();
            if (items.Count < least)
            {
                Console.WriteLine($"{group.Key,-24} {items.Count,4} segments: too few, kept as they are");
                continue;
            }

            var curve = TrustFit.Fit(items, bins: 10, leastPerBin: least);
            curves[group.Key] = curve;
            Console.WriteLine($"{group.Key,-24} {items.Count,4} segments, {items.Count(i => i.Right),4} right: {string.Join(' ', curve.X.Zip(curve.Y).Select(p => string.Create(CultureInfo.InvariantCulture, $"{p.First:0.###}->{p.Second:0.###}")))}");
        }

        double Mapped(Segment s) => curves.TryGetValue(Cell(s), out var c) ? TapeVault.Core.Blocks.ConfidenceMap.Interpolate(c.X, c.Y, s.Confidence) : s.Confidence;
        Console.WriteLine();
        Console.WriteLine($"{"file",-36} {"profile",-9} {"segments",8} {"ECE before",10} {"after",6} {"log-likelihood before",21} {"after",7} {"wrong >= 0.99",13} {"after",5}");
        foreach (string file in fit.Concat(check).Distinct(StringComparer.Ordinal))
        {
            foreach (var group in Read(file).GroupBy(s => s.Profile).OrderBy(g => g.Key, StringComparer.Ordinal))
            {
                var before = group.Select(s => (s.Confidence, s.Right)).ToList();
                var after = group.Select(s => (Mapped(s), s.Right)).ToList();
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"{(fit.Contains(file) ? "fit " : "check ") + Path.GetFileName(file),-36} {group.Key,-9} {before.Count,8} {Calibration.EqualBinEce(before),10:0.0000} {Calibration.EqualBinEce(after),6:0.0000} {LogLikelihood(before),21:0.0} {LogLikelihood(after),7:0.0} {Wrong(before),13} {Wrong(after),5}"));
            }
        }

        return 0;
    }

    private static IEnumerable<Segment> Read(string file) =>
        File.ReadLines(file).Select(line => line.Split('\t')).Select(f => new Segment(
            f[0], double.Parse(f[3], CultureInfo.InvariantCulture), f[4] == "1", int.Parse(f[5], CultureInfo.InvariantCulture),
            int.Parse(f[7], CultureInfo.InvariantCulture), f[8] == "1" || f[9] == "1"));

    private static double LogLikelihood(List<(double Confidence, bool Right)> items) =>
        items.Sum(i => Math.Log(Math.Clamp(i.Right ? i.Confidence : 1 - i.Confidence, 1e-9, 1)));

    private static int Wrong(List<(double Confidence, bool Right)> items) => items.Count(i => !i.Right && i.Confidence >= Trust.StreamConfidentWrong);
}
