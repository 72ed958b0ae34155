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

        // A long tape has tens of thousands of readings: each is looked at a fixed number of times below (its capture's
        // time map found once per capture, its setting's lane once per capture), so drawing one grows with its readings.
        var lanesOf = new List<TimelineCapture>();
        foreach (var (key, title) in captures)
        {
            var own = byCapture.GetValueOrDefault(key) ?? [];
            var (speed, offset) = maps[key];
            var bySetting = new Dictionary<string, List<TimelineReading>>(StringComparer.Ordinal);
            foreach (var r in own)
            {
                if (!bySetting.TryGetValue(r.Setting, out var list))
                {
                    bySetting[r.Setting] = list = [];
                }

                list.Add(r);
            }

            var lanes = new List<TimelineLane>();
            var folded = new List<TimelineLane>();
            var names = settings.GetValueOrDefault(key) ?? [.. own.Select(r => r.Setting).Distinct()];
            foreach (var setting in names)
            {
                var read = InStartOrder(bySetting.GetValueOrDefault(setting) ?? []);
                var spans = new List<TimelineSpan>(read.Count);
                foreach (var r in read)
                {
                    spans.Add(new TimelineSpan((r.StartSeconds * speed) + offset, (Math.Max(r.EndSeconds, r.StartSeconds) * speed) + offset, r.Status, r.Confidence, r.Key, null));
                }

                var lane = new TimelineLane(setting, spans);

                // A setting that read nothing its format could check (only failed readings, or none) did not suit the capture.
                bool useful = spans.Exists(s => s.Status == Vocabulary.Clean.Name || s.Status == Vocabulary.Unchecked.Name);
                (useful ? lanes : folded).Add(lane);
            }

            lanesOf.Add(new TimelineCapture(key, title, lanes, folded));
        }

        TimelineLane? imageLane = image is null ? null : new TimelineLane("Image", PlacePositions(image, byCapture, maps));
        double start = 0, end = 1;
        bool any = false;
        foreach (var s in lanesOf.SelectMany(c => c.Lanes.Concat(c.Folded)).SelectMany(l => l.Spans).Concat(imageLane?.Spans ?? []))
        {
            // As Enumerable.Min and Max of doubles: a NaN start wins the minimum, a NaN end loses the maximum.
            start = !any || s.Start < start || double.IsNaN(s.Start) ? s.Start : start;
            end = !any || s.End > end || double.IsNaN(end) ? s.End : end;
            any = true;
        }

        return new TapeTimeline(start, Math.Max(end, start + 0.001), imageLane, lanesOf);
    }

    /// <summary>One setting's readings by start, in a stable order: as they came when they came so (the usual case).</summary>
    private static IReadOnlyList<TimelineReading> InStartOrder(List<TimelineReading> readings)
    {
        for (int i = 1; i < readings.Count; i++)
        {
            if (readings[i - 1].StartSeconds.CompareTo(readings[i].StartSeconds) > 0)
            {
                return [.. readings.OrderBy(r => r.StartSeconds)];
            }
        }

        return readings;
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
    private static List<TimelineSpan> PlacePositions(IReadOnlyList<TimelinePosition> image, Dictionary<string, List<TimelineReading>> byCapture, Dictionary<string, (double Speed, double Offset)> maps)
    {
        // Each identity's readings, on tape time (a capture not drawn keeps its own times), gathered in one pass.
        var byKey = new Dictionary<string, (List<double> Starts, List<double> Ends)>(StringComparer.Ordinal);
        foreach (var (capture, own) in byCapture)
        {
            var (speed, offset) = maps.TryGetValue(capture, out var m) ? m : (1.0, 0.0);
            bool drawn = maps.ContainsKey(capture);
            foreach (var r in own)
            {
                if (!byKey.TryGetValue(r.Key, out var times))
                {
                    byKey[r.Key] = times = ([], []);
                }

                times.Starts.Add(drawn ? (r.StartSeconds * speed) + offset : r.StartSeconds);
                times.Ends.Add(drawn ? (r.EndSeconds * speed) + offset : r.EndSeconds);
            }
        }

        var placedOf = new Dictionary<string, (double Start, double End)>(StringComparer.Ordinal);
        var placed = new (double Start, double End)?[image.Count];
        for (int i = 0; i < image.Count; i++)
        {
            if (placedOf.TryGetValue(image[i].Key, out var known))
            {
                placed[i] = known;
            }
            else if (byKey.TryGetValue(image[i].Key, out var own))
            {
                // The readings of one copy agree on its start; a format that writes blocks twice has readings a block
                // apart, and the first copy's stretch is where the position starts.
                own.Starts.Sort();
                own.Ends.Sort();
                double first = own.Starts[own.Starts.Count / 2];
                placed[i] = placedOf[image[i].Key] = (first, Math.Max(own.Ends[own.Ends.Count / 2], first + 0.01));
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
