using System.Globalization;
using System.Text.Json;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;

namespace TapeVault.Bench;

/// <summary>
/// The stream merge on readings already made: with TAPEVAULT_TRUST_STREAMS set to a folder, the trust bench saves every
/// stream tape's passes there (one JSON file per tape: the files written and each capture's readings); <c>stream-merge
/// --streams FOLDER [--dump FILE]</c> merges them again with the merge of this build and reports, per profile, the
/// merged positions, those wrong at 0.99 or more, the log-likelihood of right and wrong under the confidences (what a fit of the merge's constants maximises), the ECE (10 equal bins), the exact images and the reliability bins,
/// and how much such an ECE can show on so few tapes (<see cref="EceSpread"/>).
/// Decoding is by far the slow part of the trust bench, so this is how a change to the stream merge is tried; the
/// figures are the trust bench's own for the same tapes (the same judges: <see cref="RecoveryCorpus.Place"/> for merged
/// segments, <see cref="StreamPlaces"/> for single readings). With --reads FILE every single reading is written as the
/// trust bench's dump writes it (judged at its place), for trust-fit; with --remap each single reading's confidence is
/// its model confidence mapped by this build's confidence map (what a decode by this build would give it), so that a
/// refit of the map is measured on readings decoded before it.
/// </summary>
public static class StreamReplay
{
    private static readonly string? s_folder = Environment.GetEnvironmentVariable("TAPEVAULT_TRUST_STREAMS");

    private static readonly JsonSerializerOptions s_json = new() { NumberHandling = System.Text.Json.Serialization.JsonNumberHandling.AllowNamedFloatingPointLiterals };

    private sealed record SavedFile(string Name, string Content);

    private sealed record SavedTape(string Profile, int Seed, List<SavedFile> Files, List<string> Sources, List<MergePass> Passes);

    public static void Save(FormatProfile profile, int seed, List<TapeFile> files, List<string> sources, List<MergePass> passes)
    {
        if (s_folder is null || !profile.Layout.IsStream)
        {
            return;
        }

        Directory.CreateDirectory(s_folder);
        var saved = new SavedTape(profile.Id, seed, [.. files.Select(f => new SavedFile(f.Name, Convert.ToHexString(f.Content)))], sources, passes);
        File.WriteAllText(Path.Combine(s_folder, $"{profile.Id}-{seed}.json"), JsonSerializer.Serialize(saved, s_json));
    }

    /// <summary>
    /// How far the ECE of a few hundred merged positions says anything: the mean ECE if each position were right with
    /// exactly the chance its confidence claims (outcomes drawn <see cref="SpreadDraws"/> times), and the 10th and 90th
    /// percentile of the ECE over sets of the same number of tapes drawn again from these (a tape's positions together: a
    /// damaged tape gives many alike). Seeded, so a run prints the same figures.
    /// </summary>
    private static (double Floor, double Low, double High) EceSpread(List<(int Tape, double Confidence, bool Right)> items)
    {
        var random = new Random(1);
        double floor = 0;
        for (int d = 0; d < SpreadDraws; d++)
        {
            floor += Calibration.EqualBinEce([.. items.Select(i => (i.Confidence, random.NextDouble() < i.Confidence))]);
        }

        var tapes = items.GroupBy(i => i.Tape).Select(g => g.Select(i => (i.Confidence, i.Right)).ToList()).ToList();
        var drawn = new List<double>(SpreadDraws);
        for (int d = 0; d < SpreadDraws; d++)
        {
            var set = new List<(double, bool)>();
            for (int t = 0; t < tapes.Count; t++)
            {
                set.AddRange(tapes[random.Next(tapes.Count)]);
            }

            drawn.Add(set.Count == 0 ? 0 : Calibration.EqualBinEce(set));
        }

        drawn.Sort();
        return (floor / SpreadDraws, drawn[SpreadDraws / 10], drawn[(SpreadDraws * 9) / 10]);
    }

    private const int SpreadDraws = 200;

