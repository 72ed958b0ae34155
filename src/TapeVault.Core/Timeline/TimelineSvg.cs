using System.Globalization;
using System.Net;
using System.Text;
using TapeVault.Core.Text;

namespace TapeVault.Core.Timeline;

/// <summary>
/// Draws a <see cref="TapeTimeline"/> as SVG: the web app's tape page and the published catalogue show the same
/// drawing. Outcome is told by shape as well as colour (solid bar, hatched, cross-hatched, low bar, thin strip,
/// dashed outline), confidence by opacity; each image position is a link (keyboard-focusable, with its details in a
/// title) where the caller gives one. Lanes of one capture are drawn as one path per outcome and shade, so a tape of
/// hundreds of blocks read by many settings stays small.
/// </summary>
public static class TimelineSvg
{
    private const int Width = 960;
    private const int Gutter = 170;
    private const int Right = 12;
    private const int AxisHeight = 22;
    private const int LaneHeight = 16;
    private const int LaneGap = 3;
    private const int ImageLaneHeight = 24;
    private const int GroupGap = 10;
    private const int LegendHeight = 26;

    /// <summary>Above this many image positions (under three pixels each) the image lane is drawn without a link per position.</summary>
    public const int MaxLinkedPositions = 260;

    private static readonly CultureInfo Invariant = CultureInfo.InvariantCulture;

    /// <summary>
    /// The drawing. <paramref name="folded"/> false: the image lane and every capture's useful lanes; true: only the
    /// lanes folded away (settings that read nothing checkable), for a "show them" disclosure.
    /// </summary>
    public static string Render(TapeTimeline timeline, Func<int, string>? positionLink, bool folded = false, string title = "Tape timeline")
    {
        ArgumentNullException.ThrowIfNull(timeline);
        var groups = timeline.Captures.Select(c => (c.Title, Lanes: folded ? c.Folded : c.Lanes)).Where(g => g.Lanes.Count > 0).ToList();
        bool image = !folded && timeline.Image is not null;
        int height = AxisHeight + (image ? ImageLaneHeight + GroupGap : 0) + groups.Sum(g => 14 + (g.Lanes.Count * (LaneHeight + LaneGap)) + GroupGap) + LegendHeight;
        double span = timeline.End - timeline.Start;
        double X(double t) => Gutter + ((t - timeline.Start) / span * (Width - Gutter - Right));

        var b = new StringBuilder(4096);
        // A timeline whose positions are links is a group of controls, not a picture: an image role would hide its links
        // from assistive technology (WCAG 2.1 4.1.2; axe-core's nested-interactive rule).
        // A long tape's positions are narrower than a pointer can pick (800 positions in 780 pixels): its image lane is
        // drawn like a setting's lane, one path per outcome and shade, and its positions are reached from the page's
        // positions table instead; a link per position would only add bytes.
        bool linked = image && positionLink is not null && timeline.Image!.Spans.Count <= MaxLinkedPositions;
        string role = linked ? "group" : "img";
        b.Append(Invariant, $"<svg class=\"timeline\" role=\"{role}\" aria-label=\"{E(title)}\" width=\"{Width}\" height=\"{height}\" viewBox=\"0 0 {Width} {height}\" xmlns=\"http://www.w3.org/2000/svg\">\n");
        b.Append(Invariant, $"<title>{E(title)}: tape time from left to right, {(image ? "the image on top, " : string.Empty)}then each capture's detector settings.</title>\n");
        AppendPatterns(b);
        AppendAxis(b, timeline, X, height);
        int y = AxisHeight;
        if (image)
        {
            b.Append(Invariant, $"<text class=\"tl-lane\" x=\"4\" y=\"{y + 16}\" font-size=\"13\" font-weight=\"700\">Image</text>\n");
            if (timeline.Image!.Spans.Count > MaxLinkedPositions)
            {
                AppendSpans(b, timeline.Image.Spans, $"Image, {timeline.Image.Spans.Count} positions", X, y, ImageLaneHeight);
            }
            else
            {
                AppendPositions(b, timeline.Image.Spans, positionLink, X, y);
            }

            y += ImageLaneHeight + GroupGap;
        }

        foreach (var (captureTitle, lanes) in groups)
        {
            b.Append(Invariant, $"<text class=\"tl-capture\" x=\"4\" y=\"{y + 11}\" font-size=\"12\" font-weight=\"700\">{E(Shorten(captureTitle, 60))}</text>\n");
            b.Append(Invariant, $"<line x1=\"{Gutter}\" y1=\"{y + 12.5}\" x2=\"{Width - Right}\" y2=\"{y + 12.5}\" stroke=\"#b9b2a3\" stroke-width=\"0.5\"/>\n");
            y += 14;
            foreach (var lane in lanes)
            {
                AppendLane(b, lane, captureTitle, X, y);
                y += LaneHeight + LaneGap;
            }

            y += GroupGap;
        }

        AppendLegend(b, y + 6);
        b.Append("</svg>\n");
        return b.ToString();
    }

