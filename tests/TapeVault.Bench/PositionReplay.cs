using System.Globalization;
using System.Text.Json;
using System.Text.RegularExpressions;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;

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

    internal static readonly JsonSerializerOptions Json = new() { NumberHandling = System.Text.Json.Serialization.JsonNumberHandling.AllowNamedFloatingPointLiterals };

    /// <summary>
    /// One capture's readings and the blocks written; <paramref name="Copies"/>, where the pass came from our channel model
    /// (then SoX or not), is where each copy of each written block lies in the capture (seconds: from its lead-in or gap,
    /// from its sync, to its end), from the damage's speed and margin and SoX's speed; wow and flutter move it by a few
    /// milliseconds at most. Null in older saves and for minimodem's passes.
    /// </summary>
    /// <paramref name="Damage"/> is the pass's damage in words and <paramref name="Dropouts"/> the channel's dropouts moved
    /// onto the capture's time as the copies are (null in older saves and for minimodem's passes): with them, a block no
    /// setting read can be told from one the damage took.
    internal sealed record Saved(string Profile, int Seed, int Pass, string Source, string[] Written, List<BlockCandidate> Candidates, List<WrittenSpan>? Copies = null, string? Damage = null, List<Dropout>? Dropouts = null);

    public static void Save(FormatProfile profile, int seed, int pass, string source, List<byte[]> written, IReadOnlyList<BlockCandidate> candidates, (ChannelDamage Damage, string Description)? damage)
    {
        if (s_folder is null || profile.Layout.IsStream)
        {
            return;
        }

        Directory.CreateDirectory(s_folder);
        List<WrittenSpan>? copies = null;
        List<Dropout>? dropouts = null;
        if (damage is { } d)
        {
            var spans = new List<WrittenSpan>();
            double tapeSeconds = 0;
            foreach (double reversal in FluxWriter.Reversals(profile, written, spans))
            {
                tapeSeconds = reversal;
            }

            // SoX's speed effect, where its chain (after our channel's description, which gives the channel's own speed) has one.
            int chain = d.Description.IndexOf("; sox ", StringComparison.Ordinal);
            double sox = chain >= 0 && Regex.Match(d.Description[chain..], @"\bspeed ([0-9.]+)") is { Success: true } m ? double.Parse(m.Groups[1].Value, CultureInfo.InvariantCulture) : 1;
            double Capture(double tape) => (d.Damage.MarginSeconds + (tape / d.Damage.Speed)) / sox;
            copies = [.. spans.Select(s => s with { StartSeconds = Capture(s.StartSeconds), DataSeconds = Capture(s.DataSeconds), EndSeconds = Capture(s.EndSeconds) })];

            // The channel draws its dropouts from the damage's seed over the capture's length (margins included), in capture time.
            dropouts = [.. new ChannelModel([], d.Damage, tapeSeconds).Dropouts.Select(x => x with { StartSeconds = x.StartSeconds / sox, DurationSeconds = x.DurationSeconds / sox })];
        }

        var saved = new Saved(profile.Id, seed, pass, source, [.. written.Select(Convert.ToHexString)], [.. candidates], copies, damage?.Description, dropouts);
        File.WriteAllText(Path.Combine(s_folder, $"{profile.Id}-{seed}-{pass}.json"), JsonSerializer.Serialize(saved, Json));
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
        var layoutRows = new List<(string Profile, LayoutTally Tally)>();
        var watch = System.Diagnostics.Stopwatch.StartNew();
        foreach (string file in Directory.GetFiles(folder, "*.json").Order(StringComparer.Ordinal))
        {
            var saved = JsonSerializer.Deserialize<Saved>(File.ReadAllText(file), Json)!;
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
            var copies = saved.Copies is { } layout ? Refined(layout, placed) : null;
            var tally = copies is not null ? Tally(placed, copies) : null;
            if (tally is not null)
            {
                var unread = Unread(placed, copies!, saved.Dropouts).ToList();
                tally = tally with { Unread = unread.Count, UnreadUndamaged = unread.Count(u => u.Where == "none") };
                layoutRows.Add((saved.Profile, tally));
            }

            if (show && positions != written.Count)
            {
                Console.WriteLine($"{Path.GetFileName(file)}: written {written.Count}, positions {positions}, two blocks in one {merged}, clean readings {placed.Count(c => c.Status == BlockStatus.Clean)}");
                {
                    // Every reading, with the written blocks whose header it carries.
                    if (tally is not null)
                    {
                        Console.WriteLine($"  layout: blocks read {tally.BlocksRead}, positions of none {tally.NoBlock}, split {tally.Split}, joined {tally.Joined}; {saved.Damage}");
                        foreach (var (block, where) in Unread(placed, copies!, saved.Dropouts))
                        {
                            Console.WriteLine($"  unread {block.Block}.{block.Copy} {block.StartSeconds:0.000}/{block.DataSeconds:0.000}-{block.EndSeconds:0.000}: {where}");
                        }
                    }

                    foreach (var c in placed)
                    {
                        string at = copies is null ? "-"
                            : StartsAt(c, copies) is { } w ? $"{w.Block}.{w.Copy}{(w.Inside ? " in" : string.Empty)}"
                            : Before(c, copies) is { } b ? string.Create(CultureInfo.InvariantCulture, $"<{b.Block}.{b.Copy}-{(b.DataSeconds - c.StartSeconds) * 1000:0}")
                            : "-";
                        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                            $"  pos {c.Position,3} {c.StartSeconds,9:0.000}-{c.EndSeconds,9:0.000} {at,-7} {c.SettingName,-4} {c.Status,-9} {(c.Truncated ? "cut" : "   ")} pay {c.Payload.Length,3} key {c.Identity.Key,-24} header of {string.Join(",", HeaderOf(profile, written, c))}"));
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

        if (layoutRows.Count > 0)
        {
            Console.WriteLine();
            Console.WriteLine("Against the written layout (passes of our channel model, with or without SoX: where each copy lies in the capture): each reading");
            Console.WriteLine("belongs to the written block whose copy's sync it starts at (within 50 ms), or whose copy it starts inside; blocks read: blocks");
            Console.WriteLine("with a reading; positions of none: positions with no reading of a block; split: positions more than blocks read, over");
            Console.WriteLine("the blocks read in two positions or more; joined: positions holding readings of two blocks or more (one per block over one).");
            Console.WriteLine("Unread: written copies no reading starts at or inside; no dropout: of them, those no dropout of the channel lies over.");
            Console.WriteLine($"{"profile",-18} {"captures",8} {"written",8} {"read",6} {"positions",9} {"of none",7} {"split",6} {"joined",6} {"unread",6} {"no dropout",10}");
            foreach (var group in layoutRows.GroupBy(r => r.Profile).OrderBy(g => g.Key, StringComparer.Ordinal))
            {
                var t = group.Select(r => r.Tally).ToList();
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"{group.Key,-18} {t.Count,8} {t.Sum(x => x.Written),8} {t.Sum(x => x.BlocksRead),6} {t.Sum(x => x.Positions),9} {t.Sum(x => x.NoBlock),7} {t.Sum(x => x.Split),6} {t.Sum(x => x.Joined),6} {t.Sum(x => x.Unread),6} {t.Sum(x => x.UnreadUndamaged),10}"));
            }
        }

        Console.WriteLine($"{watch.Elapsed.TotalSeconds:0.0} s");
        return 0;
    }

    /// <summary>
    /// The written layout moved onto the readings: an affine map of its times (offset and scale) fitted by least squares to
    /// the readings' starts, each matched to the nearest copy's sync, six times over. Wow and flutter, which the saved
    /// layout leaves out, move a copy by a few milliseconds; readings made before the SoX speed was read right need it.
    /// </summary>
    private static List<WrittenSpan> Refined(List<WrittenSpan> layout, List<BlockCandidate> readings)
    {
        var spans = layout;
        for (int round = 0; round < 6 && readings.Count > 1; round++)
        {
            double n = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
            foreach (var c in readings)
            {
                var nearest = spans.MinBy(s => Math.Abs(s.DataSeconds - c.StartSeconds));
                if (Math.Abs(nearest.DataSeconds - c.StartSeconds) > 0.1)
                {
                    continue;
                }

                int k = spans.IndexOf(nearest);
                double x = layout[k].DataSeconds;
                n++;
                sx += x;
                sy += c.StartSeconds;
                sxx += x * x;
                sxy += x * c.StartSeconds;
            }

            double det = (n * sxx) - (sx * sx);
            if (n < 2 || Math.Abs(det) < 1e-9)
            {
                break;
            }

            double scale = ((n * sxy) - (sx * sy)) / det;
            double offset = (sy - (scale * sx)) / n;
            spans = [.. layout.Select(s => s with { StartSeconds = offset + (scale * s.StartSeconds), DataSeconds = offset + (scale * s.DataSeconds), EndSeconds = offset + (scale * s.EndSeconds) })];
        }

        return spans;
    }

    /// <summary>
    /// The written copies no reading starts at or inside, each with the dropouts over it: "lead-in" where one lies
    /// between the copy's start and 50 ms after its sync, "data" where one lies after that, "none" else.
    /// </summary>
    private static IEnumerable<(WrittenSpan Block, string Where)> Unread(List<BlockCandidate> placed, List<WrittenSpan> layout, List<Dropout>? dropouts)
    {
        var read = new HashSet<(int, int)>();
        foreach (var c in placed)
        {
            if (StartsAt(c, layout) is { } w)
            {
                read.Add((w.Block, w.Copy));
            }
        }

        foreach (var s in layout)
        {
            if (read.Contains((s.Block, s.Copy)))
            {
                continue;
            }

            var over = (dropouts ?? []).Where(d => d.StartSeconds < s.EndSeconds && d.StartSeconds + d.DurationSeconds > s.StartSeconds).ToList();
            string where = dropouts is null ? "dropouts unknown"
                : over.Count == 0 ? "none"
                : string.Join(", ", over.Select(d => string.Create(CultureInfo.InvariantCulture,
                    $"{(d.StartSeconds < s.DataSeconds + 0.05 ? "lead-in" : "data")} {d.StartSeconds:0.000}+{d.DurationSeconds * 1000:0}ms {20 * Math.Log10(1 - d.Depth):0}dB")));
            yield return (s, where);
        }
    }

    /// <summary>One capture against its written layout (see the table <see cref="Run"/> prints).</summary>
    private sealed record LayoutTally(int Written, int BlocksRead, int Positions, int NoBlock, int Split, int Joined, int Unread = 0, int UnreadUndamaged = 0);

    private static LayoutTally Tally(List<BlockCandidate> placed, List<WrittenSpan> layout)
    {
        var blocksOf = new Dictionary<int, HashSet<int>>();
        var positionsOf = new Dictionary<int, HashSet<int>>();
        foreach (var c in placed)
        {
            if (!blocksOf.TryGetValue(c.Position, out var blocks))
            {
                blocksOf[c.Position] = blocks = [];
            }

            if (StartsAt(c, layout) is { } w)
            {
                blocks.Add(w.Block);
                if (!positionsOf.TryGetValue(w.Block, out var positions))
                {
                    positionsOf[w.Block] = positions = [];
                }

                positions.Add(c.Position);
            }
        }

        return new LayoutTally(
            layout.Select(s => s.Block).Distinct().Count(),
            positionsOf.Count,
            blocksOf.Count,
            blocksOf.Values.Count(b => b.Count == 0),
            positionsOf.Values.Sum(p => p.Count - 1),
            blocksOf.Values.Sum(b => Math.Max(0, b.Count - 1)));
    }

    /// <summary>The written copy whose sync the reading starts at (within 50 ms), else the one it starts inside; null in a gap or lead-in.</summary>
    private static (int Block, int Copy, bool Inside)? StartsAt(BlockCandidate c, List<WrittenSpan> layout)
    {
        foreach (var s in layout)
        {
            if (Math.Abs(c.StartSeconds - s.DataSeconds) <= 0.05)
            {
                return (s.Block, s.Copy, false);
            }
        }

        foreach (var s in layout)
        {
            if (c.StartSeconds > s.DataSeconds && c.StartSeconds < s.EndSeconds)
            {
                return (s.Block, s.Copy, true);
            }
        }

        return null;
    }

    /// <summary>The written copy in whose lead-in (or the gap before it) the reading starts, where it starts before no sync's 50 ms.</summary>
    private static WrittenSpan? Before(BlockCandidate c, List<WrittenSpan> layout)
    {
        foreach (var s in layout)
        {
            if (c.StartSeconds < s.DataSeconds)
            {
                return s;
            }
        }

        return null;
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