    /// <summary>
    /// Each silence before a stretch of the image whose place is known: whether the merge doubted its key there (the key's
    /// doubt falls from the stretch before) and whether a file no capture read lies there (the files the stretch's first
    /// right segment of four bytes or more lines up with, less its key, grew since the stretch before). Counts for
    /// <see cref="StreamMerge.UnreadStretchAtStart"/> and <see cref="StreamMerge.UnreadStretchBetween"/>.
    /// </summary>
    private static void CountSilences(TapeImage image, List<TapeFile> files, string profile, Dictionary<(string, bool, bool, bool), int> silences)
    {
        int lastStretch = -1, lastShift = 0;
        double lastKey = 1;
        foreach (var block in image.Blocks)
        {
            if (block.Status == RecoveryStatus.Missing || block.Payload.Length < 4 || !block.Key.StartsWith('#'))
            {
                continue;
            }

            int stretch = int.Parse(block.Key.TrimStart('#').Split('+')[0], CultureInfo.InvariantCulture);
            var (file, offset, count) = Trust.BestAlignment(block.Payload.AsSpan(), files);
            if (stretch <= lastStretch || count != block.Payload.Length || offset < 0)
            {
                continue;
            }

            int shift = file - stretch;
            bool doubted = block.KeyConfidence < lastKey, hid = shift > lastShift;
            var key = (profile, lastStretch < 0, doubted, hid);
            silences[key] = silences.GetValueOrDefault(key) + 1;
            (lastStretch, lastShift, lastKey) = (stretch, shift, block.KeyConfidence);
        }
    }

