using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Synthesis;

namespace TapeVault.Bench;

/// <summary>A named damage level: what every pass of a tape suffers, varied by the pass's seed.</summary>
public sealed record DamageLevel(string Name, Func<int, ChannelDamage> Damage);

/// <summary>One tape of the corpus: its passes decoded, merged, and scored against the bytes that were synthesised.</summary>
public sealed record ScoredTape(
    string ProfileId,
    string Level,
    int Seed,
    int Units,
    IReadOnlyList<HashSet<int>> RightPerPass,
    HashSet<int> RightMerged,
    IReadOnlyList<(double Confidence, bool Right, RecoveryStatus Status)> MergedBlocks,
    IReadOnlyList<(double Confidence, bool Right)> SingleCandidates,
    int WrongClean,
    int Missing);

/// <summary>
/// The synthetic corpus of the recovery and calibration benchmarks. Ground truth is our own channel model's input:
/// the bytes we synthesised. For a format with headers a unit is a block, right when its header and payload equal a
/// written block's; for a stream a unit is a byte of the written files, right when a merged segment (or one pass's
/// reading) holds it where the segment lines up best with the written file.
/// </summary>
public static class RecoveryCorpus
{
    public const int PassesPerTape = 3;

    public static IReadOnlyList<DamageLevel> Levels { get; } =
    [
        new("dropouts", seed => new ChannelDamage
        {
            SnrDb = 18,
            RandomDropoutsPerMinute = 50,
            WowPercent = 0.2,
            Speed = 1 + (((seed % 5) - 2) * 0.01),
            Seed = seed,
        }),
        new("noise+dropouts", seed => new ChannelDamage
        {
            SnrDb = 8 + (seed % 3),
            RandomDropoutsPerMinute = 30,
            WowPercent = 0.3,
            FlutterPercent = 0.1,
            Speed = 1 + (((seed % 5) - 2) * 0.01),
            Seed = seed,
        }),
        new("heavy", seed => new ChannelDamage
        {
            SnrDb = 12,
            RandomDropoutsPerMinute = 100,
            WowPercent = 0.3,
            FlutterPercent = 0.1,
            Speed = 1 + (((seed % 5) - 2) * 0.01),
            Seed = seed,
        }),
    ];

    /// <summary>Files of random bytes and text for one tape, sized so that a pass takes a few seconds of capture.</summary>
    public static List<TapeFile> Files(FormatProfile profile, int seed)
    {
        var random = new Random(seed);
        int scale = profile.Layout.IsStream ? (profile.Fsk is { Baud: < 600 } ? 1 : 4) : 6;
        var binary = new byte[(60 + random.Next(40)) * scale];
        random.NextBytes(binary);
        var text = new StringBuilder();
        string[] words = ["cassette", "archive", "block", "lead-in", "club", "moor", "raven", "tape", "0123", "reel"];
        while (text.Length < 50 * scale)
        {
            text.Append(words[random.Next(words.Length)]).Append(' ');
        }

        return [new($"BIN{seed % 100:D2}", binary), new($"TXT{seed % 100:D2}", Encoding.ASCII.GetBytes(text.ToString()))];
    }

    /// <summary>A tape's passes, synthesised and decoded, kept so that it can be merged again with other options.</summary>
    public sealed record DecodedTape(FormatProfile Profile, DamageLevel Level, int Seed, List<TapeFile> Files, List<DecodeResult> Results, List<string> Names);

    public static DecodedTape Decode(string work, FormatProfile profile, DamageLevel level, int seed)
    {
        var files = Files(profile, seed);
        var results = new List<DecodeResult>();
        var names = new List<string>();
        for (int p = 0; p < PassesPerTape; p++)
        {
            string path = Path.Combine(work, $"recovery-{profile.Id}-{level.Name}-{seed}-{p}.wav");
            CaptureSynthesizer.Write(path, profile, files, level.Damage((seed * 10) + p));
            results.Add(CaptureDecoder.Decode(path, profile));
            names.Add(Path.GetFileName(path));
            File.Delete(path);
        }

        return new DecodedTape(profile, level, seed, files, results, names);
    }

    public static ScoredTape Score(DecodedTape tape, MergeOptions? options = null)
    {
        var image = TapeMerger.Merge(tape.Results, tape.Names, (options ?? new MergeOptions()) with { CreatedUtc = DateTimeOffset.UnixEpoch });
        return tape.Profile.Layout.IsStream ? ScoreStream(tape, image) : ScoreBlocks(tape, image);
    }

    /// <summary>Whether a reading's header and payload are right; the units it got right go into the set given (none when it is null).</summary>
    private delegate bool Judge(ReadOnlySpan<byte> header, ReadOnlySpan<byte> payload, HashSet<int>? right);

