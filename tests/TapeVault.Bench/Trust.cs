using System.Collections.Concurrent;
using System.Diagnostics;
using System.Globalization;
using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Synthesis;

namespace TapeVault.Bench;

/// <summary>
/// Trust on damage nobody tuned for. Each tape (files drawn from its seed) is written three times, each pass from one
/// of three sources drawn from the seed: our channel model with damage drawn from wide ranges
/// (<see cref="RandomDamage"/>); the same followed by a SoX effect chain drawn from the seed; or, for FSK profiles,
/// minimodem's own FSK (outside reference: minimodem, with SoX's tones between blocks, white noise and effect chain).
/// Every pass is decoded with the default bank and the three are merged. Ground truth is what was written.
/// Counted per profile: (a) readings marked clean whose header and payload are not a written block's, at every
/// detector setting (not only the best); (b) the expected calibration error (10 equal bins) of every reading's
/// confidence, of each pass's best reading per position, and of the merged positions; (c) for merged images that are
/// byte-exact with every position clean and read alike by two captures or more, the image's overall confidence.
/// For a stream (no checksum, so nothing is ever clean) a reading is right when its bytes are the written bytes at the
/// place its time claims (<see cref="StreamPlaces"/>), a merged segment when its bytes are the written bytes where they
/// line up best (fewer than four: where its key puts it); (a) counts stream readings at confidence 0.99 or more that
/// are wrong instead.
/// </summary>
public static class Trust
{
    public const int PassesPerTape = 3;

    /// <summary>
    /// The confidence at or above which a wrong result is confidently wrong: a wrong stream reading counts with the
    /// wrong clean ones, and a wrong merged position of any format in the "wrong >= 0.99" column.
    /// </summary>
    public const double StreamConfidentWrong = 0.99;

    private static long s_makeTicks, s_decodeTicks, s_mergeTicks;

    private static readonly MergeOptions s_mergeOptions = new() { CreatedUtc = DateTimeOffset.UnixEpoch };

    /// <summary>With TAPEVAULT_TRUST_DUMP set to a file path, every reading and position is written there as a row of tab-separated features.</summary>
    private static readonly ConcurrentQueue<string> s_dump = new();
    private static readonly string? s_dumpPath = Environment.GetEnvironmentVariable("TAPEVAULT_TRUST_DUMP");

    /// <summary>
    /// With TAPEVAULT_TRUST_CHARS set to a file path, every character of every stream reading is written there as a row:
    /// where it lies in its reading, what the decoder knew of it and whether it is the written character (the reading
    /// lined up with the written bytes where most of its bytes agree).
    /// </summary>
    private static readonly ConcurrentQueue<string> s_chars = new();
    private static readonly string? s_charsPath = Environment.GetEnvironmentVariable("TAPEVAULT_TRUST_CHARS");

    internal sealed record Subject(string Family, FormatProfile Profile);

    /// <summary>Every profile the trust bench measures, with its family; trust-fit checks a dump's coverage against it.</summary>
    internal static Subject[] Subjects { get; } =
    [
        new("pulse-width", TrustProfiles.PulseBlocks),
        new("pulse-width", ProfileCatalog.BuiltIn.Get("orrin-80")),
        new("fsk", TrustProfiles.ToneBlocks),
        new("fsk", ProfileCatalog.BuiltIn.Get("kcs-300")),
        new("fsk", ProfileCatalog.BuiltIn.Get("kcs-1200")),
        new("biphase", ProfileCatalog.BuiltIn.Get("biphase-1200")),
        new("biphase", ProfileCatalog.BuiltIn.Get("biphase-1500")),
        new("fsk", ProfileCatalog.BuiltIn.Get("fsk-sync-1200")),
        new("pulse-width", ProfileCatalog.BuiltIn.Get("three-class-pairs")),
        new("pulse-width", ProfileCatalog.BuiltIn.Get("one-cycle-bits")),
    ];

    /// <summary>A reading as a row of the dump (TAPEVAULT_TRUST_DUMP): what trust-fit reads is its right at 9 and family, group and model confidence as the last three.</summary>
    internal static string ReadRow(FormatProfile profile, int seed, int pass, string source, BlockCandidate candidate, bool right) =>
        string.Join('\t', "read", profile.Id, seed, pass, source, candidate.SettingName, candidate.Status, (int)candidate.Doubts, candidate.Confidence.ToString("R", CultureInfo.InvariantCulture), right ? 1 : 0,
            candidate.MinimumMargin.ToString("0.####", CultureInfo.InvariantCulture), candidate.MeanMargin.ToString("0.####", CultureInfo.InvariantCulture), candidate.AmbiguousDecisions, candidate.Decisions, candidate.FramingErrors,
            candidate.SnrDb.ToString("0.##", CultureInfo.InvariantCulture), candidate.Payload.Length, candidate.Truncated ? 1 : 0, candidate.Position, candidate.StartSeconds.ToString("0.###", CultureInfo.InvariantCulture), candidate.Identity.Key,
            candidate.HeaderErrorOdds.Concat(candidate.ByteErrorOdds).Concat(candidate.ChecksumErrorOdds).Sum(e => Math.Log(1 - Math.Min(e, 0.999999))).ToString("0.####", CultureInfo.InvariantCulture),
            ConfidenceMap.FamilyName(profile.Family), ConfidenceMap.GroupOf(candidate.Status, candidate.Doubts), candidate.ModelConfidence.ToString("R", CultureInfo.InvariantCulture));

    /// <summary>One reading or position; for a stream reading also whether its bytes line up anywhere in the files (the judgement before readings were judged at their place) and whether it could not be placed.</summary>
    private sealed record Reading(double Confidence, bool Right, bool WrongClean, bool Clean = false, bool? Anywhere = null, bool Unplaced = false);

