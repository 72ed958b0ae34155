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
/// tapes in seconds. With --dump, every position is written as a row (profile, seed, status, confidence, right, key);
/// --trials-after-hit N bounds the repair search's patterns after one that holds (MergeOptions.TrialsAfterHit).
/// </summary>
public static class MergeReplay
{
    public static int Run(string[] args)
    {
        string? folder = null;
        string? dump = null;
        var options = new MergeOptions { CreatedUtc = DateTimeOffset.UnixEpoch };
        for (int i = 0; i < args.Length; i++)
        {
            switch (args[i])
            {
                case "--candidates": folder = args[++i]; break;
                case "--dump": dump = args[++i]; break;
                case "--trials-after-hit": options = options with { TrialsAfterHit = int.Parse(args[++i], CultureInfo.InvariantCulture) }; break;
                default: throw new ArgumentException($"Unknown option {args[i]}; merge-replay takes --candidates FOLDER [--dump FILE] [--trials-after-hit N].");
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
        var lines = new List<string>();
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
            var judge = Trust.Judge(profile, [], written, out _);
            var image = TapeMerger.Merge(passes, profile, options);
            foreach (var block in image.Blocks.Where(b => b.Status != RecoveryStatus.Missing))
            {
                bool right = judge(block.Header.AsSpan(), block.Payload.AsSpan());
                rows.Add((profile.Id, tape.Key.Seed, block.Status, block.Confidence, right));
                lines.Add(string.Join('\t', profile.Id, tape.Key.Seed, block.Status, block.Confidence.ToString("R", CultureInfo.InvariantCulture), right ? 1 : 0, block.AgreeingCaptures, block.Sources.Length, block.Key));
            }
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

        Console.WriteLine($"{saved.Count} tapes merged in {watch.Elapsed.TotalSeconds:0.0} s wall, {(System.Diagnostics.Process.GetCurrentProcess().TotalProcessorTime - cpu).TotalSeconds:0.0} s processor time (load {MachineLoad.Averages()})");
        return 0;
    }

    private static string Sha256(string text) => Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(text)));
}
