using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;

namespace TapeVault.Bench;

/// <summary>
/// The merge on readings already made: <c>merge-replay --candidates FOLDER [--dump FILE]</c> merges again, with the merge
/// of this build, every tape of block format whose passes a trust run saved (TAPEVAULT_TRUST_CANDIDATES, see
/// <see cref="PositionReplay"/>), and judges its positions as the trust bench does: per profile, the positions, those
/// wrong and clean, the merged ECE and the positions wrong at confidence 0.99 or more. Decoding is by far the slow part
/// of the trust bench, and the merge reads nothing but the saved readings, so a change to the merge is tried on many
/// tapes in seconds. A second table counts the written blocks: those with a right position, the positions beyond one per
/// written block (missing ones counted: a place the merge could not join to its block's readings), and the exact images
/// as the trust bench counts them. With --dump, every position is written as a row (profile, seed, status, confidence,
/// right, agreeing captures, sources, key, and the index of the written block it is, or -1);
/// --trials-after-hit N bounds the repair search's patterns after one that holds (MergeOptions.TrialsAfterHit).
/// With --weak-shares, it also counts the readings whose weak check held unproven (TapeMerger.WeakReadings), right and
/// wrong by the written blocks, and of each those read by one detector setting only, per check strength and per profile:
/// the counts BlockMerge's shares for such readings are taken from.
/// </summary>
public static class MergeReplay
{
    public static int Run(string[] args)
    {
        string? folder = null;
        string? dump = null;
        bool weakShares = false;
        var options = new MergeOptions { CreatedUtc = DateTimeOffset.UnixEpoch };
        for (int i = 0; i < args.Length; i++)
        {
            switch (args[i])
            {
                case "--candidates": folder = args[++i]; break;
                case "--dump": dump = args[++i]; break;
                case "--weak-shares": weakShares = true; break;
                case "--trials-after-hit": options = options with { TrialsAfterHit = int.Parse(args[++i], CultureInfo.InvariantCulture) }; break;
                default: throw new ArgumentException($"Unknown option {args[i]}; merge-replay takes --candidates FOLDER [--dump FILE] [--trials-after-hit N] [--weak-shares].");
            }
        }

        if (folder is null)
        {
            throw new ArgumentException("merge-replay needs --candidates FOLDER (a trust run's TAPEVAULT_TRUST_CANDIDATES).");
        }

        var saved = Directory.GetFiles(folder, "*.json")
            .Select(f => JsonSerializer.Deserialize<PositionReplay.Saved>(File.ReadAllText(f), PositionReplay.Json)!)
            .GroupBy(s => (s.Profile, s.Seed))
            .Where(g => g.Count() == Trust.PassesPerTape)
            .OrderBy(g => g.Key.Profile, StringComparer.Ordinal).ThenBy(g => g.Key.Seed)
            .ToList();
        var rows = new List<(string Profile, int Seed, RecoveryStatus Status, double Confidence, bool Right)>();
        var tapes = new List<(string Profile, int Written, int Found, int Positions, bool Exact, double Overall, double Product, int DoubtedKeys)>();
        var lines = new List<string>();
        var weak = new List<(string Profile, WeakReading Reading, bool Right)>();
        var watch = System.Diagnostics.Stopwatch.StartNew();
        var cpu = System.Diagnostics.Process.GetCurrentProcess().TotalProcessorTime;
        foreach (var tape in saved)
        {
            var profile = Trust.Subjects.Select(s => s.Profile).First(p => p.Id == tape.Key.Profile);
            var passes = tape.OrderBy(s => s.Pass).Select(s => new MergePass(
                new ImageSource(Sha256($"{s.Profile}-{s.Seed}-{s.Pass}"), $"{s.Profile}-{s.Seed}-{s.Pass}.wav", 44_100, 1, s.Candidates.Select(c => c.EndSeconds).DefaultIfEmpty(0).Max()),
                s.Candidates,
                "replay")).ToList();
            var written = tape.First().Written.Select(Convert.FromHexString).ToList();
            var truth = RecoveryCorpus.WrittenIndex(profile, written);
            var image = TapeMerger.Merge(passes, profile, options);
            if (weakShares)
            {
                weak.AddRange(TapeMerger.WeakReadings(passes, profile, options)
                    .Select(w => (profile.Id, w, truth.ContainsKey(RecoveryCorpus.HeaderAndPayload(w.Header.AsSpan(), w.Payload.AsSpan())))));
            }

            var found = new HashSet<int>();
            bool exact = image.Blocks.Length == written.Count;
            foreach (var block in image.Blocks)
            {
                int index = truth.GetValueOrDefault(RecoveryCorpus.HeaderAndPayload(block.Header.AsSpan(), block.Payload.AsSpan()), -1);
                bool right = block.Status != RecoveryStatus.Missing && index >= 0;

                // Exact as the trust bench counts it: every position clean, right and read alike by two captures or more.
                exact &= right && block.Status == RecoveryStatus.Clean && block.AgreeingCaptures >= 2;
                if (block.Status == RecoveryStatus.Missing)
                {
                    continue;
                }

                if (right)
                {
                    found.Add(index);
                }

                rows.Add((profile.Id, tape.Key.Seed, block.Status, block.Confidence, right));
                lines.Add(string.Join('\t', profile.Id, tape.Key.Seed, block.Status, block.Confidence.ToString("R", CultureInfo.InvariantCulture), right ? 1 : 0, block.AgreeingCaptures, block.Sources.Length, block.Key, right ? index : -1));
            }

            // The image's overall confidence, and the product of its recovered positions' confidences (what it was before
            // keys' doubts were counted once): the same wherever no key is doubted, as a block format's never is.
            double product = image.Blocks.Where(b => b.Status != RecoveryStatus.Missing).Aggregate(1.0, (p, b) => p * b.Confidence);
            tapes.Add((profile.Id, written.Count, found.Count, image.Blocks.Length, exact && found.Count == written.Count,
                image.OverallConfidence, product, image.Blocks.Count(b => b.KeyConfidence < 1)));
        }

        if (dump is not null)
        {
            File.WriteAllLines(dump, lines);
        }

        Console.WriteLine("Merged positions of block formats (missing ones left out): wrong clean, ECE over 10 equal bins, wrong at 0.99 or more;");
        Console.WriteLine("then per status: positions, right, mean confidence.");
        Console.WriteLine($"{"profile",-18} {"tapes",5} {"positions",9} {"wrong clean",11} {"ECE merged",10} {"wrong >= 0.99",13}  per status");
        foreach (var group in rows.GroupBy(r => r.Profile).Append(rows.GroupBy(_ => "all").FirstOrDefault()))
        {
            if (group is null)
            {
                continue;
            }

            var items = group.ToList();
            string statuses = string.Join("  ", items.GroupBy(r => r.Status).OrderBy(g => g.Key).Select(g =>
                string.Create(CultureInfo.InvariantCulture, $"{g.Key} {g.Count()} {g.Count(r => r.Right)} {g.Average(r => r.Confidence):0.000}")));
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{group.Key,-18} {items.Select(r => r.Seed).Distinct().Count(),5} {items.Count,9} {items.Count(r => !r.Right && r.Status == RecoveryStatus.Clean),11} " +
                $"{Calibration.EqualBinEce([.. items.Select(r => (r.Confidence, r.Right))]),10:0.0000} {items.Count(r => !r.Right && r.Confidence >= Trust.StreamConfidentWrong),13}  {statuses}"));
        }

        Console.WriteLine();
        Console.WriteLine("Written blocks: with a right position and without; positions (missing ones too) beyond one per written block,");
        Console.WriteLine("summed over tapes, and the tapes with any; exact images (every position clean, right, read alike by two captures).");
        Console.WriteLine("Least exact: the least overall confidence of the exact images; doubted keys: positions whose key confidence is below 1;");
        Console.WriteLine("overall ≠ product: images whose overall confidence differs by more than 1e-12 from the product of their positions' confidences.");
        Console.WriteLine($"{"profile",-18} {"tapes",5} {"written",7} {"found",6} {"not found",9} {"extra positions",15} {"on tapes",8} {"exact",5} {"least exact",11} {"doubted keys",12} {"overall ≠ product",17}");
        foreach (var group in tapes.GroupBy(t => t.Profile).Append(tapes.GroupBy(_ => "all").FirstOrDefault()))
        {
            if (group is null)
            {
                continue;
            }

            var items = group.ToList();
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{group.Key,-18} {items.Count,5} {items.Sum(t => t.Written),7} {items.Sum(t => t.Found),6} {items.Sum(t => t.Written - t.Found),9} " +
                $"{items.Sum(t => Math.Max(0, t.Positions - t.Written)),15} {items.Count(t => t.Positions > t.Written),8} {items.Count(t => t.Exact),5} " +
                $"{items.Where(t => t.Exact).Select(t => t.Overall).DefaultIfEmpty(double.NaN).Min(),11:0.0000} {items.Sum(t => t.DoubtedKeys),12} {items.Count(t => Math.Abs(t.Overall - t.Product) > 1e-12),17}"));
        }

        if (weakShares)
        {
            PrintWeakShares(weak);
        }

        Console.WriteLine($"{saved.Count} tapes merged in {watch.Elapsed.TotalSeconds:0.0} s wall, {(System.Diagnostics.Process.GetCurrentProcess().TotalProcessorTime - cpu).TotalSeconds:0.0} s processor time (load {MachineLoad.Averages()})");
        return 0;
    }

    /// <summary>
    /// Readings whose weak check held unproven, per check strength and per profile: right ones, and of them those read by one
    /// setting only; the same of wrong ones; then the same at places no check proved (where the merge weighs them).
    /// </summary>
    private static void PrintWeakShares(List<(string Profile, WeakReading Reading, bool Right)> weak)
    {
        Console.WriteLine();
        Console.WriteLine("Readings whose weak check held unproven (all places | places no check proved): right, right read by one setting only,");
        Console.WriteLine("wrong, wrong read by one setting only.");
        Console.WriteLine($"{"check / profile",-24} {"right",7} {"alone",6} {"wrong",6} {"alone",6} | {"right",6} {"alone",6} {"wrong",6} {"alone",6}");
        var keys = weak.GroupBy(w => w.Reading.CheckStrength.ToString().ToLowerInvariant()).OrderBy(g => g.Key, StringComparer.Ordinal)
            .SelectMany(g => g.GroupBy(w => w.Profile).OrderBy(p => p.Key, StringComparer.Ordinal)
                .Select(p => ($"  {p.Key}", p.ToList()))
                .Prepend((g.Key, g.ToList())));
        foreach (var (key, items) in keys)
        {
            var unproven = items.Where(w => !w.Reading.AtProvenPlace).ToList();
            Console.WriteLine($"{key,-24} {Counts(items, 7)} | {Counts(unproven, 6)}");
        }

        static string Counts(List<(string Profile, WeakReading Reading, bool Right)> items, int width) =>
            string.Join(' ', new[]
            {
                items.Count(w => w.Right).ToString(CultureInfo.InvariantCulture).PadLeft(width),
                items.Count(w => w.Right && w.Reading.ByOneSettingOnly).ToString(CultureInfo.InvariantCulture).PadLeft(6),
                items.Count(w => !w.Right).ToString(CultureInfo.InvariantCulture).PadLeft(6),
                items.Count(w => !w.Right && w.Reading.ByOneSettingOnly).ToString(CultureInfo.InvariantCulture).PadLeft(6),
            });
    }

    private static string Sha256(string text) => Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(text)));
}
