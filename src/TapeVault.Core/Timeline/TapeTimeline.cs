using TapeVault.Core.Image;
using TapeVault.Core.Text;

namespace TapeVault.Core.Timeline;

/// <summary>One block as one setting read it from one capture, as the timeline needs it (times in capture seconds).</summary>
public sealed record TimelineReading(
    string CaptureKey,
    string Setting,
    string Key,
    string Status,
    double Confidence,
    double StartSeconds,
    double EndSeconds,
    double Speed);

/// <summary>One position of the tape image, as the timeline needs it.</summary>
public sealed record TimelinePosition(int Position, string Key, string Status, double Confidence);

/// <summary>A stretch of tape drawn in a lane: where it lies in tape seconds, its outcome and its confidence.</summary>
public sealed record TimelineSpan(double Start, double End, string Status, double Confidence, string Key, int? Position);

/// <summary>One row of the drawing: the image, or one setting's readings of one capture.</summary>
public sealed record TimelineLane(string Title, IReadOnlyList<TimelineSpan> Spans);

/// <summary>A capture's lanes: the settings that read something checkable, and those that did not, folded away.</summary>
public sealed record TimelineCapture(string Key, string Title, IReadOnlyList<TimelineLane> Lanes, IReadOnlyList<TimelineLane> Folded);

/// <summary>
/// A tape timeline: tape time runs left to right; the image is the lane on top; each capture is a group of lanes,
/// one per detector setting, with its blocks drawn where they lie on the tape. Captures are put on one tape time by
/// their shared blocks: each capture's times are scaled by its measured playback speed and shifted so that the blocks
/// it shares with the first capture line up (the median shift); a capture that shares none starts where the first does.
/// </summary>
public sealed record TapeTimeline(double Start, double End, TimelineLane? Image, IReadOnlyList<TimelineCapture> Captures)
{
    /// <summary>The width a position with no reading to place it by is drawn at, in tape seconds.</summary>
    private const double MissingWidthSeconds = 0.2;

    /// <param name="captures">Captures in the order to draw them (the first is the reference), with their titles.</param>
    /// <param name="readings">Every reading of every capture and setting.</param>
    /// <param name="settings">Per capture, every setting the decode ran (also those that read nothing).</param>
    /// <param name="image">The image's positions in tape order, or null before any merge.</param>
    public static TapeTimeline Build(
        IReadOnlyList<(string Key, string Title)> captures,
        IReadOnlyList<TimelineReading> readings,
        IReadOnlyDictionary<string, IReadOnlyList<string>> settings,
        IReadOnlyList<TimelinePosition>? image)
    {
        ArgumentNullException.ThrowIfNull(captures);
        ArgumentNullException.ThrowIfNull(readings);
        ArgumentNullException.ThrowIfNull(settings);
        var byCapture = readings.GroupBy(r => r.CaptureKey).ToDictionary(g => g.Key, g => g.ToList(), StringComparer.Ordinal);
        var maps = new Dictionary<string, (double Speed, double Offset)>(StringComparer.Ordinal);
        Dictionary<string, double>? reference = null;
        double referenceFirst = 0;
        foreach (var (key, _) in captures)
        {
            var own = byCapture.GetValueOrDefault(key) ?? [];
            double speed = SpeedOf(own);
            var starts = TrustedStarts(own, speed);
            double first = own.Count > 0 ? own.Min(r => r.StartSeconds) * speed : 0;
            double offset;
            if (reference is null)
            {
                reference = starts;
                referenceFirst = first;
                offset = 0;
            }
            else
            {
                var shifts = starts.Where(s => reference.ContainsKey(s.Key)).Select(s => reference[s.Key] - s.Value).Order().ToList();
                offset = shifts.Count > 0 ? shifts[shifts.Count / 2] : referenceFirst - first;
            }

            maps[key] = (speed, offset);
        }

        double Map(TimelineReading r, double seconds) => maps.TryGetValue(r.CaptureKey, out var m) ? (seconds * m.Speed) + m.Offset : seconds;

        var lanesOf = new List<TimelineCapture>();
        foreach (var (key, title) in captures)
        {
            var own = byCapture.GetValueOrDefault(key) ?? [];
            var lanes = new List<TimelineLane>();
            var folded = new List<TimelineLane>();
            var names = settings.GetValueOrDefault(key) ?? [.. own.Select(r => r.Setting).Distinct()];
            foreach (var setting in names)
            {
                var spans = own.Where(r => r.Setting == setting).OrderBy(r => r.StartSeconds)
                    .Select(r => new TimelineSpan(Map(r, r.StartSeconds), Map(r, Math.Max(r.EndSeconds, r.StartSeconds)), r.Status, r.Confidence, r.Key, null))
                    .ToList();
                var lane = new TimelineLane(setting, spans);

                // A setting that read nothing its format could check (only failed readings, or none) did not suit the capture.
                bool useful = spans.Exists(s => s.Status == Vocabulary.Clean.Name || s.Status == Vocabulary.Unchecked.Name);
                (useful ? lanes : folded).Add(lane);
            }

            lanesOf.Add(new TimelineCapture(key, title, lanes, folded));
        }

        TimelineLane? imageLane = image is null ? null : new TimelineLane("Image", PlacePositions(image, readings, Map));
        var all = lanesOf.SelectMany(c => c.Lanes.Concat(c.Folded)).SelectMany(l => l.Spans).Concat(imageLane?.Spans ?? []).ToList();
        double start = all.Count > 0 ? all.Min(s => s.Start) : 0;
        double end = all.Count > 0 ? all.Max(s => s.End) : 1;
        return new TapeTimeline(start, Math.Max(end, start + 0.001), imageLane, lanesOf);
    }