    public static int Run(string[] args)
    {
        string? folder = null, dump = null, reads = null;
        bool remap = false;
        for (int i = 0; i < args.Length; i++)
        {
            switch (args[i])
            {
                case "--streams": folder = args[++i]; break;
                case "--dump": dump = args[++i]; break;
                case "--reads": reads = args[++i]; break;
                case "--remap": remap = true; break;
                default: throw new ArgumentException($"Unknown option {args[i]}; stream-merge takes --streams FOLDER [--dump FILE] [--reads FILE] [--remap].");
            }
        }

        if (folder is null)
        {
            throw new ArgumentException("stream-merge needs --streams FOLDER (a trust run's TAPEVAULT_TRUST_STREAMS).");
        }

        var options = new MergeOptions { CreatedUtc = DateTimeOffset.UnixEpoch };
        var rows = new List<(string Profile, int Seed, double Confidence, bool Right, bool Anywhere)>();
        var singles = new List<(string Profile, double Confidence, bool Right, bool Anywhere, bool Unplaced)>();
        var readRows = new List<string>();
        var exactTapes = new Dictionary<string, (int Tapes, int Exact, double Least, int Doubted)>();
        var lines = new List<string>();
        var silences = new Dictionary<(string Profile, bool First, bool Room, bool Hid), int>();
        var watch = System.Diagnostics.Stopwatch.StartNew();
        foreach (string file in Directory.GetFiles(folder, "*.json").Order(StringComparer.Ordinal))
        {
            var saved = JsonSerializer.Deserialize<SavedTape>(File.ReadAllText(file), s_json)!;
            var profile = ProfileCatalog.BuiltIn.Get(saved.Profile);
            var files = saved.Files.Select(f => new TapeFile(f.Name, Convert.FromHexString(f.Content))).ToList();
            var bases = new int[files.Count];
            for (int f = 1; f < files.Count; f++)
            {
                bases[f] = bases[f - 1] + files[f - 1].Content.Length;
            }

            // Single readings, judged at the place their time claims (as the trust bench judges them) and lined up anywhere.
            for (int p = 0; p < saved.Passes.Count; p++)
            {
                var places = StreamPlaces.Fit(saved.Passes[p].Candidates, files);
                foreach (var saving in saved.Passes[p].Candidates)
                {
                    // --remap: the confidence this build's map gives the reading's model confidence, as its block scorer
                    // would (a stream reading is never clean, and its format has no check that could hold over nothing).
                    var c = remap
                        ? saving with { Confidence = Math.Clamp(ConfidenceMap.Default.Map(profile.Id, profile.Family, ConfidenceMap.GroupOf(saving.Status, saving.Doubts), saving.ModelConfidence), 0, 1) }
                        : saving;
                    bool anywhere = RecoveryCorpus.Place(c.Payload.AsSpan(), files, bases, null);
                    var verdict = places.Judge(c);
                    bool right = Trust.JudgeStream(places, c, _ => anywhere);
                    singles.Add((saved.Profile, c.Confidence, right, anywhere, verdict == StreamPlaces.Verdict.Unplaced));
                    readRows.Add(Trust.ReadRow(profile, saved.Seed, p, saved.Sources[p], c, right));
                }
            }

            var image = TapeMerger.Merge(saved.Passes, profile, options);
            bool exact = image.Blocks.Length == files.Count;
            for (int bi = 0; bi < image.Blocks.Length; bi++)
            {
                var block = image.Blocks[bi];
                if (block.Status == RecoveryStatus.Missing)
                {
                    exact = false;
                    continue;
                }

                // Right as the trust bench judges: lined up with the written bytes, a short segment where its key puts it;
                // and, for comparison with figures before that rule, lined up anywhere.
                bool anywhere = RecoveryCorpus.Place(block.Payload.AsSpan(), files, bases, null);
                bool right = anywhere && Trust.ShortSegmentInPlace(block.Key, block.Payload.AsSpan(), files);
                exact &= right && block.AgreeingCaptures >= 2;
                rows.Add((saved.Profile, saved.Seed, block.Confidence, right, anywhere));
                bool gapBefore = bi > 0 && image.Blocks[bi - 1].Status == RecoveryStatus.Missing;
                bool gapAfter = bi + 1 < image.Blocks.Length && image.Blocks[bi + 1].Status == RecoveryStatus.Missing;
                lines.Add(string.Join('\t', saved.Profile, saved.Seed, block.Key, block.Confidence.ToString("R", CultureInfo.InvariantCulture), right ? 1 : 0,
                    block.AgreeingCaptures, block.Sources.Length, block.Payload.Length, gapBefore ? 1 : 0, gapAfter ? 1 : 0,
                    string.Join(',', block.Sources.Select(s => s.Confidence.ToString("0.###", CultureInfo.InvariantCulture))),
                    right ? "-" : Trust.StreamErrorWhere(block.Payload.AsSpan(), files), anywhere ? 1 : 0, Convert.ToHexString(block.Payload.AsSpan())));
            }

            CountSilences(image, files, saved.Profile, silences);
            var t = exactTapes.GetValueOrDefault(saved.Profile, (Tapes: 0, Exact: 0, Least: 1.0, Doubted: 0));
            exactTapes[saved.Profile] = (t.Tapes + 1, t.Exact + (exact ? 1 : 0), exact ? Math.Min(t.Least, image.OverallConfidence) : t.Least,
                t.Doubted + (exact && image.Blocks.Any(b => b.KeyConfidence < 1) ? 1 : 0));
        }

        Console.WriteLine("Right: lined up with the written bytes, a segment of fewer than four bytes where its key puts it (Trust.ShortSegmentInPlace);");
        Console.WriteLine("ECE anywhere: short segments lined up anywhere in the files, as the trust bench judged them before that rule.");
        Console.WriteLine("exact: images of one right position per file, each agreed by two captures; least exact: their least overall confidence;");
        Console.WriteLine("keyed: exact images with a key doubted (a silence before a stretch with room for a file no capture read).");
        Console.WriteLine($"{"profile",-10} {"tapes",5} {"positions",9} {"wrong ≥0.99",11} {"ECE merged",10} {"ECE anywhere",12} {"exact",5} {"least exact",11} {"keyed",5}");
        foreach (var group in rows.GroupBy(r => r.Profile).OrderBy(g => g.Key, StringComparer.Ordinal))
        {
            var items = group.Select(r => (r.Confidence, r.Right)).ToList();
            var (tapes, exact, least, doubted) = exactTapes[group.Key];
            double logLikelihood = items.Sum(i => Math.Log(Math.Clamp(i.Right ? i.Confidence : 1 - i.Confidence, 1e-9, 1)));
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{group.Key}: log-likelihood of right and wrong {logLikelihood:0.0}"));
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{group.Key,-10} {tapes,5} {items.Count,9} {items.Count(i => !i.Right && i.Confidence >= Trust.StreamConfidentWrong),11} {Calibration.EqualBinEce(items),10:0.0000} {Calibration.EqualBinEce([.. group.Select(r => (r.Confidence, r.Anywhere))]),12:0.0000} {exact,5} {least,11:0.0000} {doubted,5}"));
            var (floor, low, high) = EceSpread([.. group.Select(r => (r.Seed, r.Confidence, r.Right))]);
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{group.Key}: ECE a calibrated merge would show on these positions {floor:0.0000}; tapes drawn again, 10–90 % {low:0.0000}–{high:0.0000}"));
            foreach (var bin in items.GroupBy(i => Math.Clamp((int)(i.Confidence * 10), 0, 9)).OrderBy(b => b.Key))
            {
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"    [{bin.Key / 10.0:0.0}, {(bin.Key + 1) / 10.0:0.0}): {bin.Count(),4} positions, mean confidence {bin.Average(i => i.Confidence):0.000}, right {bin.Count(i => i.Right) / (double)bin.Count():0.000}"));
            }
        }

        Console.WriteLine();
        Console.WriteLine("Silences before a stretch whose key is known (its first segment of four bytes or more right): doubted (room for a file no");
        Console.WriteLine("capture read) or not, against whether a file no capture read lies there (the key of the stretch after it is a place early).");
        Console.WriteLine($"{"profile",-10} {"before the first: room",22} {"hid",4} {"none",5} {"hid",4} {"between: room",14} {"hid",4} {"none",5} {"hid",4}");
        foreach (string profile in silences.Keys.Select(k => k.Profile).Distinct().Order(StringComparer.Ordinal))
        {
            int Count(bool first, bool room, bool hid) => silences.GetValueOrDefault((profile, first, room, hid));
            Console.WriteLine($"{profile,-10} {Count(true, true, false) + Count(true, true, true),22} {Count(true, true, true),4} {Count(true, false, false) + Count(true, false, true),5} {Count(true, false, true),4} " +
                $"{Count(false, true, false) + Count(false, true, true),14} {Count(false, true, true),4} {Count(false, false, false) + Count(false, false, true),5} {Count(false, false, true),4}");
        }

        Console.WriteLine();
        Console.WriteLine("Single readings (every setting of every capture), right at the place their time claims (StreamPlaces), and lined up anywhere:");
        Console.WriteLine($"{"profile",-10} {"readings",8} {"unplaced",8} {"ECE read",8} {"ECE anywhere",12} {"wrong ≥0.99",11} {"anywhere",8}");
        foreach (var group in singles.GroupBy(r => r.Profile).OrderBy(g => g.Key, StringComparer.Ordinal))
        {
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{group.Key,-10} {group.Count(),8} {group.Count(r => r.Unplaced),8} {Calibration.EqualBinEce([.. group.Select(r => (r.Confidence, r.Right))]),8:0.0000} {Calibration.EqualBinEce([.. group.Select(r => (r.Confidence, r.Anywhere))]),12:0.0000} " +
                $"{group.Count(r => !r.Right && r.Confidence >= Trust.StreamConfidentWrong),11} {group.Count(r => !r.Anywhere && r.Confidence >= Trust.StreamConfidentWrong),8}"));
        }

        if (dump is not null)
        {
            File.WriteAllLines(dump, lines);
        }

        if (reads is not null)
        {
            File.WriteAllLines(reads, readRows);
        }

        Console.WriteLine($"{watch.Elapsed.TotalSeconds:0.0} s");
        return 0;
    }
}