    /// <summary>The image lane of a tape of few positions: each position a shape with its details in a title, and a link where the caller gives one.</summary>
    private static void AppendPositions(StringBuilder b, IReadOnlyList<TimelineSpan> spans, Func<int, string>? positionLink, Func<double, double> x, int y)
    {
        foreach (var s in spans)
        {
            double x0 = x(s.Start);
            double w = Math.Max(2, x(s.End) - x0 - 1);
            var term = Vocabulary.Of(s.Status);
            string tip = $"position {s.Position} ({s.Key}): {term.Word}, confidence {s.Confidence.ToString("0.000", Invariant)}, at {s.Start.ToString("0.0", Invariant)} s";
            string shape = Shape(s.Status, x0, y, w, ImageLaneHeight, Opacity(s.Confidence, s.Status));
            if (positionLink is not null && s.Position is { } position)
            {
                b.Append(Invariant, $"<a href=\"{E(positionLink(position))}\" class=\"tl-position\"><title>{E(tip)}</title>{shape}</a>\n");
            }
            else
            {
                b.Append(Invariant, $"<g><title>{E(tip)}</title>{shape}</g>\n");
            }
        }
    }

    /// <summary>One setting's readings: one path per outcome and shade, with a title that counts them.</summary>
    private static void AppendLane(StringBuilder b, TimelineLane lane, string captureTitle, Func<double, double> x, int y)
    {
        b.Append(Invariant, $"<text class=\"tl-lane\" x=\"12\" y=\"{y + 12}\" font-size=\"11\">{E(Shorten(lane.Title, 24))}</text>\n");
        AppendSpans(b, lane.Spans, $"{captureTitle} · {lane.Title}", x, y, LaneHeight);
    }

    /// <summary>Spans as one path per outcome and shade, in a group whose title counts them.</summary>
    private static void AppendSpans(StringBuilder b, IReadOnlyList<TimelineSpan> spans, string title, Func<double, double> x, int y, int laneHeight)
    {
        var counts = spans.GroupBy(s => s.Status).Select(g => $"{g.Count()} {Vocabulary.Of(g.Key).Word}");
        b.Append(Invariant, $"<g><title>{E(title)}: {E(spans.Count == 0 ? "read nothing" : string.Join(", ", counts))}</title>\n");
        foreach (var group in spans.GroupBy(s => (s.Status, Shade: OpacityBucket(s.Confidence, s.Status))))
        {
            // Whole pixels, and neighbours less than a pixel apart drawn as one bar: a long tape packs several
            // blocks into a pixel, where separate bars would only add bytes.
            var d = new StringBuilder();
            var (top, h) = Band(group.Key.Status, y, laneHeight);
            int runStart = -1, runEnd = -1;
            foreach (var s in group.OrderBy(s => s.Start))
            {
                int x0 = (int)Math.Round(x(s.Start));
                int x1 = Math.Max(x0 + 1, (int)Math.Round(x(s.End)) - 1);
                if (runStart >= 0 && x0 <= runEnd + 1)
                {
                    runEnd = Math.Max(runEnd, x1);
                    continue;
                }

                AppendBar(d, runStart, runEnd, top, h);
                (runStart, runEnd) = (x0, x1);
            }

            AppendBar(d, runStart, runEnd, top, h);

            var (fill, stroke, dash) = Paint(group.Key.Status);
            b.Append(Invariant, $"<path d=\"{d}\" fill=\"{fill}\" stroke=\"{stroke}\" stroke-width=\"0.8\"{dash} opacity=\"{(group.Key.Shade / 10.0).ToString("0.0", Invariant)}\"/>\n");
        }

        b.Append("</g>\n");
    }

    private static void AppendBar(StringBuilder d, int x0, int x1, double top, double height)
    {
        if (x0 >= 0)
        {
            d.Append(Invariant, $"M{x0} {top:0.#}h{x1 - x0}v{height:0.#}h{x0 - x1}z");
        }
    }

    private static void AppendAxis(StringBuilder b, TapeTimeline t, Func<double, double> x, int height)
    {
        double span = t.End - t.Start;
        double step = NiceStep(span / 8);
        b.Append(Invariant, $"<line x1=\"{Gutter}\" y1=\"{AxisHeight - 4}\" x2=\"{Width - Right}\" y2=\"{AxisHeight - 4}\" stroke=\"#6b6457\" stroke-width=\"1\"/>\n");
        for (double tick = Math.Ceiling(t.Start / step) * step; tick <= t.End + 1e-9; tick += step)
        {
            double px = x(tick);
            b.Append(Invariant, $"<line x1=\"{px:0.#}\" y1=\"{AxisHeight - 8}\" x2=\"{px:0.#}\" y2=\"{height - LegendHeight}\" stroke=\"#d8d2c4\" stroke-width=\"0.5\"/>");
            b.Append(Invariant, $"<text x=\"{px:0.#}\" y=\"{AxisHeight - 10}\" font-size=\"10\" text-anchor=\"middle\">{Clock(tick)}</text>\n");
        }

        b.Append(Invariant, $"<text x=\"4\" y=\"{AxisHeight - 10}\" font-size=\"10\">tape time</text>\n");
    }

