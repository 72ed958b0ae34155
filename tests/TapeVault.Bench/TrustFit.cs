using System.Globalization;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;

namespace TapeVault.Bench;

/// <summary>
/// Fits the block scorer's confidence map (src/TapeVault.Core/Blocks/Calibration/confidence-map.json) from the
/// readings a trust run dumped (TAPEVAULT_TRUST_DUMP), which must be of tuning seeds only. Per family and calibration
/// group: readings sorted by model confidence, pooled into bins of equal count (at most <see cref="Bins"/>, at least
/// <see cref="LeastPerBin"/> readings each), then pool-adjacent-violators makes the rate of right readings a function
/// that never falls as the model confidence rises. Each step's rate is (right + 1) / (readings + 2) (Laplace's rule of
/// succession), so that no step claims certainty its readings cannot show. With --keep MAP, only the curves whose
/// readings the dump holds in full are fitted again (<see cref="Covers"/>), a family's and the pooled ones included
/// when the dump has every profile they pool; the rest stay as MAP has them.
/// </summary>
public static class TrustFit
{
    private const int Bins = 40;
    private const int LeastPerBin = 50;

    private static readonly JsonSerializerOptions s_json = new() { WriteIndented = true, Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping };

    public static int Run(string[] args)
    {
        string? dump = null, output = null, note = null, keep = null;
        HashSet<string>? only = null;
        for (int i = 0; i + 1 < args.Length; i += 2)
        {
            switch (args[i])
            {
                case "--dump": dump = args[i + 1]; break;
                case "--out": output = args[i + 1]; break;
                case "--note": note = args[i + 1]; break;
                case "--keep": keep = args[i + 1]; break;
                case "--groups": only = [.. args[i + 1].Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).Select(g => Enum.Parse<TapeVault.Core.Blocks.ConfidenceGroup>(g).ToString())]; break;
                default: throw new ArgumentException($"Unknown option {args[i]}; trust-fit takes --dump FILE --out FILE --note TEXT [--keep MAP [--groups GROUP,...]].");
            }
        }

        if (only is not null && keep is null)
        {
            throw new ArgumentException("trust-fit --groups needs --keep MAP: the curves of the other groups come from it.");
        }

        if (dump is null || output is null)
        {
            throw new ArgumentException("trust-fit needs --dump FILE (a trust run's TAPEVAULT_TRUST_DUMP) and --out FILE.");
        }

        // Reading rows: read, profile, seed, ..., right at 9, ..., family, group, model confidence as the last three.
        var groups = new Dictionary<string, List<(double Model, bool Right)>>(StringComparer.Ordinal);
        var dumpedProfiles = new HashSet<string>(StringComparer.Ordinal);
        int lowest = int.MaxValue, highest = int.MinValue;
        foreach (string line in File.ReadLines(dump))
        {
            string[] f = line.Split('\t');
            if (f[0] != "read" || f.Length < 24)
            {
                continue;
            }

            int seed = int.Parse(f[2], CultureInfo.InvariantCulture);
            dumpedProfiles.Add(f[1]);
            lowest = Math.Min(lowest, seed);
            highest = Math.Max(highest, seed);
            string key = $"{f[^3]}/{f[^2]}";
            if (!groups.TryGetValue(key, out var list))
            {
                groups[key] = list = [];
            }

            var reading = (double.Parse(f[^1], CultureInfo.InvariantCulture), f[9] == "1");
            list.Add(reading);

            // A built-in profile's readings also make a curve of its own (used where it has enough); not for clean
            // readings, which are right in every family alike and whose rate a smaller count only bounds more loosely.
            if (TapeVault.Core.Formats.ProfileCatalog.BuiltIn.TryGet(f[1], out _) && f[^2] != nameof(TapeVault.Core.Blocks.ConfidenceGroup.Clean))
            {
                string own = $"{TapeVault.Core.Blocks.ConfidenceMap.ProfilePrefix}{f[1]}/{f[^2]}";
                if (!groups.TryGetValue(own, out var ofProfile))
                {
                    groups[own] = ofProfile = [];
                }

                ofProfile.Add(reading);
            }
        }

        // Each group pooled over every family too: the curve a family uses where its own readings are too few.
        foreach (var group in groups.Keys.Select(k => k[(k.IndexOf('/', StringComparison.Ordinal) + 1)..]).Distinct(StringComparer.Ordinal).ToList())
        {
            groups[TapeVault.Core.Blocks.ConfidenceMap.PooledFamily + "/" + group] =
                [.. groups.Where(g => g.Key.EndsWith("/" + group, StringComparison.Ordinal) && !g.Key.StartsWith(TapeVault.Core.Blocks.ConfidenceMap.ProfilePrefix, StringComparison.Ordinal)).SelectMany(g => g.Value)];
        }