    /// <summary>
    /// A stream reading is right when it is the written bytes at the place its time claims (<see cref="StreamPlaces"/>);
    /// one that cannot be placed (its capture read none of the file its time may lie in in full) is judged lined up
    /// anywhere in the files, as <paramref name="anywhere"/> says.
    /// </summary>
    internal static bool JudgeStream(StreamPlaces places, BlockCandidate reading, Func<BlockCandidate, bool> anywhere) => places.Judge(reading) switch
    {
        StreamPlaces.Verdict.Right => true,
        StreamPlaces.Verdict.Wrong => false,
        _ => anywhere(reading),
    };

    private static bool JudgeStream(StreamPlaces places, BlockCandidate reading, Judgement anywhere) =>
        JudgeStream(places, reading, c => anywhere(c.Header.AsSpan(), c.Payload.AsSpan()));

    private sealed record WrongExample(string Profile, int Seed, int Pass, string Source, string Setting, BlockStatus Status, double Confidence, int PayloadBytes, string Damage);

    /// <summary>What one tape gave: readings per source, positions, and its image's verdict.</summary>
    private sealed record TapeOutcome(
        Subject Subject,
        int Seed,
        int WrittenUnits,
        int WrittenBlocks,
        Dictionary<string, List<Reading>> ReadingsBySource,
        List<Reading> Best,
        List<Reading> Positions,
        List<int> PositionsPerCapture,
        double? ExactImageConfidence,
        List<WrongExample> Examples,
        string? Error);

    public static int Run(string work, string[] args)
    {
        int blocks = 300, firstSeed = 1, jobs = Environment.ProcessorCount;
        double minutes = double.PositiveInfinity;
        string[]? only = null;
        for (int i = 0; i + 1 < args.Length; i += 2)
        {
            switch (args[i])
            {
                case "--blocks" or "--blocks-per-family": blocks = int.Parse(args[i + 1], CultureInfo.InvariantCulture); break;
                case "--first-seed": firstSeed = int.Parse(args[i + 1], CultureInfo.InvariantCulture); break;
                case "--jobs": jobs = int.Parse(args[i + 1], CultureInfo.InvariantCulture); break;
                case "--profile": only = args[i + 1].Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries); break;
                case "--minutes": minutes = double.Parse(args[i + 1], CultureInfo.InvariantCulture); break;
                default: throw new ArgumentException($"Unknown option {args[i]}; trust takes --blocks-per-family N --first-seed S --jobs J --profile ID[,ID...] --minutes M.");
            }
        }

        var stopwatch = Stopwatch.StartNew();
        // A folder of this process's own: two runs at once (of other seeds) never share a capture's file name.
        string folder = Path.Combine(work, $"trust-{Environment.ProcessId}");
        Directory.CreateDirectory(folder);
        Subject[] subjects = Subjects;

        // Block formats: tapes from the first seed until the written blocks reach the count asked for. Streams: one
        // tape per 200 blocks asked for (each holds a few hundred bytes), at least two.
        var tapes = new List<(Subject Subject, int Seed, int Index)>();
        foreach (var subject in subjects.Where(s => only is null || only.Contains(s.Profile.Id)))
        {
            if (subject.Profile.Layout.IsStream)
            {
                int streams = Math.Max(2, blocks / 200);
                for (int s = 0; s < streams; s++)
                {
                    tapes.Add((subject, firstSeed + s, s * blocks / streams));
                }

                continue;
            }

            int written = 0;
            for (int seed = firstSeed; written < blocks; seed++)
            {
                tapes.Add((subject, seed, written));
                written += BlockWriter.Blocks(subject.Profile, Files(subject.Profile, seed)).Count;
            }
        }

        Console.WriteLine($"Trust on damage nobody tuned for: tapes of seeds {firstSeed} onwards, {PassesPerTape} passes each, {jobs} at a time, {tapes.Count} tapes{(double.IsFinite(minutes) ? $", no new tape after {minutes} min" : string.Empty)}.");
        Console.WriteLine($"Load at start: {MachineLoad.Averages()} (1, 5, 15-minute load averages on {Environment.ProcessorCount} cores).");
        var outcomes = new ConcurrentBag<TapeOutcome>();
        int done = 0, skipped = 0;
        var cpu = Process.GetCurrentProcess().TotalProcessorTime;

        // Every profile advances together (tapes in the order of the blocks written before them), so that a run cut
        // short by --minutes has measured each profile on its first seeds.
        Parallel.ForEach(
            tapes.OrderBy(w => w.Index).ThenBy(w => w.Subject.Profile.Id, StringComparer.Ordinal),
            new ParallelOptions { MaxDegreeOfParallelism = jobs },
            w =>
            {
                if (stopwatch.Elapsed.TotalMinutes > minutes)
                {
                    Interlocked.Increment(ref skipped);
                    return;
                }

                outcomes.Add(Tape(folder, w.Subject, w.Seed));
                int n = Interlocked.Increment(ref done);
                if (n % 50 == 0)
                {
                    Console.Error.WriteLine($"  {n}/{tapes.Count} tapes, {stopwatch.Elapsed.TotalSeconds:0} s");
                }
            });

        if (skipped > 0)
        {
            Console.WriteLine($"Time limit reached: {skipped} of {tapes.Count} tapes not measured.");
        }

        Directory.Delete(folder, recursive: true);
        Print([.. outcomes]);
        if (s_dumpPath is not null)
        {
            File.WriteAllLines(s_dumpPath, s_dump);
        }

        if (s_charsPath is not null)
        {
            File.WriteAllLines(s_charsPath, s_chars);
        }

