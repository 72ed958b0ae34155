using System.Collections.Immutable;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;

namespace TapeVault.Core.Merge;

/// <summary>
/// Merges every block candidate of every capture × detector setting of one tape into one tape image. The passes are
/// first put on one timeline (each scaled by its measured speed, then fitted to the pass with most anchors through
/// matching block identities or runs of confident bytes); then a format with headers is merged block by block and a
/// stream byte by byte. Positions nothing good was read for are missing, never filled.
/// </summary>
public static class TapeMerger
{
    public static TapeImage Merge(IReadOnlyList<DecodeResult> results, IReadOnlyList<string> fileNames, MergeOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(results);
        ArgumentNullException.ThrowIfNull(fileNames);
        if (results.Count == 0 || results.Count != fileNames.Count)
        {
            throw new ArgumentException("One file name per decode, and at least one decode.", nameof(fileNames));
        }

        var profile = results[0].Profile;
        if (results.Any(r => r.Profile.Id != profile.Id))
        {
            throw new ArgumentException("Every decode of one merge must use the same profile.", nameof(results));
        }

        return Merge([.. results.Select((r, i) => MergePass.From(r, fileNames[i]))], profile, options);
    }

    public static TapeImage Merge(IReadOnlyList<MergePass> passes, FormatProfile profile, MergeOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(passes);
        ArgumentNullException.ThrowIfNull(profile);
        if (passes.Count == 0)
        {
            throw new ArgumentException("A merge needs at least one pass.", nameof(passes));
        }

        options ??= new MergeOptions();
        var timelines = Align(passes, profile);
        var blocks = profile.Layout.IsStream
            ? new StreamMerge(passes, timelines, profile.Framing.BitsPerByte, profile.Fsk?.Baud, profile.Recording, options).Resolve()
            : new BlockMerge(profile, passes, timelines, options).Resolve();
        var ordered = blocks.Select((b, i) => b with { Position = i }).ToImmutableArray();
        return new TapeImage
        {
            ProfileId = profile.Id,
            CodeVersion = CaptureDecoder.CodeVersion,
            CreatedUtc = options.CreatedUtc ?? options.Clock.GetUtcNow(),
            Captures = [.. passes.Select(p => p.Capture)],
            Blocks = ordered,
            Files = profile.Layout.IsStream ? [] : Files(ordered),
        };
    }

    /// <summary>
    /// The readings whose weak check held unproven, at the places the merge of <paramref name="passes"/> gives them
    /// (none for a stream): what the shares that weigh a position kept from one of them are counted from.
    /// </summary>
    public static IReadOnlyList<WeakReading> WeakReadings(IReadOnlyList<MergePass> passes, FormatProfile profile, MergeOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(passes);
        ArgumentNullException.ThrowIfNull(profile);
        if (passes.Count == 0 || profile.Layout.IsStream)
        {
            return [];
        }

        return new BlockMerge(profile, passes, Align(passes, profile), options ?? new MergeOptions()).WeakReadings();
    }