        // --keep MAP: a curve is refitted only where the dump holds every kind of reading it pools (see Covers): a
        // profile's own curves where the dump has that profile, a family's curve of a group where it has every profile
        // of the family that the trust bench measures and that can give the group, the pooled curve where it has them
        // for every family. Every other curve stays as MAP has it, fitted on the seeds its provenance names, and so does
        // a covered curve of which the dump holds too few readings to fit it again (named as such in the provenance and
        // on the console: a run too short for it, not a reason to fall back to a curve pooled over other formats).
        // --groups G,...: only those groups' curves are refitted (the groups whose readings a scorer change moved).
        JsonObject? kept = null;
        bool Refits(string key) => Covers(key, dumpedProfiles) && (only is null || only.Contains(key[(key.LastIndexOf('/') + 1)..]));
        var refitted = new SortedSet<string>(StringComparer.Ordinal);
        var tooFew = new SortedSet<string>(StringComparer.Ordinal);
        if (keep is not null)
        {
            kept = JsonNode.Parse(File.ReadAllText(keep))!.AsObject();
            foreach (string key in groups.Keys.Where(k => !Refits(k)).ToList())
            {
                groups.Remove(key);
            }
        }

        var curves = new JsonObject();
        if (kept is not null)
        {
            foreach (var (key, curve) in kept["curves"]!.AsObject())
            {
                bool refit = Refits(key);
                if (!refit || !groups.TryGetValue(key, out var readings) || readings.Count < TapeVault.Core.Blocks.ConfidenceMap.LeastReadings)
                {
                    curves[key] = curve!.DeepClone();
                    if (refit)
                    {
                        tooFew.Add(key);
                    }
                }
            }
        }