        if (s_slotsPath is not null)
        {
            File.WriteAllLines(s_slotsPath, s_slots);
        }
        Console.WriteLine($"This process's CPU time {(Process.GetCurrentProcess().TotalProcessorTime - cpu).TotalSeconds:0} s (SoX and minimodem run as processes of their own, not counted).");
        Console.WriteLine($"{stopwatch.Elapsed.TotalSeconds:0} s wall; wall time summed over workers: making captures {Stopwatch.GetElapsedTime(0, s_makeTicks).TotalSeconds:0} s, decoding {Stopwatch.GetElapsedTime(0, s_decodeTicks).TotalSeconds:0} s, merging {Stopwatch.GetElapsedTime(0, s_mergeTicks).TotalSeconds:0} s.");
        Console.WriteLine($"Load at end: {MachineLoad.Averages()}.");

        // What the asked-for count would take at this run's pace (block formats; streams are a few tapes each).
        var measured = outcomes.Where(o => !o.Subject.Profile.Layout.IsStream).ToList();
        int measuredBlocks = measured.Sum(o => o.WrittenBlocks);
        int blockProfiles = subjects.Count(s => !s.Profile.Layout.IsStream && (only is null || only.Contains(s.Profile.Id)));
        if (measuredBlocks > 0 && skipped > 0)
        {
            double perBlock = stopwatch.Elapsed.TotalMinutes / measuredBlocks;
            Console.WriteLine($"At this run's pace ({measuredBlocks} written blocks in {stopwatch.Elapsed.TotalMinutes:0.0} min with {jobs} workers, streams included), {blocks} blocks a profile for {blockProfiles} block profiles would take about {perBlock * blocks * blockProfiles:0} min.");
        }
        Console.WriteLine();
        return 0;
    }

    // The shortest file: empty, where the format can write an empty block (not where its length field reads 0 as 256).
    private static int EmptyFileBytes(FormatProfile profile) => BlockWriter.LengthWithoutZero(profile.Layout) is null ? 0 : 1;

    /// <summary>
    /// A tape's files, of random bytes, runs of zeros, one repeated byte or text, so that blocks of all-equal bytes
    /// (which some checksums pass whatever their length) are common. A block format gets 8–24 files, most of them
    /// short (many short blocks make the most of the capture time) and a few empty or a block or two long; a stream
    /// gets one to three files of a few hundred bytes.
    /// </summary>
    public static List<TapeFile> Files(FormatProfile profile, int seed)
    {
        var rng = new Random(unchecked((seed * 1_000_003) + StableHash(profile.Id)));
        bool stream = profile.Layout.IsStream;
        int blockBytes = Math.Min(BlockWriter.DefaultPayloadBytes, profile.Layout.MaximumPayloadBytes);
        int count = stream ? 1 + rng.Next(3) : 8 + rng.Next(17);
        var files = new List<TapeFile>();
        for (int f = 0; f < count; f++)
        {
            double kind = rng.NextDouble();
            int length = stream ? 1 + rng.Next(profile.Fsk is { Baud: < 600 } ? 150 : 500)
                : kind < 0.04 ? EmptyFileBytes(profile)
                : kind < 0.85 ? 1 + rng.Next(40)
                : 1 + rng.Next(2 * blockBytes);
            var content = new byte[length];
            int i = 0;
            while (i < length)
            {
                int run = Math.Min(length - i, 1 + rng.Next(80));
                var span = content.AsSpan(i, run);
                switch (rng.Next(4))
                {
                    case 0: rng.NextBytes(span); break;
                    case 1: span.Clear(); break;
                    case 2: span.Fill((byte)rng.Next(256)); break;
                    default:
                        for (int k = 0; k < run; k++)
                        {
                            span[k] = (byte)"archive tape block lead-in 0123456789 "[rng.Next(38)];
                        }

                        break;
                }

                i += run;
            }

            // A load address for formats whose header block gives start and end addresses.
            files.Add(new TapeFile($"F{seed % 1000:D3}{f}", content) { Address = 0x1000 });
        }

        return files;
    }

    private static int StableHash(string text)
    {
        // FNV-1a: a hash that is the same in every process (string.GetHashCode is not).
        uint hash = 2166136261;
        foreach (char c in text)
        {
            hash = unchecked((hash ^ c) * 16777619);
        }

        return (int)(hash & 0x7FFFFFFF);
    }

    private static TapeOutcome Tape(string folder, Subject subject, int seed)
    {
        var profile = subject.Profile;
        var files = Files(profile, seed);
        var written = BlockWriter.Blocks(profile, files);
        var judge = Judge(profile, files, written, out int units);
        var bySource = new Dictionary<string, List<Reading>>();
        var best = new List<Reading>();
        var perCapture = new List<int>();
        var examples = new List<WrongExample>();
        var results = new List<DecodeResult>();
        var names = new List<string>();
        var sources = new List<string>();
        var rng = new Random(unchecked((seed * 7_919) + StableHash(profile.Id)));
        try
        {
            for (int p = 0; p < PassesPerTape; p++)
            {
                string stem = Path.Combine(folder, $"{profile.Id}-{seed}-{p}");
                long t0 = Stopwatch.GetTimestamp();
                t_channelDamage = null;
                var (path, source, description) = Pass(stem, profile, written, rng);
                long t1 = Stopwatch.GetTimestamp();
                var result = CaptureDecoder.Decode(path, profile);
                Interlocked.Add(ref s_makeTicks, t1 - t0);
                Interlocked.Add(ref s_decodeTicks, Stopwatch.GetTimestamp() - t1);
                foreach (string f in Directory.GetFiles(folder, Path.GetFileName(stem) + "*"))
                {
                    File.Delete(f);
                }

                results.Add(result);
                names.Add(Path.GetFileName(path));
                sources.Add(source);
                PositionReplay.Save(profile, seed, p, source, written, result.Candidates, t_passDamage);
                if (!bySource.TryGetValue(source, out var readings))
                {
                    bySource[source] = readings = [];
                }

                // A stream reading is judged at the place its time claims (StreamPlaces), a block by its header and payload.
                var places = profile.Layout.IsStream ? StreamPlaces.Fit(result.Candidates, files) : null;
                bool Right(BlockCandidate c) => places is null ? judge(c.Header.AsSpan(), c.Payload.AsSpan()) : JudgeStream(places, c, judge);
                foreach (var candidate in result.Candidates)
                {
                    bool right = Right(candidate);
                    bool wrongClean = !right && (profile.Layout.IsStream ? candidate.Confidence >= StreamConfidentWrong : candidate.Status == BlockStatus.Clean);
                    readings.Add(new Reading(candidate.Confidence, right, wrongClean, candidate.Status == BlockStatus.Clean,
                        places is null ? null : judge(candidate.Header.AsSpan(), candidate.Payload.AsSpan()),
                        places is not null && places.Judge(candidate) == StreamPlaces.Verdict.Unplaced));
                    if (s_dumpPath is not null)
                    {
                        s_dump.Enqueue(ReadRow(profile, seed, p, source, candidate, right));
                    }
                    if (wrongClean)
                    {
                        SaveCase(profile, seed, p, written);
                    }

                    if (wrongClean && Environment.GetEnvironmentVariable("TAPEVAULT_TRUST_BYTES") is not null)
                    {
                        string got = Convert.ToHexString([.. candidate.Header, .. candidate.Payload]);
                        string near = written.Select(w => Convert.ToHexString(w)).OrderBy(w => Distance(w, got)).First();
                        Console.WriteLine($"WRONG {seed}/{p} [{candidate.SettingName}] at {candidate.StartSeconds:0.###} s fe={candidate.FramingErrors} amb={candidate.AmbiguousDecisions} min={candidate.MinimumMargin:0.###} doubts={candidate.Doubts}\n  got  {got}\n  near {near}");
                    }

                    if (wrongClean && examples.Count < 3)
                    {
                        examples.Add(new WrongExample(profile.Id, seed, p, source, candidate.SettingName, candidate.Status, candidate.Confidence, candidate.Payload.Length, description));
                    }
                }

                if (s_charsPath is not null && profile.Layout.IsStream)
                {
                    DumpCharacters(profile, seed, p, source, result, files);
                }

                foreach (var candidate in result.Best)
                {
                    best.Add(new Reading(candidate.Confidence, Right(candidate), false));
                }

                // A position is a place on the tape: one capture of a block format should have one per written block.
                perCapture.Add(result.Best.Count);
                if (s_dumpPath is not null)
                {
                    s_dump.Enqueue(string.Join('\t', "capture", profile.Id, seed, p, source, written.Count, result.Best.Count, result.Best.Count(b => b.Status == BlockStatus.Clean)));
                }
            }

            if (s_slotsPath is not null && profile.Layout.IsStream)
            {
                DumpSlots(profile, seed, results, names, files);
            }

            StreamReplay.Save(profile, seed, files, sources, [.. results.Select((r, i) => MergePass.From(r, names[i]))]);
            long m0 = Stopwatch.GetTimestamp();
            var image = TapeMerger.Merge(results, names, s_mergeOptions);
            Interlocked.Add(ref s_mergeTicks, Stopwatch.GetTimestamp() - m0);
            var positions = new List<Reading>();
            bool exact = image.Blocks.Length > 0;
            int rightBlocks = 0;
            for (int bi = 0; bi < image.Blocks.Length; bi++)
            {
                var block = image.Blocks[bi];
                if (block.Status == RecoveryStatus.Missing)
                {
                    exact = false;
                    continue;
                }

                bool right = judge(block.Header.AsSpan(), block.Payload.AsSpan()) && (!profile.Layout.IsStream || ShortSegmentInPlace(block.Key, block.Payload.AsSpan(), files));
                bool wrongClean = !right && (profile.Layout.IsStream ? block.Confidence >= StreamConfidentWrong : block.Status == RecoveryStatus.Clean);
                positions.Add(new Reading(block.Confidence, right, wrongClean));
                if (s_dumpPath is not null)
                {
                    s_dump.Enqueue(string.Join('\t', "pos", profile.Id, seed, -1, "-", "-", block.Status, 0, block.Confidence.ToString("R", CultureInfo.InvariantCulture), right ? 1 : 0,
                        block.AgreeingCaptures, block.Sources.Length, 0, 0, 0, 0, block.Payload.Length, 0, block.Position, 0, block.Key,
                        bi > 0 && image.Blocks[bi - 1].Status == RecoveryStatus.Missing ? 1 : 0,
                        bi + 1 < image.Blocks.Length && image.Blocks[bi + 1].Status == RecoveryStatus.Missing ? 1 : 0,
                        profile.Layout.IsStream && !right ? StreamErrorWhere(block.Payload.AsSpan(), files) : "-"));
                }
                rightBlocks += right ? 1 : 0;
                exact &= right && block.AgreeingCaptures >= 2 && (profile.Layout.IsStream || block.Status == RecoveryStatus.Clean);
            }

            // Byte-exact: every written block once (a stream: its bytes in as many segments as files).
            exact &= rightBlocks == written.Count && image.Blocks.Length == written.Count;
            return new TapeOutcome(subject, seed, units, written.Count, bySource, best, positions, perCapture, exact ? image.OverallConfidence : null, examples, null);
        }
        catch (Exception e) when (e is not OutOfMemoryException)
        {
            // A decoder or merge that throws is a finding of its own: reported, and the run goes on.
            return new TapeOutcome(subject, seed, units, written.Count, bySource, best, [], perCapture, null, examples, $"{profile.Id} seed {seed}: {e.GetType().Name}: {e.Message} {e.StackTrace?.Split('\n')[0]}");
        }
    }

    /// <summary>
    /// With TAPEVAULT_TRUST_SLOTS set to a file path, every byte of every stream reading is written there as a row: its
    /// time on the merge's common timeline and, where its reading lines up with the written bytes, the written
    /// character's index and the expected time of that index (a line fitted per file over every capture's right bytes),
    /// so that a capture whose bytes sit whole characters off where they were written shows.
    /// </summary>
    private static readonly ConcurrentQueue<string> s_slots = new();
    private static readonly string? s_slotsPath = Environment.GetEnvironmentVariable("TAPEVAULT_TRUST_SLOTS");

    private static void DumpSlots(FormatProfile profile, int seed, List<DecodeResult> results, List<string> names, List<TapeFile> files)
    {
        var passes = results.Select((r, i) => MergePass.From(r, names[i])).ToList();
        var timelines = TapeMerger.Align(passes, profile);
        var rows = new List<(int Pass, int Setting, int Candidate, int Index, int Length, double Time, byte Value, float Error, int File, int At, bool Right)>();
        for (int p = 0; p < passes.Count; p++)
        {
            for (int ci = 0; ci < passes[p].Candidates.Count; ci++)
            {
                var c = passes[p].Candidates[ci];
                if (c.Payload.IsEmpty)
                {
                    continue;
                }

                var (f, o, count) = BestAlignment(c.Payload.AsSpan(), files);
                bool placed = count * 2 > c.Payload.Length;
                for (int i = 0; i < c.Payload.Length; i++)
                {
                    int at = o + i;
                    bool right = placed && at >= 0 && at < files[f].Content.Length && files[f].Content[at] == c.Payload[i];
                    rows.Add((p, c.SettingIndex, ci, i, c.Payload.Length, timelines[p].Map(c.ByteSeconds[i]), c.Payload[i], c.ByteErrorOdds[i], placed ? f : -1, at, right));
                }
            }
        }

        // Per file: time = a + b * index, fitted on the right bytes (median of pairwise slopes over a sample, then median intercept).
        foreach (var byFile in rows.Where(r => r.File >= 0).GroupBy(r => r.File))
        {
            var right = byFile.Where(r => r.Right).ToList();
            if (right.Count < 4)
            {
                continue;
            }

            var slopes = new List<double>();
            for (int k = 0; k < 400; k++)
            {
                var x = right[(k * 7919) % right.Count];
                var y = right[(k * 104729 + 13) % right.Count];
                if (Math.Abs(x.At - y.At) > 10)
                {
                    slopes.Add((x.Time - y.Time) / (x.At - y.At));
                }
            }

            if (slopes.Count == 0)
            {
                continue;
            }

            slopes.Sort();
            double b = slopes[slopes.Count / 2];
            var intercepts = right.Select(r => r.Time - (b * r.At)).Order().ToList();
            double a = intercepts[intercepts.Count / 2];
            foreach (var r in byFile)
            {
                s_slots.Enqueue(string.Join('\t', profile.Id, seed, r.Pass, r.Setting, r.Candidate, r.Index, r.Length, r.File, r.At, r.Right ? 1 : 0,
                    ((r.Time - (a + (b * r.At))) / b).ToString("0.###", CultureInfo.InvariantCulture), r.Error.ToString("0.#####", CultureInfo.InvariantCulture), r.Time.ToString("0.#####", CultureInfo.InvariantCulture)));
            }
        }
    }

    /// <summary>One row per character of every stream reading of one pass (see <see cref="s_charsPath"/>).</summary>
    private static void DumpCharacters(FormatProfile profile, int seed, int pass, string source, DecodeResult result, List<TapeFile> files)
    {
        double baud = profile.Fsk!.Baud;
        double bitSamples = result.Capture.SampleRate / baud;
        foreach (var bySetting in result.Candidates.GroupBy(c => c.SettingIndex))
        {
            var readings = bySetting.OrderBy(c => c.StartSeconds).ToList();
            for (int k = 0; k < readings.Count; k++)
            {
                var c = readings[k];
                var run = c.Payload.AsSpan();
                if (run.IsEmpty)
                {
                    continue;
                }

                // The written bytes this reading lines up with best.
                var (bestFile, bestOffset, bestCount) = BestAlignment(run, files);

                var truth = files[bestFile].Content;
                double gapBefore = k > 0 ? (c.StartSeconds - readings[k - 1].EndSeconds) * baud : -1;
                double gapAfter = k + 1 < readings.Count ? (readings[k + 1].StartSeconds - c.EndSeconds) * baud : -1;
                for (int i = 0; i < run.Length; i++)
                {
                    int at = bestOffset + i;
                    bool wrong = at < 0 || at >= truth.Length || run[i] != truth[at];
                    s_chars.Enqueue(string.Join('\t', profile.Id, seed, pass, source, c.SettingName, result.Capture.SampleRate, bitSamples.ToString("0.##", CultureInfo.InvariantCulture),
                        i, run.Length - 1 - i, wrong ? 1 : 0, c.ByteErrorOdds[i].ToString("R", CultureInfo.InvariantCulture), c.ByteMargins[i].ToString("0.####", CultureInfo.InvariantCulture),
                        gapBefore.ToString("0.#", CultureInfo.InvariantCulture), gapAfter.ToString("0.#", CultureInfo.InvariantCulture), bestCount == run.Length ? 1 : 0,
                        c.Confidence.ToString("R", CultureInfo.InvariantCulture), (int)c.Doubts, c.SnrDb.ToString("0.#", CultureInfo.InvariantCulture), c.Speed.ToString("0.####", CultureInfo.InvariantCulture)));
                }
            }
        }
    }

    /// <summary>The written file and offset a stream segment lines up with best, and how many of its characters agree there.</summary>
    internal static (int File, int Offset, int Count) BestAlignment(ReadOnlySpan<byte> run, List<TapeFile> files)
    {
        var (file, offset, count, _) = StreamPlaces.Alignments(run, files);
        return (file, offset, count);
    }

    /// <summary>Where a wrong stream segment differs from the written bytes it lines up with best: at its first or last two characters (or past a file's end), inside, or both.</summary>
    /// <summary>
    /// Whether a merged stream segment of fewer than four bytes is the written bytes where its key puts it (stretch s is
    /// the s-th file; its offset, which counts the bytes no capture kept from the gap's length, within two characters).
    /// Lined up anywhere in the files, as longer segments are, one or two bytes match by chance: a garbage byte of a
    /// thousand-byte tape is some written byte somewhere more often than not. Longer segments: true (judged by lining up).
    /// </summary>
    internal static bool ShortSegmentInPlace(string key, ReadOnlySpan<byte> payload, List<TapeFile> files)
    {
        if (payload.Length >= 4)
        {
            return true;
        }

        var parts = key.TrimStart('#').Split('+');
        int stretch = int.Parse(parts[0], CultureInfo.InvariantCulture);
        int offset = parts.Length > 1 ? int.Parse(parts[1], CultureInfo.InvariantCulture) : 0;
        if (stretch < 0 || stretch >= files.Count)
        {
            return false;
        }

        var content = files[stretch].Content;
        for (int at = offset - 2; at <= offset + 2; at++)
        {
            if (at >= 0 && at + payload.Length <= content.Length && content.AsSpan(at, payload.Length).SequenceEqual(payload))
            {
                return true;
            }
        }

        return false;
    }

    internal static string StreamErrorWhere(ReadOnlySpan<byte> run, List<TapeFile> files)
    {
        var (bestFile, bestOffset, _) = BestAlignment(run, files);
        var best = files[bestFile].Content;
        bool edge = false, inside = false;
        for (int i = 0; i < run.Length; i++)
        {
            int at = bestOffset + i;
            bool wrong = at < 0 || at >= best.Length || run[i] != best[at];
            if (wrong)
            {
                if (i < 2 || i >= run.Length - 2)
                {
                    edge = true;
                }
                else
                {
                    inside = true;
                }
            }
        }

        return edge && inside ? "both" : edge ? "edge" : inside ? "inside" : "none";
    }

    private static int Distance(string a, string b)
    {
        int d = Math.Abs(a.Length - b.Length);
        for (int i = 0; i < Math.Min(a.Length, b.Length); i++)
        {
            d += a[i] == b[i] ? 0 : 1;
        }

        return d;
    }

    internal delegate bool Judgement(ReadOnlySpan<byte> header, ReadOnlySpan<byte> payload);

    /// <summary>Whether a reading is right: a written block's header and payload, or for a stream, written bytes where they line up best.</summary>
    internal static Judgement Judge(FormatProfile profile, List<TapeFile> files, List<byte[]> written, out int units)
    {
        if (profile.Layout.IsStream)
        {
            var bases = new int[files.Count];
            for (int f = 1; f < files.Count; f++)
            {
                bases[f] = bases[f - 1] + files[f - 1].Content.Length;
            }

            units = bases[^1] + files[^1].Content.Length;
            return (_, payload) => RecoveryCorpus.Place(payload, files, bases, null);
        }

        // A block of any kind, without its check value (kinds may differ in header and check width).
        var truth = RecoveryCorpus.WrittenIndex(profile, written);
        units = written.Count;
        return (h, p) => truth.ContainsKey(RecoveryCorpus.HeaderAndPayload(h, p));
    }

    /// <summary>One pass: its capture file, its source and a description of its damage.</summary>
    /// <summary>The damage of the last pass this thread made with our channel model alone (null after any other kind of pass).</summary>
    [ThreadStatic]
    private static ChannelDamage? t_channelDamage;

    /// <summary>The channel damage of the last pass this thread made from our channel model, with or without SoX after it (null for minimodem's).</summary>
    [ThreadStatic]
    private static (ChannelDamage Damage, string Description)? t_passDamage;

    /// <summary>
    /// With TAPEVAULT_TRUST_CASES set to a folder, a pass of our channel model alone that gave a wrong clean reading is
    /// saved there as a case (profile, damage, written blocks), so that a test can make the same capture again.
    /// </summary>
    private static readonly string? s_casesFolder = Environment.GetEnvironmentVariable("TAPEVAULT_TRUST_CASES");

    private static readonly System.Text.Json.JsonSerializerOptions s_caseJson = new() { IncludeFields = true, WriteIndented = true };

    private static void SaveCase(FormatProfile profile, int seed, int pass, List<byte[]> written)
    {
        if (s_casesFolder is null || t_channelDamage is null)
        {
            return;
        }

        Directory.CreateDirectory(s_casesFolder);
        string json = System.Text.Json.JsonSerializer.Serialize(
            new { Profile = profile.Id, Seed = seed, Pass = pass, Damage = t_channelDamage, Blocks = written.Select(Convert.ToHexString).ToArray() },
            s_caseJson);
        File.WriteAllText(Path.Combine(s_casesFolder, $"{profile.Id}-{seed}-{pass}.json"), json);
    }

    private static (string Path, string Source, string Description) Pass(string stem, FormatProfile profile, List<byte[]> written, Random rng)
    {
        double draw = rng.NextDouble();
        bool minimodem = profile.Family == FormatFamily.Fsk && OutsideDamage.MinimodemWrites(profile) && draw < 0.3;
        bool sox = minimodem || draw >= 0.65;
        string path = stem + ".wav";
        string description;
        t_passDamage = null;
        int channels = 1;
        int sampleRate;
        if (minimodem)
        {
            // Outside reference: minimodem writes the FSK, SoX the tones between blocks and the noise.
            sampleRate = RandomDamage.SampleRates[rng.Next(RandomDamage.SampleRates.Count)];
            double leadIn = profile.Layout.IsStream && rng.NextDouble() < 0.3 ? 0 : 0.15 + (rng.NextDouble() * 1.5);
            double volume = 0.2 + (rng.NextDouble() * 0.7);
            double snr = 12 + (rng.NextDouble() * 33);
            string clean = stem + ".minimodem.wav";
            OutsideDamage.MinimodemCapture(clean, profile, written, sampleRate, leadIn, volume);
            string noise = stem + ".noise.wav";

            // SoX's white noise at "vol 1" has an RMS of about 0.54 (measured with SoX's stat); the tones' RMS is volume/√2.
            double seconds = leadIn + profile.Recording.TrailerSeconds + 1 + written.Sum(b => ((b.Length + OutsideDamage.LeaderCharacters(profile)) * profile.Framing.BitsPerByte / profile.Fsk!.Baud) + profile.Recording.BlockGapSeconds);
            double noiseVolume = volume / Math.Sqrt(2) * Math.Pow(10, -snr / 20) / 0.54;
            OutsideDamage.ApplySox("-n", noise, ["-r", sampleRate.ToString(CultureInfo.InvariantCulture), "-b", "16", "-c", "1"], ["synth", seconds.ToString("0.###", CultureInfo.InvariantCulture), "whitenoise", "vol", noiseVolume.ToString("0.######", CultureInfo.InvariantCulture)]);
            string mixed = stem + ".mixed.wav";
            OutsideDamage.Mix(clean, noise, mixed);
            description = $"minimodem {sampleRate} Hz, lead-in {leadIn:0.00} s, volume {volume:0.00}, SoX noise at SNR {snr:0.0} dB";
            path = Chain(mixed, path, channels, sampleRate, rng, ref description);
            return (path, "minimodem+sox", description);
        }

        var damage = RandomDamage.Draw(rng);
        description = RandomDamage.Describe(damage);
        t_passDamage = (damage, description);
        if (!sox)
        {
            t_channelDamage = damage;
            CaptureSynthesizer.WriteBlocks(path, profile, written, damage);
            return (path, "channel", description);
        }

        string ours = stem + ".channel.wav";
        CaptureSynthesizer.WriteBlocks(ours, profile, written, damage);
        channels = damage.Channels == CaptureChannels.Mono ? 1 : 2;
        path = Chain(ours, path, channels, damage.SampleRate, rng, ref description);
        t_passDamage = (damage, description);
        return (path, "channel+sox", description);
    }

    private static string Chain(string input, string output, int channels, int sampleRate, Random rng, ref string description)
    {
        // Outside reference: SoX applies an effect chain drawn from the seed.
        var (options, effects, text) = OutsideDamage.SoxChain(rng, channels, sampleRate);
        OutsideDamage.ApplySox(input, output, options, effects);
        description += "; " + text;
        return output;
    }

    private static double Ece(List<Reading> readings) => Calibration.EqualBinEce([.. readings.Select(r => (r.Confidence, r.Right))]);

    private static void Print(List<TapeOutcome> outcomes)
    {
        Console.WriteLine();
        Console.WriteLine("Per profile. units: written blocks (bytes for a stream); readings: every setting's block candidates of every pass;");
        Console.WriteLine("wrong clean: readings (and merged positions) marked clean that are not a written block (streams: wrong at confidence >= 0.99);");
        Console.WriteLine("ECE: 10 equal bins; wrong >= 0.99: merged positions not a written block at confidence >= 0.99, whatever their status;");
        Console.WriteLine("exact images: byte-exact merges with every position clean (stream: read) and agreed by >= 2 captures.");
        Console.WriteLine($"{"family",-11} {"profile",-18} {"tapes",5} {"units",6} {"readings",8} {"clean",6} {"wrong clean",11} {"ECE read",8} {"ECE best",8} {"positions",9} {"wrong pos",9} {"ECE merged",10} {"wrong >= 0.99",13} {"exact",5} {"min conf",8} {"< 0.99",6}");
        foreach (var group in outcomes.GroupBy(o => (o.Subject.Family, o.Subject.Profile.Id)).OrderBy(g => g.Key.Family, StringComparer.Ordinal).ThenBy(g => g.Key.Id, StringComparer.Ordinal))
        {
            var readings = group.SelectMany(o => o.ReadingsBySource.Values.SelectMany(r => r)).ToList();
            var best = group.SelectMany(o => o.Best).ToList();
            var positions = group.SelectMany(o => o.Positions).ToList();
            var exact = group.Where(o => o.ExactImageConfidence is not null).Select(o => o.ExactImageConfidence!.Value).ToList();
            bool stream = group.First().Subject.Profile.Layout.IsStream;
            string units = stream ? $"{group.Sum(o => o.WrittenUnits)}B" : group.Sum(o => o.WrittenUnits).ToString(CultureInfo.InvariantCulture);
            Console.WriteLine(
                $"{group.Key.Family,-11} {group.Key.Id,-18} {group.Count(),5} {units,6} {readings.Count,8} {(stream ? "-" : readings.Count(r => r.Clean).ToString(CultureInfo.InvariantCulture)),6} " +
                $"{readings.Count(r => r.WrongClean),11} {Ece(readings),8:0.0000} {Ece(best),8:0.0000} {positions.Count,9} {positions.Count(r => r.WrongClean),9} " +
                $"{Ece(positions),10:0.0000} {positions.Count(r => !r.Right && r.Confidence >= StreamConfidentWrong),13} {exact.Count,5} {(exact.Count > 0 ? exact.Min().ToString("0.0000", CultureInfo.InvariantCulture) : "-"),8} {exact.Count(c => c < 0.99),6}");
        }

        var streams = outcomes.Where(o => o.Subject.Profile.Layout.IsStream).ToList();
        if (streams.Count > 0)
        {
            Console.WriteLine();
            Console.WriteLine("Stream readings judged at the place their time claims, and lined up anywhere in the files (the judgement before);");
            Console.WriteLine("unplaced: in no fitted file's span while some file has no line (judged lined up anywhere).");
            Console.WriteLine($"{"profile",-18} {"readings",8} {"unplaced",8} {"right",6} {"anywhere",8} {"ECE read",8} {"ECE anywhere",12} {"wrong >= 0.99",13} {"anywhere",8}");
            foreach (var group in streams.GroupBy(o => o.Subject.Profile.Id).OrderBy(g => g.Key, StringComparer.Ordinal))
            {
                var readings = group.SelectMany(o => o.ReadingsBySource.Values.SelectMany(r => r)).ToList();
                var anywhere = readings.Select(r => (r.Confidence, r.Anywhere ?? r.Right)).ToList();
                Console.WriteLine(
                    $"{group.Key,-18} {readings.Count,8} {readings.Count(r => r.Unplaced),8} {readings.Count(r => r.Right),6} {anywhere.Count(r => r.Item2),8} {Ece(readings),8:0.0000} {Calibration.EqualBinEce(anywhere),12:0.0000} " +
                    $"{readings.Count(r => !r.Right && r.Confidence >= StreamConfidentWrong),13} {anywhere.Count(r => !r.Item2 && r.Confidence >= StreamConfidentWrong),8}");
            }
        }

        Console.WriteLine();
        Console.WriteLine("Per family (every profile of the family together; block formats and streams apart, as their units differ):");
        Console.WriteLine($"{"family",-11} {"kind",-7} {"units",7} {"readings",8} {"wrong clean",11} {"ECE read",8} {"ECE best",8} {"positions",9} {"wrong pos",9} {"ECE merged",10}");
        foreach (var group in outcomes.GroupBy(o => (o.Subject.Family, Stream: o.Subject.Profile.Layout.IsStream)).OrderBy(g => g.Key.Family, StringComparer.Ordinal).ThenBy(g => g.Key.Stream))
        {
            var readings = group.SelectMany(o => o.ReadingsBySource.Values.SelectMany(r => r)).ToList();
            var best = group.SelectMany(o => o.Best).ToList();
            var positions = group.SelectMany(o => o.Positions).ToList();
            Console.WriteLine(
                $"{group.Key.Family,-11} {(group.Key.Stream ? "stream" : "blocks"),-7} {group.Sum(o => o.WrittenUnits),7} {readings.Count,8} {readings.Count(r => r.WrongClean),11} {Ece(readings),8:0.0000} {Ece(best),8:0.0000} " +
                $"{positions.Count,9} {positions.Count(r => r.WrongClean),9} {Ece(positions),10:0.0000}");
        }

        Console.WriteLine();
        Console.WriteLine("Per family and source of the passes (readings of every setting):");
        Console.WriteLine($"{"family",-11} {"source",-14} {"readings",8} {"right",7} {"wrong clean",11} {"ECE read",8}");
        foreach (var group in outcomes
            .SelectMany(o => o.ReadingsBySource.Select(kv => (o.Subject.Family, Source: kv.Key, Readings: kv.Value)))
            .GroupBy(x => (x.Family, x.Source))
            .OrderBy(g => g.Key.Family, StringComparer.Ordinal).ThenBy(g => g.Key.Source, StringComparer.Ordinal))
        {
            var readings = group.SelectMany(x => x.Readings).ToList();
            Console.WriteLine($"{group.Key.Family,-11} {group.Key.Source,-14} {readings.Count,8} {readings.Count(r => r.Right),7} {readings.Count(r => r.WrongClean),11} {Ece(readings),8:0.0000}");
        }

        Console.WriteLine();
        Console.WriteLine("Positions per capture (block formats): captures whose count of positions is the count of blocks written, and those with fewer or more:");
        Console.WriteLine($"{"profile",-18} {"captures",8} {"matching",8} {"fewer",6} {"more",6} {"extra positions",15}");
        var blockOutcomes = outcomes.Where(o => !o.Subject.Profile.Layout.IsStream).ToList();
        foreach (var group in blockOutcomes.GroupBy(o => o.Subject.Profile.Id).OrderBy(g => g.Key, StringComparer.Ordinal).Append(blockOutcomes.GroupBy(_ => "all").FirstOrDefault()))
        {
            if (group is null)
            {
                continue;
            }

            var counts = group.SelectMany(o => o.PositionsPerCapture.Select(n => n - o.WrittenBlocks)).ToList();
            Console.WriteLine($"{group.Key,-18} {counts.Count,8} {counts.Count(d => d == 0),8} {counts.Count(d => d < 0),6} {counts.Count(d => d > 0),6} {counts.Where(d => d > 0).Sum(),15}");
        }

        var errors = outcomes.Where(o => o.Error is not null).ToList();
        if (errors.Count > 0)
        {
            Console.WriteLine();
            Console.WriteLine($"{errors.Count} tapes could not be made or merged; first: {errors[0].Error}");
        }

        var examples = outcomes.SelectMany(o => o.Examples).OrderBy(e => e.Profile, StringComparer.Ordinal).ThenBy(e => e.Seed).ToList();
        if (examples.Count > 0)
        {
            Console.WriteLine();
            Console.WriteLine("Wrong readings marked clean (first per profile, up to 4): profile, seed, pass, source, setting, status, confidence, payload bytes, damage");
            foreach (var example in examples.GroupBy(e => e.Profile).SelectMany(g => g.Take(4)))
            {
                Console.WriteLine($"  {example.Profile} seed {example.Seed} pass {example.Pass} {example.Source} [{example.Setting}] {example.Status} {example.Confidence:0.0000} {example.PayloadBytes} B; {example.Damage}");
            }
        }
    }
}