    /// <summary>
    /// Each pass's timeline. The pass with most anchors is the reference. The others join one at a time, the one with
    /// most anchors in common first, each fitted to the anchors of every pass placed before it (mapped onto the
    /// common timeline): two passes that share no clean block may each share one with a third. A pass with no anchor
    /// in common with any is lined up by the rhythm of its blocks: the starts of its places (its positions, read clean
    /// or not) against those of the passes placed before it, where enough of them line up at one offset (the passes
    /// read the same blocks, whose lengths and gaps differ); else it keeps its own start lined up with the reference's.
    /// </summary>
    public static PassTimeline[] Align(IReadOnlyList<MergePass> passes, FormatProfile profile)
    {
        ArgumentNullException.ThrowIfNull(passes);
        ArgumentNullException.ThrowIfNull(profile);
        bool stream = profile.Layout.IsStream;
        double character = StreamMerge.CharacterSeconds(passes);
        var speeds = passes.Select(MedianSpeed).ToArray();
        var anchors = passes.Select((p, i) => stream ? StreamMerge.Anchors(p, speeds[i], character) : BlockMerge.Anchors(p, speeds[i])).ToArray();
        if (passes.Count == 0)
        {
            return [];
        }

        var timelines = new PassTimeline?[passes.Count];

        int reference = 0;
        for (int i = 1; i < passes.Count; i++)
        {
            if (anchors[i].Count > anchors[reference].Count)
            {
                reference = i;
            }
        }

        double Start(int i) => passes[i].Candidates.Count == 0 ? 0 : speeds[i] * passes[i].Candidates.Min(c => c.StartSeconds);
        double tolerance = stream ? 1.5 * character : 0.3;
        timelines[reference] = new PassTimeline(speeds[reference], 1, 0);
        var placed = new List<(long Feature, double Time)>(anchors[reference]);
        var places = passes.Select((p, i) => stream ? [] : BlockMerge.Places(p, speeds[i])).ToArray();
        var placedPlaces = new List<double>(places[reference]);
        while (Array.IndexOf(timelines, null) >= 0)
        {
            int next = -1;
            (double Scale, double Offset, int Inliers) bestFit = default;
            for (int i = 0; i < passes.Count; i++)
            {
                if (timelines[i] is not null)
                {
                    continue;
                }

                var fit = PassTimeline.Fit(placed, anchors[i], tolerance, Start(reference) - Start(i));
                if (next < 0 || fit.Inliers > bestFit.Inliers)
                {
                    next = i;
                    bestFit = fit;
                }
            }

            if (bestFit.Inliers == 0 && !stream)
            {
                // No anchor in common: the blocks' rhythm, where at least RhythmInliers of the pass's places line up.
                var fit = PassTimeline.FitRhythm(placedPlaces, places[next], RhythmTolerance, Start(reference) - Start(next));
                if (fit.Inliers >= RhythmInliers)
                {
                    bestFit = fit;
                }
            }

            var timeline = new PassTimeline(speeds[next], bestFit.Scale, bestFit.Offset);
            timelines[next] = timeline;

            // Anchors are in the pass's nominal seconds (its capture time scaled by its speed); the fit maps those on.
            placed.AddRange(anchors[next].Select(a => (a.Feature, (timeline.Scale * a.Time) + timeline.Offset)));
            placedPlaces.AddRange(places[next].Select(t => (timeline.Scale * t) + timeline.Offset));
        }

        return [.. timelines.Select(t => t!.Value)];
    }

    /// <summary>
    /// How near the starts of two passes' places must come, in nominal seconds, to count as one place when a pass is
    /// lined up by the rhythm of its blocks: a sync is found to a few milliseconds, the speed each pass measured
    /// leaves some tens of milliseconds over a tape, and blocks of a file lie a block gap (0.15 s and more) apart.
    /// </summary>
    private const double RhythmTolerance = 0.04;

    /// <summary>
    /// The places that must line up before the rhythm of a pass's blocks stands for its start: two could be any pair of
    /// gaps of equal length (common practice for a vote of offsets).
    /// </summary>
    private const int RhythmInliers = 3;

    private static double MedianSpeed(MergePass pass)
    {
        var speeds = pass.Candidates.Where(c => c.Speed > 0).Select(c => c.Speed).Order().ToList();
        return speeds.Count == 0 ? 1 : speeds[speeds.Count / 2];
    }

    /// <summary>
    /// The files the headers name: consecutive positions of one file name (or file id); where the headers carry only
    /// a block number, a file begins where the number does not go up. A file is complete when it starts at block 0
    /// (where numbered) and none of its positions is missing; a file whose last blocks were never read at all cannot
    /// be told from a shorter one unless its headers say how long it is.
    /// </summary>
    public static ImmutableArray<ImageFile> Files(IReadOnlyList<ImageBlock> blocks)
    {
        ArgumentNullException.ThrowIfNull(blocks);
        var files = new List<ImageFile>();
        int start = -1;
        for (int i = 0; i <= blocks.Count; i++)
        {
            bool boundary = i == blocks.Count || start < 0 || NewFile(blocks[i - 1], blocks[i]);
            if (boundary && start >= 0)
            {
                var run = blocks.Skip(start).Take(i - start).ToList();
                var named = run.FirstOrDefault(b => b.Status != RecoveryStatus.Missing) ?? run[0];
                string name = named.FileName ?? (named.FileId is { } id ? $"file {id}" : $"file {files.Count + 1}");
                bool complete = run.TrueForAll(b => b.Status != RecoveryStatus.Missing) && (run[0].BlockNumber is null or 0);
                files.Add(new ImageFile(name, run.Sum(b => (long)b.Payload.Length), run[0].Position, run.Count, complete));
            }

            if (boundary)
            {
                start = i;
            }
        }

        return [.. files];
    }

    private static bool NewFile(ImageBlock previous, ImageBlock next)
    {
        if (previous.FileName != next.FileName || previous.FileId != next.FileId)
        {
            return true;
        }

        return previous.BlockNumber is long a && next.BlockNumber is long b && b <= a;
    }
}