    private static ScoredTape ScoreBlocks(DecodedTape tape, TapeImage image)
    {
        var truth = WrittenIndex(tape.Profile, BlockWriter.Blocks(tape.Profile, tape.Files));
        bool Find(ReadOnlySpan<byte> h, ReadOnlySpan<byte> p, HashSet<int>? right)
        {
            if (!truth.TryGetValue(HeaderAndPayload(h, p), out int i))
            {
                return false;
            }

            right?.Add(i);
            return true;
        }

        // A pass recovers a block alone only where its reading is clean.
        return Tally(tape, image, truth.Count, Find, aloneNeedsClean: true);
    }

    /// <summary>
    /// Each written block by its header and payload (hex, as <see cref="HeaderAndPayload"/> gives a reading's): a block of
    /// any kind is those bytes followed by its check value, and kinds may differ in header and check width, so each
    /// block is keyed without a check of every width the profile's kinds have.
    /// </summary>
    internal static Dictionary<string, int> WrittenIndex(FormatProfile profile, IReadOnlyList<byte[]> written)
    {
        var widths = profile.BlockKinds.Select(k => BlockLayoutCodec.For(k).CheckBytes).Distinct().ToList();
        var index = new Dictionary<string, int>(StringComparer.Ordinal);
        for (int i = 0; i < written.Count; i++)
        {
            foreach (int w in widths.Where(w => w <= written[i].Length))
            {
                index.TryAdd(Convert.ToHexString(written[i].AsSpan(0, written[i].Length - w)), i);
            }
        }

        return index;
    }

    /// <summary>A reading's header and payload as one key of <see cref="WrittenIndex"/>.</summary>
    internal static string HeaderAndPayload(ReadOnlySpan<byte> header, ReadOnlySpan<byte> payload)
    {
        var joined = new byte[header.Length + payload.Length];
        header.CopyTo(joined);
        payload.CopyTo(joined.AsSpan(header.Length));
        return Convert.ToHexString(joined);
    }

    private static ScoredTape ScoreStream(DecodedTape tape, TapeImage image)
    {
        // Every written byte gets one number: file f's byte i is base[f] + i.
        var files = tape.Files;
        var bases = new int[files.Count];
        for (int f = 1; f < files.Count; f++)
        {
            bases[f] = bases[f - 1] + files[f - 1].Content.Length;
        }

        int units = bases[^1] + files[^1].Content.Length;
        return Tally(tape, image, units, (_, payload, right) => Place(payload, files, bases, right), aloneNeedsClean: false);
    }

    /// <summary>Each pass's best readings and the merged image, scored by <paramref name="judge"/>.</summary>
    private static ScoredTape Tally(DecodedTape tape, TapeImage image, int units, Judge judge, bool aloneNeedsClean)
    {
        var perPass = new List<HashSet<int>>();
        var singles = new List<(double, bool)>();
        foreach (var result in tape.Results)
        {
            var right = new HashSet<int>();
            foreach (var best in result.Best)
            {
                bool counts = !aloneNeedsClean || best.Status == BlockStatus.Clean;
                singles.Add((best.Confidence, judge(best.Header.AsSpan(), best.Payload.AsSpan(), counts ? right : null)));
            }

            perPass.Add(right);
        }

        var merged = new HashSet<int>();
        var blocks = new List<(double, bool, RecoveryStatus)>();
        int wrongClean = 0, missing = 0;
        foreach (var block in image.Blocks)
        {
            if (block.Status == RecoveryStatus.Missing)
            {
                missing++;
                continue;
            }

            bool right = judge(block.Header.AsSpan(), block.Payload.AsSpan(), merged);
            if (!right && block.Status == RecoveryStatus.Clean)
            {
                wrongClean++;
            }

            blocks.Add((block.Confidence, right, block.Status));
        }

        return new ScoredTape(tape.Profile.Id, tape.Level.Name, tape.Seed, units, perPass, merged, blocks, singles, wrongClean, missing);
    }

    /// <summary>
    /// Lines a run of bytes up with the written file and offset where most of its bytes agree, adds the agreeing ones
    /// to <paramref name="right"/> and says whether all agree. A run shorter than four bytes lines up anywhere, so it
    /// counts as right only where it is exactly the written bytes and adds nothing.
    /// </summary>
    public static bool Place(ReadOnlySpan<byte> run, List<TapeFile> files, int[] bases, HashSet<int>? right)
    {
        if (run.IsEmpty)
        {
            return false;
        }

        var (bestFile, bestOffset, bestCount, _) = StreamPlaces.Alignments(run, files);
        var best = files[bestFile].Content;
        bool all = bestOffset >= 0 && bestOffset + run.Length <= best.Length && bestCount == run.Length;
        if (run.Length >= 4)
        {
            for (int i = Math.Max(0, -bestOffset); i < run.Length && bestOffset + i < best.Length; i++)
            {
                if (run[i] == best[bestOffset + i])
                {
                    right?.Add(bases[bestFile] + bestOffset + i);
                }
            }
        }

        return all;
    }
}
