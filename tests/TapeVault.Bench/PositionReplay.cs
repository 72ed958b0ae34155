using System.Globalization;
using System.Text.Json;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;

namespace TapeVault.Bench;

/// <summary>
/// The positioner on readings already made: with TAPEVAULT_TRUST_CANDIDATES set to a folder, the trust bench saves every
/// capture's readings there (one JSON file per pass, with the blocks written); <c>positions --candidates FOLDER</c>
/// places them again with the positioner of this build and counts, per profile, the captures whose positions are as
/// many as the blocks written, the extra positions, and the positions that hold right readings of two different written
/// blocks (two blocks taken for one place). Decoding is by far the slow part of the trust bench, so this is how a change
/// to the positioner is tried on many captures.
/// </summary>
public static class PositionReplay
{
    private static readonly string? s_folder = Environment.GetEnvironmentVariable("TAPEVAULT_TRUST_CANDIDATES");

    private static readonly JsonSerializerOptions s_json = new() { NumberHandling = System.Text.Json.Serialization.JsonNumberHandling.AllowNamedFloatingPointLiterals };

    private sealed record Saved(string Profile, int Seed, int Pass, string Source, string[] Written, List<BlockCandidate> Candidates);

    public static void Save(FormatProfile profile, int seed, int pass, string source, List<byte[]> written, IReadOnlyList<BlockCandidate> candidates)
    {
        if (s_folder is null || profile.Layout.IsStream)
        {
            return;
        }

        Directory.CreateDirectory(s_folder);
        var saved = new Saved(profile.Id, seed, pass, source, [.. written.Select(Convert.ToHexString)], [.. candidates]);
        File.WriteAllText(Path.Combine(s_folder, $"{profile.Id}-{seed}-{pass}.json"), JsonSerializer.Serialize(saved, s_json));
    }

    public static int Run(string[] args)
    {
        string? folder = null;
        bool show = false;
        for (int i = 0; i < args.Length; i++)
        {
            switch (args[i])
            {
                case "--candidates": folder = args[++i]; break;
                case "--show": show = true; break;
                default: throw new ArgumentException($"Unknown option {args[i]}; positions takes --candidates FOLDER [--show].");
            }
        }

        if (folder is null)
        {
            throw new ArgumentException("positions needs --candidates FOLDER (a trust run's TAPEVAULT_TRUST_CANDIDATES).");
        }

        var rows = new List<(string Profile, int Written, int Positions, int Merged, bool AnyClean)>();
        var watch = System.Diagnostics.Stopwatch.StartNew();
        foreach (string file in Directory.GetFiles(folder, "*.json").Order(StringComparer.Ordinal))
        {
            var saved = JsonSerializer.Deserialize<Saved>(File.ReadAllText(file), s_json)!;
            // The trust bench's own profiles are not built in: take every profile from the bench's list.
            var profile = Trust.Subjects.Select(s => s.Profile).First(p => p.Id == saved.Profile);
            var written = saved.Written.Select(Convert.FromHexString).ToList();
            var unplaced = saved.Candidates.Select(c => c with { Position = -1 }).ToList();
            var placed = BlockPositioner.Place(unplaced, profile.Layout.Copies);
            int positions = placed.Select(c => c.Position).Distinct().Count();

            // Which written block a reading is, where its bytes are exactly one's (copies share their bytes but the sync).
            int merged = 0;
            foreach (var group in placed.GroupBy(c => c.Position))
            {
                var blocks = new HashSet<int>();
                foreach (var c in group)
                {
                    int w = WrittenIndex(profile, written, c);
                    if (w >= 0)
                    {
                        blocks.Add(w);
                    }
                }

                merged += blocks.Count > 1 ? blocks.Count - 1 : 0;
            }

            bool anyClean = placed.Any(c => c.Status == BlockStatus.Clean);
            rows.Add((saved.Profile, written.Count, positions, merged, anyClean));
            if (show && positions != written.Count)
            {
                Console.WriteLine($"{Path.GetFileName(file)}: written {written.Count}, positions {positions}, two blocks in one {merged}, clean readings {placed.Count(c => c.Status == BlockStatus.Clean)}");
                {
                    // Every reading, with the written blocks whose header it carries.
                    foreach (var c in placed)
                    {
                        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                            $"  pos {c.Position,3} {c.StartSeconds,9:0.000}-{c.EndSeconds,9:0.000} {c.SettingName,-4} {c.Status,-9} {(c.Truncated ? "cut" : "   ")} key {c.Identity.Key,-24} header of {string.Join(",", HeaderOf(profile, written, c))}"));
                    }
                }
            }
        }

        Console.WriteLine("Per profile (run this command at another commit to compare positioners on the same saved readings): captures, those whose positions are as many as the blocks");
        Console.WriteLine("written, fewer, more, the extra positions (and of them, on captures with no clean reading), and positions holding clean readings of two written blocks.");
        Console.WriteLine($"{"profile",-18} {"captures",8} {"matching",8} {"fewer",6} {"more",6} {"extra",6} {"extra, no clean",15} {"blocks joined",13}");
        foreach (var group in rows.GroupBy(r => r.Profile).OrderBy(g => g.Key, StringComparer.Ordinal).Append(rows.GroupBy(_ => "all").FirstOrDefault()))
        {
            if (group is null)
            {
                continue;
            }

            var d = group.Select(r => (Diff: r.Positions - r.Written, r.AnyClean)).ToList();
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{group.Key,-18} {d.Count,8} {d.Count(x => x.Diff == 0),8} {d.Count(x => x.Diff < 0),6} {d.Count(x => x.Diff > 0),6} {d.Where(x => x.Diff > 0).Sum(x => x.Diff),6} {d.Where(x => x.Diff > 0 && !x.AnyClean).Sum(x => x.Diff),15} {group.Sum(r => r.Merged),13}"));
        }

        Console.WriteLine($"{watch.Elapsed.TotalSeconds:0.0} s");
        return 0;
    }

    /// <summary>The written blocks whose header (after the sync field) the reading carries as read.</summary>
    private static IEnumerable<int> HeaderOf(FormatProfile profile, List<byte[]> written, BlockCandidate c)
    {
        int syncBytes = profile.Layout.Header.TakeWhile(f => f.Role == FieldRole.Sync).Sum(f => f.Bytes);
        int h = c.Header.Length;
        for (int w = 0; w < written.Count; w++)
        {
            if (h > syncBytes && written[w].Length >= h && c.Header.AsSpan()[syncBytes..].SequenceEqual(written[w].AsSpan(syncBytes, h - syncBytes)))
            {
                yield return w;
            }
        }
    }

    private static int WrittenIndex(FormatProfile profile, List<byte[]> written, BlockCandidate c)
    {
        if (c.Status != BlockStatus.Clean)
        {
            return -1;
        }

        // Header and payload as read, against each written block's (a sync field's copies differ; compare what follows).
        int syncBytes = profile.Layout.Header.TakeWhile(f => f.Role == FieldRole.Sync).Sum(f => f.Bytes);
        for (int w = 0; w < written.Count; w++)
        {
            var block = written[w];
            int h = c.Header.Length, n = c.Payload.Length;
            if (block.Length < h + n || h < syncBytes)
            {
                continue;
            }

            if (c.Header.AsSpan()[syncBytes..].SequenceEqual(block.AsSpan(syncBytes, h - syncBytes)) && c.Payload.AsSpan().SequenceEqual(block.AsSpan(h, n)))
            {
                return w;
            }
        }

        return -1;
    }
}