    private static void AppendLegend(StringBuilder b, int y)
    {
        double x = Gutter;
        foreach (var term in new[] { Vocabulary.Clean, Vocabulary.Voted, Vocabulary.Repaired, Vocabulary.Unchecked, Vocabulary.Failed, Vocabulary.Missing })
        {
            b.Append(Invariant, $"<g>{Shape(term.Name, x, y, 22, 14)}</g><text x=\"{x + 26:0.#}\" y=\"{y + 11}\" font-size=\"11\">{E(term.Word)}</text>\n");
            x += 34 + (term.Word.Length * 6.5);
        }

        b.Append(Invariant, $"<text x=\"{x + 8:0.#}\" y=\"{y + 11}\" font-size=\"11\">paler: less confident</text>\n");
    }

    private static void AppendPatterns(StringBuilder b) => b.Append(
        "<defs>" +
        "<pattern id=\"tl-hatch\" width=\"5\" height=\"5\" patternUnits=\"userSpaceOnUse\" patternTransform=\"rotate(45)\"><rect width=\"5\" height=\"5\" fill=\"#f0dcb4\"/><line x1=\"0\" y1=\"0\" x2=\"0\" y2=\"5\" stroke=\"#a4691c\" stroke-width=\"2.2\"/></pattern>" +
        "<pattern id=\"tl-cross\" width=\"6\" height=\"6\" patternUnits=\"userSpaceOnUse\"><rect width=\"6\" height=\"6\" fill=\"#f0dcb4\"/><path d=\"M0 0L6 6M6 0L0 6\" stroke=\"#a4691c\" stroke-width=\"1.2\"/></pattern>" +
        "</defs>\n");

    /// <summary>Where in its lane a span of this outcome is drawn: checked outcomes fill it, unchecked ones its lower part, failed ones a strip.</summary>
    private static (double Top, double Height) Band(string status, double y, double laneHeight) => status switch
    {
        "unchecked" => (y + (laneHeight * 0.35), laneHeight * 0.65),
        "failed" => (y + (laneHeight * 0.72), laneHeight * 0.28),
        _ => (y, laneHeight),
    };

    private static (string Fill, string Stroke, string Dash) Paint(string status) => status switch
    {
        "clean" => ("#2f6b55", "#1f4a3a", string.Empty),
        "voted" => ("url(#tl-hatch)", "#a4691c", string.Empty),
        "repaired" => ("url(#tl-cross)", "#a4691c", string.Empty),
        "unchecked" => ("#5d7591", "#3d5066", string.Empty),
        "failed" => ("#a8432f", "#7d2f20", string.Empty),
        _ => ("none", "#a8432f", " stroke-dasharray=\"3 2\""),
    };

    private static string Shape(string status, double x, double y, double w, double h, string opacity = "1")
    {
        var (top, height) = Band(status, y, h);
        var (fill, stroke, dash) = Paint(status);
        return string.Create(Invariant, $"<rect x=\"{x:0.#}\" y=\"{top:0.#}\" width=\"{w:0.#}\" height=\"{height:0.#}\" fill=\"{fill}\" stroke=\"{stroke}\"{dash}{(opacity == "1" ? string.Empty : $" opacity=\"{opacity}\"")}/>");
    }

    /// <summary>
    /// Opacity by confidence, in four steps (tenths: 3, 5, 8, 10; the last for 0.99 and above), few enough to tell apart
    /// and to draw a lane as a handful of paths. A missing position is drawn at full strength, or it would vanish.
    /// </summary>
    private static int OpacityBucket(double confidence, string status) =>
        status == Vocabulary.Missing.Name ? 10 : confidence switch { >= 0.99 => 10, >= 0.9 => 8, >= 0.5 => 5, _ => 3 };

    private static string Opacity(double confidence, string status) => (OpacityBucket(confidence, status) / 10.0).ToString("0.0", Invariant);

    private static double NiceStep(double rough)
    {
        foreach (double step in new[] { 0.1, 0.2, 0.5, 1, 2, 5, 10, 15, 30, 60, 120, 300, 600, 900, 1800 })
        {
            if (step >= rough)
            {
                return step;
            }
        }

        return 3600;
    }

    private static string Clock(double seconds)
    {
        if (seconds < 60)
        {
            return seconds.ToString(seconds % 1 == 0 ? "0" : "0.0", Invariant) + " s";
        }

        var t = TimeSpan.FromSeconds(seconds);
        return string.Create(Invariant, $"{(int)t.TotalMinutes}:{t.Seconds:00}");
    }

    private static string Shorten(string text, int length) => text.Length <= length ? text : string.Concat(text.AsSpan(0, length - 1), "…");

    private static string E(string text) => WebUtility.HtmlEncode(text);
}
