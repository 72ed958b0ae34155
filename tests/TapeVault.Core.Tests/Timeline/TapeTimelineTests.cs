using System.Xml.Linq;
using TapeVault.Core.Timeline;
using Xunit;

namespace TapeVault.Core.Tests.Timeline;

/// <summary>The tape timeline: captures lined up on one tape time, useless settings folded, the image on top.</summary>
public sealed class TapeTimelineTests
{
    private static readonly (string, string)[] TwoCaptures = [("a", "Capture 1"), ("b", "Capture 2")];

    [Fact]
    public void Captures_AreLinedUp_ByTheBlocksTheyShare_AfterTheirOwnSpeed()
    {
        // Capture b started 3 s later into its recording and played 2 % fast: its capture times are shorter by the
        // speed and later by the start.
        var readings = new List<TimelineReading>();
        for (int k = 0; k < 5; k++)
        {
            double tape = 1 + (2 * k);
            readings.Add(new TimelineReading("a", "s1", $"F:{k}", "clean", 0.99, tape, tape + 1.5, 1.0));
            readings.Add(new TimelineReading("b", "s1", $"F:{k}", "clean", 0.99, (tape / 1.02) + 3, ((tape + 1.5) / 1.02) + 3, 1.02));
        }

        var t = TapeTimeline.Build(TwoCaptures, readings, new Dictionary<string, IReadOnlyList<string>>(), null);

        var a = t.Captures[0].Lanes.Single().Spans;
        var b = t.Captures[1].Lanes.Single().Spans;
        for (int k = 0; k < 5; k++)
        {
            Assert.Equal(a[k].Start, b[k].Start, 1e-6 + (0.03 * 3));
        }

        Assert.Null(t.Image);
    }

    [Fact]
    public void SettingsThatReadNothingCheckable_FoldAway_AndSettingsThatReadNothing_StillCount()
    {
        var readings = new List<TimelineReading>
        {
            new("a", "good", "F:0", "clean", 0.99, 1, 2, 1),
            new("a", "garbled", "F?:9", "failed", 0.1, 1, 2, 1),
        };
        var settings = new Dictionary<string, IReadOnlyList<string>> { ["a"] = ["good", "garbled", "silent"] };

        var t = TapeTimeline.Build([("a", "Capture 1")], readings, settings, null);

        Assert.Equal(["good"], t.Captures[0].Lanes.Select(l => l.Title));
        Assert.Equal(["garbled", "silent"], t.Captures[0].Folded.Select(l => l.Title));
    }

    [Fact]
    public void AMissingPosition_IsDrawnBetweenItsNeighbours_NotHidden()
    {
        var readings = new List<TimelineReading>
        {
            new("a", "s", "F:0", "clean", 0.99, 1, 2, 1),
            new("a", "s", "F:2", "clean", 0.99, 5, 6, 1),
        };
        TimelinePosition[] image = [new(0, "F:0", "clean", 0.99), new(1, "F:1", "missing", 0), new(2, "F:2", "clean", 0.99)];

        var t = TapeTimeline.Build([("a", "Capture 1")], readings, new Dictionary<string, IReadOnlyList<string>>(), image);

        var spans = t.Image!.Spans;
        Assert.Equal(3, spans.Count);
        Assert.True(spans[1].Start >= spans[0].End - 1e-9 && spans[1].End <= spans[2].Start + 1e-9, "the missing block lies between its neighbours");
        Assert.True(spans[1].End > spans[1].Start);
    }

    [Fact]
    public void Svg_IsWellFormed_WithOneTitledLinkPerImagePosition()
    {
        var readings = new List<TimelineReading>();
        var image = new List<TimelinePosition>();
        for (int k = 0; k < 6; k++)
        {
            readings.Add(new TimelineReading("a", "s", $"F:{k}", k == 3 ? "failed" : "clean", 0.9, k, k + 0.8, 1));
            image.Add(new TimelinePosition(k, $"F:{k}", k == 3 ? "missing" : "clean", k == 3 ? 0 : 0.9));
        }

        var t = TapeTimeline.Build([("a", "Capture <1> & co")], readings, new Dictionary<string, IReadOnlyList<string>>(), image);
        var svg = XDocument.Parse(TimelineSvg.Render(t, p => $"/items/1/positions/{p}"));

        XNamespace ns = "http://www.w3.org/2000/svg";
        var links = svg.Descendants(ns + "a").ToList();
        Assert.Equal(6, links.Count);
        Assert.Equal("/items/1/positions/3", (string?)links[3].Attribute("href"));
        Assert.Contains("missing", links[3].Element(ns + "title")!.Value, StringComparison.Ordinal);
        Assert.Contains(svg.Descendants(ns + "text"), e => e.Value == "Capture <1> & co");
    }