        var counts = new StringBuilder();
        foreach (var (key, readings) in groups.OrderBy(g => g.Key, StringComparer.Ordinal))
        {
            if (readings.Count < TapeVault.Core.Blocks.ConfidenceMap.LeastReadings)
            {
                counts.Append(CultureInfo.InvariantCulture, $"{key} {readings.Count} readings, too few to fit on their own (the pooled curve, else the model confidence); ");
                Console.WriteLine($"{key,-28} {readings.Count,7} readings: too few to fit on their own; the pooled curve, else the model confidence");
                continue;
            }

            var (x, y) = Fit(readings);
            refitted.Add(key);
            curves[key] = new JsonObject { ["readings"] = readings.Count, ["x"] = new JsonArray([.. x.Select(v => (JsonNode)Math.Round(v, 6))]), ["y"] = new JsonArray([.. y.Select(v => (JsonNode)Math.Round(v, 6))]) };
            counts.Append(CultureInfo.InvariantCulture, $"{key} {readings.Count} readings ({readings.Count(r => r.Right)} right); ");
            Console.WriteLine($"{key,-28} {readings.Count,7} readings, {readings.Count(r => r.Right),7} right, {x.Length,3} steps: {string.Join(' ', x.Zip(y).Select(p => $"{p.First:0.###}->{p.Second:0.###}"))}");
        }

        string provenance = kept is null
            ? $"Fitted by `dotnet run -c Release --project tests/TapeVault.Bench -- trust-fit --dump FILE --out FILE` on the trust benchmark's readings of tuning seeds {lowest}–{highest} (held-out seeds start at 20000). {note} Counts: {counts.ToString().TrimEnd(' ', ';')}."
            : $"{kept["provenance"]?.GetValue<string>()} Then the curves {string.Join(", ", refitted)} refitted by `trust-fit --dump FILE --out FILE --keep MAP` (every curve{(only is null ? string.Empty : $" of {string.Join(", ", only.Order(StringComparer.Ordinal))}")} whose readings the dump holds in full; every other curve kept){(tooFew.Count > 0 ? $", {string.Join(", ", tooFew)} kept (too few of its readings in the dump to fit it again)" : string.Empty)} on readings of tuning seeds {lowest}–{highest}. {note} Counts: {counts.ToString().TrimEnd(' ', ';')}.";
        var ordered = new JsonObject();
        foreach (var (key, curve) in curves.OrderBy(c => c.Key, StringComparer.Ordinal).ToList())
        {
            curves.Remove(key);
            ordered[key] = curve;
        }

        var root = new JsonObject
        {
            ["provenance"] = provenance,
            ["curves"] = ordered,
        };
        foreach (string key in tooFew)
        {
            Console.WriteLine($"{key,-28} kept as it was: the dump covers it but holds too few readings to fit it again");
        }

        File.WriteAllText(output, root.ToJsonString(s_json) + "\n");
        Console.WriteLine($"Wrote {output}.");
        return 0;
    }

    /// <summary>
    /// Whether a dump of <paramref name="dumped"/> profiles holds every kind of reading the curve <paramref name="key"/>
    /// pools: a profile's own curve, its profile; a family's curve ("family/Group"), every profile of the family that
    /// the trust bench measures (<see cref="Trust.Subjects"/>) and that can give the group; the pooled curve
    /// ("all/Group"), every such profile of every family. A format with no check gives only unchecked readings and,
    /// cut short, broken ones; a format with a check never gives unchecked readings (<see cref="TapeVault.Core.Blocks.ConfidenceMap.GroupOf"/>).
    /// </summary>
    public static bool Covers(string key, IReadOnlySet<string> dumped)
    {
        string prefix = TapeVault.Core.Blocks.ConfidenceMap.ProfilePrefix;
        int slash = key.LastIndexOf('/');
        if (key.StartsWith(prefix, StringComparison.Ordinal))
        {
            return dumped.Contains(key[prefix.Length..slash]);
        }

        string family = key[..slash];
        var group = Enum.Parse<TapeVault.Core.Blocks.ConfidenceGroup>(key[(slash + 1)..]);
        return Trust.Subjects
            .Where(s => family == TapeVault.Core.Blocks.ConfidenceMap.PooledFamily || TapeVault.Core.Blocks.ConfidenceMap.FamilyName(s.Profile.Family) == family)
            .Where(s => CanGive(s.Profile, group))
            .All(s => dumped.Contains(s.Profile.Id));
    }

    private static bool CanGive(TapeVault.Core.Formats.FormatProfile profile, TapeVault.Core.Blocks.ConfidenceGroup group) =>
        profile.Layout.Checksum is null
            ? group is TapeVault.Core.Blocks.ConfidenceGroup.Unchecked or TapeVault.Core.Blocks.ConfidenceGroup.Broken
            : group is not TapeVault.Core.Blocks.ConfidenceGroup.Unchecked;

    /// <summary>The step function: bins of equal count, pooled where a later bin is right less often, Laplace-smoothed, never falling.</summary>
    public static (double[] X, double[] Y) Fit(List<(double Model, bool Right)> readings) => Fit(readings, Bins, LeastPerBin);

    /// <summary>As <see cref="Fit(List{ValueTuple{double, bool}})"/>, with at most <paramref name="bins"/> bins of at least <paramref name="leastPerBin"/> readings.</summary>
    public static (double[] X, double[] Y) Fit(List<(double Model, bool Right)> readings, int bins, int leastPerBin)
    {
        var sorted = readings.OrderBy(r => r.Model).ToList();
        bins = Math.Clamp(sorted.Count / leastPerBin, 1, bins);

        // Bins of equal count; readings of one model value stay in one bin.
        var pools = new List<(double SumModel, int Right, int Count)>();
        int start = 0;
        for (int b = 0; b < bins && start < sorted.Count; b++)
        {
            int end = b == bins - 1 ? sorted.Count : (int)((long)sorted.Count * (b + 1) / bins);
            while (end < sorted.Count && end > start && sorted[end].Model == sorted[end - 1].Model)
            {
                end++;
            }

            end = Math.Max(end, start + 1);
            double sum = 0;
            int right = 0;
            for (int i = start; i < end; i++)
            {
                sum += sorted[i].Model;
                right += sorted[i].Right ? 1 : 0;
            }

            pools.Add((sum, right, end - start));
            start = end;
        }

        // Pool adjacent violators.
        var stack = new List<(double SumModel, int Right, int Count)>();
        foreach (var pool in pools)
        {
            var current = pool;
            while (stack.Count > 0 && (double)stack[^1].Right / stack[^1].Count >= (double)current.Right / current.Count)
            {
                var top = stack[^1];
                stack.RemoveAt(stack.Count - 1);
                current = (top.SumModel + current.SumModel, top.Right + current.Right, top.Count + current.Count);
            }

            stack.Add(current);
        }

        var x = new List<double>();
        var y = new List<double>();
        double floor = 0;
        foreach (var (sumModel, right, count) in stack)
        {
            // Stored to six decimals: pools that round to one value are one step.
            double at = Math.Round(sumModel / count, 6);
            double rate = Math.Max(floor, (right + 1.0) / (count + 2.0));
            floor = rate;
            if (x.Count > 0 && at <= x[^1])
            {
                // Two pools at one model value: keep the later (higher) rate.
                y[^1] = rate;
                continue;
            }

            x.Add(at);
            y.Add(rate);
        }

        return ([.. x], [.. y]);
    }
}