    /// <summary>
    /// The timeline a tape image alone can give (the published catalogue has no decode runs): the image on top and,
    /// for each capture, one lane of the readings the image took from it, where they lay in that capture. A reading
    /// lasts until the capture's next one, at most the capture's typical block length.
    /// </summary>
    public static TapeTimeline FromImage(TapeImage image)
    {
        ArgumentNullException.ThrowIfNull(image);
        var readings = new List<TimelineReading>();
        foreach (var capture in image.Captures)
        {
            var used = image.Blocks
                .SelectMany(b => b.Sources.IsDefault ? [] : b.Sources.Where(s => s.CaptureSha256 == capture.CaptureSha256).Select(s => (Block: b, Source: s)))
                .OrderBy(u => u.Source.StartSeconds)
                .ToList();
            var steps = used.Zip(used.Skip(1), (a, b) => b.Source.StartSeconds - a.Source.StartSeconds).Where(d => d > 0).Order().ToList();
            double typical = steps.Count > 0 ? steps[steps.Count / 2] : 1;
            for (int i = 0; i < used.Count; i++)
            {
                var (block, source) = used[i];
                double next = i + 1 < used.Count ? used[i + 1].Source.StartSeconds : double.PositiveInfinity;
                double end = Math.Min(next, source.StartSeconds + typical);
                string status = block.Status == RecoveryStatus.Missing ? Vocabulary.Failed.Name : Vocabulary.Of(block.Status).Name;
                readings.Add(new TimelineReading(capture.CaptureSha256, "readings used", block.Key, status == Vocabulary.Clean.Name ? status : Vocabulary.Failed.Name,
                    source.Confidence, source.StartSeconds, Math.Max(end, source.StartSeconds + (0.05 * typical)), 1));
            }
        }

        var captures = image.Captures.Select(c => (c.CaptureSha256, c.FileName)).ToList();
        var positions = image.Blocks.Select(b => new TimelinePosition(b.Position, b.Key, Vocabulary.Of(b.Status).Name, b.Confidence)).ToList();
        return Build(captures, readings, new Dictionary<string, IReadOnlyList<string>>(StringComparer.Ordinal), positions);
    }

    /// <summary>The median playback speed of a capture's clean readings (1 when it has none).</summary>
    private static double SpeedOf(List<TimelineReading> readings)
    {
        var speeds = readings.Where(r => r.Status == Vocabulary.Clean.Name && r.Speed > 0).Select(r => r.Speed).Order().ToList();
        return speeds.Count > 0 ? speeds[speeds.Count / 2] : 1;
    }

    /// <summary>The first start, in nominal tape seconds, of each identity a capture read cleanly.</summary>
    private static Dictionary<string, double> TrustedStarts(List<TimelineReading> readings, double speed)
    {
        var starts = new Dictionary<string, double>(StringComparer.Ordinal);
        foreach (var r in readings.Where(r => r.Status == Vocabulary.Clean.Name).OrderBy(r => r.StartSeconds))
        {
            starts.TryAdd(r.Key, r.StartSeconds * speed);
        }

        return starts;
    }

    /// <summary>
    /// Each image position spans the readings of its identity; one that no reading places (a missing block between
    /// two read ones) is drawn in the gap between its neighbours, at a small width, so that it is seen, not hidden.
    /// </summary>
    private static List<TimelineSpan> PlacePositions(IReadOnlyList<TimelinePosition> image, IReadOnlyList<TimelineReading> readings, Func<TimelineReading, double, double> map)
    {
        var byKey = readings.GroupBy(r => r.Key).ToDictionary(g => g.Key, g => g.ToList(), StringComparer.Ordinal);
        var placed = new (double Start, double End)?[image.Count];
        for (int i = 0; i < image.Count; i++)
        {
            if (byKey.TryGetValue(image[i].Key, out var own))
            {
                // The readings of one copy agree on its start; a format that writes blocks twice has readings a block
                // apart, and the first copy's stretch is where the position starts.
                var starts = own.Select(r => map(r, r.StartSeconds)).Order().ToList();
                var ends = own.Select(r => map(r, r.EndSeconds)).Order().ToList();
                placed[i] = (starts[starts.Count / 2], Math.Max(ends[ends.Count / 2], starts[starts.Count / 2] + 0.01));
            }
        }

        var spans = new List<TimelineSpan>(image.Count);
        for (int i = 0; i < image.Count; i++)
        {
            var p = image[i];
            if (placed[i] is not { } at)
            {
                double before = PreviousEnd(placed, i);
                double after = NextStart(placed, i);
                double start = double.IsNaN(before) ? (double.IsNaN(after) ? i * MissingWidthSeconds : after - MissingWidthSeconds) : before;
                double end = double.IsNaN(after) || after <= start ? start + MissingWidthSeconds : Math.Min(after, start + Math.Max(MissingWidthSeconds, after - start));
                at = (start, end);
                placed[i] = at;
            }

            spans.Add(new TimelineSpan(at.Start, at.End, p.Status, p.Confidence, p.Key, p.Position));
        }

        return spans;
    }

    private static double PreviousEnd((double Start, double End)?[] placed, int i)
    {
        for (int k = i - 1; k >= 0; k--)
        {
            if (placed[k] is { } at)
            {
                return at.End;
            }
        }

        return double.NaN;
    }

    private static double NextStart((double Start, double End)?[] placed, int i)
    {
        for (int k = i + 1; k < placed.Length; k++)
        {
            if (placed[k] is { } at)
            {
                return at.Start;
            }
        }

        return double.NaN;
    }
}