    [Fact]
    public void Svg_OfALongTape_StaysSmall()
    {
        // 400 blocks, 3 passes × 8 settings: the size the tape page must stay within (performance goal, 300 KB a page).
        var captures = Enumerable.Range(0, 3).Select(c => ($"c{c}", $"Capture {c}")).ToList();
        var readings = new List<TimelineReading>();
        var rng = new Random(7);
        foreach (var (key, _) in captures)
        {
            for (int s = 0; s < 8; s++)
            {
                for (int k = 0; k < 400; k++)
                {
                    readings.Add(new TimelineReading(key, $"setting {s}", $"F:{k}", rng.NextDouble() < 0.8 ? "clean" : "failed", rng.NextDouble(), 2.5 * k, (2.5 * k) + 2.2, 1));
                }
            }
        }

        var image = Enumerable.Range(0, 400).Select(k => new TimelinePosition(k, $"F:{k}", "clean", 0.999)).ToList();
        var t = TapeTimeline.Build(captures, readings, new Dictionary<string, IReadOnlyList<string>>(), image);
        string svg = TimelineSvg.Render(t, p => $"/items/1/positions/{p}");

        Assert.True(svg.Length < 250_000, $"{svg.Length} characters");
    }

    [Fact]
    public void Svg_OfATapeOfManyPositions_DrawsItsImageLaneAsPaths_WithoutALinkPerPosition()
    {
        // 800 positions in the drawing's 778 pixels: each narrower than a pixel, so a link each could not be picked
        // and would only add bytes; the page's positions table links them instead.
        var readings = new List<TimelineReading>();
        var image = new List<TimelinePosition>();
        for (int k = 0; k < 800; k++)
        {
            readings.Add(new TimelineReading("a", "s", $"F:{k}", "clean", 0.999, 1.6 * k, (1.6 * k) + 1.4, 1));
            image.Add(new TimelinePosition(k, $"F:{k}", k % 100 == 7 ? "missing" : "clean", k % 100 == 7 ? 0 : 0.999));
        }

        var t = TapeTimeline.Build([("a", "Capture 1")], readings, new Dictionary<string, IReadOnlyList<string>>(), image);
        string text = TimelineSvg.Render(t, p => $"/items/1/positions/{p}");
        var svg = XDocument.Parse(text);

        XNamespace ns = "http://www.w3.org/2000/svg";
        Assert.Empty(svg.Descendants(ns + "a"));
        Assert.Equal("img", (string?)svg.Root!.Attribute("role"));
        Assert.Contains(svg.Descendants(ns + "title"), e => e.Value.Contains("Image, 800 positions", StringComparison.Ordinal) && e.Value.Contains("8 missing", StringComparison.Ordinal));
        Assert.True(text.Length < 20_000, $"{text.Length} characters");
    }
    [Fact]
    public void ALongTapesLayout_IsTheLayoutWorkedOutReadingByReading_WhateverOrderTheReadingsCome()
    {
        // Three passes × 8 settings of a 400-block tape, with times whose arithmetic is exact in binary (multiples of
        // 1/4 s, speeds 1 and 2), so the expected layout is worked out here reading by reading, independently of how
        // Build gets there: capture b played at twice the speed and 4 s earlier on the tape than its own clock says;
        // capture z is not drawn (its readings only help place positions, on its own times). Readings come shuffled,
        // some starts tie within a lane (a stable order keeps them as they came), one listed setting read nothing,
        // one position's identity was never read, and one identity is at two positions.
        var rng = new Random(14);
        var readings = new List<TimelineReading>();
        foreach (var (capture, speed) in new[] { ("a", 1.0), ("b", 2.0), ("z", 1.0) })
        {
            for (int s = 0; s < 8; s++)
            {
                for (int k = 0; k < 400; k++)
                {
                    double tape = 2.5 * k, length = 2.25;
                    double start = capture == "b" ? (tape - 4) / 2 : tape;
                    double end = capture == "b" ? (tape + length - 4) / 2 : tape + length;
                    string status = s < 5 ? (rng.Next(10) < 8 ? "clean" : "failed") : "failed";
                    readings.Add(new TimelineReading(capture, $"setting {s}", $"F:{k}", status, rng.Next(100) / 100.0, start, k % 50 == 3 ? start - 0.25 : end, speed));
                    if (k % 40 == 5)
                    {
                        readings.Add(new TimelineReading(capture, $"setting {s}", $"F?:{k}", "failed", 0.25, start, start + 0.5, speed));
                    }
                }
            }
        }

        readings = [.. readings.OrderBy(_ => rng.Next())];
        var captures = new[] { ("a", "Capture 1"), ("b", "Capture 2") };
        var settings = new Dictionary<string, IReadOnlyList<string>>
        {
            ["a"] = [.. Enumerable.Range(0, 8).Select(s => $"setting {s}"), "silent"],
            ["b"] = [.. Enumerable.Range(0, 8).Select(s => $"setting {s}")],
        };
        var image = Enumerable.Range(0, 400).Select(k => new TimelinePosition(k, k == 17 ? "F:unread" : $"F:{k}", k == 17 ? "missing" : "clean", 0.999))
            .Append(new TimelinePosition(400, "F:0", "clean", 0.999)).ToList();

        var t = TapeTimeline.Build(captures, readings, settings, image);

        double Tape(string capture, double seconds) => capture == "b" ? (seconds * 2) + 4 : seconds;
        foreach (var (capture, title) in captures)
        {
            var drawn = t.Captures.Single(c => c.Key == capture);
            Assert.Equal(title, drawn.Title);
            var expected = settings[capture].Select(setting => new TimelineLane(setting, [.. readings
                .Where(r => r.CaptureKey == capture && r.Setting == setting).OrderBy(r => r.StartSeconds)
                .Select(r => new TimelineSpan(Tape(capture, r.StartSeconds), Tape(capture, Math.Max(r.EndSeconds, r.StartSeconds)), r.Status, r.Confidence, r.Key, null))])).ToList();
            var useful = expected.Where(l => l.Spans.Any(s => s.Status is "clean" or "unchecked")).ToList();
            Assert.Equal(useful.Select(l => l.Title), drawn.Lanes.Select(l => l.Title));
            Assert.Equal(expected.Except(useful).Select(l => l.Title), drawn.Folded.Select(l => l.Title));
            foreach (var (want, got) in useful.Concat(expected.Except(useful)).Zip(drawn.Lanes.Concat(drawn.Folded)))
            {
                Assert.Equal(want.Spans, got.Spans);
            }
        }

        // A read position spans the median start and end of its identity's readings on tape time (at least 0.01 s).
        var positions = t.Image!.Spans;
        Assert.Equal(401, positions.Count);
        foreach (var p in positions.Where(p => p.Key != "F:unread"))
        {
            var own = readings.Where(r => r.Key == p.Key).ToList();
            var starts = own.Select(r => r.CaptureKey == "z" ? r.StartSeconds : Tape(r.CaptureKey, r.StartSeconds)).Order().ToList();
            var ends = own.Select(r => r.CaptureKey == "z" ? r.EndSeconds : Tape(r.CaptureKey, r.EndSeconds)).Order().ToList();
            Assert.Equal((starts[starts.Count / 2], Math.Max(ends[ends.Count / 2], starts[starts.Count / 2] + 0.01)), (p.Start, p.End));
        }

        // The unread one lies between its neighbours; the extent is every drawn span's.
        Assert.Equal(positions[16].End, positions[17].Start);
        var all = t.Captures.SelectMany(c => c.Lanes.Concat(c.Folded)).SelectMany(l => l.Spans).Concat(positions).ToList();
        Assert.Equal((all.Min(s => s.Start), all.Max(s => s.End)), (t.Start, t.End));
    }
}
