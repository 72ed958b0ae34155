using System.Globalization;
using System.Text;
using Microsoft.AspNetCore.Html;
using TapeVault.Web.Api;
using static TapeVault.Web.Plots.SvgFrame;

namespace TapeVault.Web.Plots;

/// <summary>
/// The capture page's four plots as server-drawn SVG: no script needed. Each carries a title and a one-sentence
/// description for screen readers; the page puts the full figures in a table beside each.
/// </summary>
public static class CapturePlotSvg
{
    private const double Width = 960;
    private const double Left = 70;
    private const double Right = 16;
    private const double PlotWidth = Width - Left - Right;

    /// <summary>Up to this many blocks, each is drawn as its own link; beyond, they would be slivers under a pixel wide.</summary>
    public const int BlocksLinked = 150;

    /// <summary>Up to this many speed points, the table lists every one; beyond, it summarises.</summary>
    public const int SpeedRowsListed = 200;

    /// <summary>The whole capture, with each block of the run shaded and linked to its zoom.</summary>
    public static IHtmlContent Overview(string id, WaveformView wave, IReadOnlyList<BlockPositionView> blocks, int? selected, Func<BlockPositionView, string> link)
    {
        ArgumentNullException.ThrowIfNull(wave);
        ArgumentNullException.ThrowIfNull(blocks);
        ArgumentNullException.ThrowIfNull(link);
        const double height = 250;
        double duration = Math.Max(wave.DurationSeconds, 1e-3);
        var frame = new SvgFrame(Left, 28, PlotWidth, height - 28 - 46, 0, duration, -1, 1);
        var svg = Open(id, height, "Waveform of the whole capture",
            $"The signal's lowest and highest level in each of {wave.Minimum.Count} columns across {duration:0.0} seconds, full scale ±1; {blocks.Count} block(s) marked" +
            (blocks.Count <= BlocksLinked ? ", each a link to its zoom." : "; a bar above the plot marks stretches with a failed block. Choose blocks from the list below."),
            holdsLinks: blocks.Count <= BlocksLinked);
        var (xTicks, xTitle) = TimeTicks(0, duration);
        frame.Axes(svg, xTicks, [.. new[] { -1.0, -0.5, 0, 0.5, 1 }.Select(v => (v, v.ToString("0.#", CultureInfo.InvariantCulture)))], xTitle, "level (full scale)");
        if (blocks.Count <= BlocksLinked)
        {
            foreach (var b in blocks)
            {
                double x0 = frame.X(b.StartSeconds);
                double x1 = Math.Max(frame.X(b.EndSeconds), x0 + 2);
                string chosen = b.Position == selected ? " plot-block-selected" : string.Empty;
                svg.Append($"<a href=\"{Escape(link(b))}\" class=\"plot-block-link\">");
                svg.Append($"<title>Block position {b.Position} ({Escape(b.Identity)}): {StatusText.Word(b.Status)}, {b.StartSeconds:0.00}–{b.EndSeconds:0.00} s. Select to zoom.</title>");
                svg.Append($"<rect class=\"plot-block plot-block-{Escape(b.Status)}{chosen}\" x=\"{N(x0)}\" y=\"{N(frame.Top)}\" width=\"{N(x1 - x0)}\" height=\"{N(frame.Height)}\"/>");
                if (blocks.Count <= 60)
                {
                    svg.Append($"<text class=\"plot-block-label\" x=\"{N((x0 + x1) / 2)}\" y=\"{N(frame.Top - 6)}\" text-anchor=\"middle\">{StatusText.Symbol(b.Status)}</text>");
                }

                svg.Append("</a>");
            }
        }
        else
        {
            // Too many blocks to tell apart: one strip per pixel, showing the worst status of the blocks under it, and a
            // tick row above marking the pixels that hold a failed block (by position, not colour alone).
            int pixels = (int)Math.Ceiling(PlotWidth);
            var worst = new int[pixels];
            foreach (var b in blocks)
            {
                int p0 = Math.Clamp((int)(frame.X(b.StartSeconds) - frame.Left), 0, pixels - 1);
                int p1 = Math.Clamp((int)(frame.X(b.EndSeconds) - frame.Left), p0, pixels - 1);
                int rank = b.Status switch { "clean" => 1, "unchecked" => 2, _ => 3 };
                for (int p = p0; p <= p1; p++)
                {
                    worst[p] = Math.Max(worst[p], rank);
                }
            }

            var failedTicks = new StringBuilder();
            for (int p = 0; p < pixels;)
            {
                int q = p;
                while (q < pixels && worst[q] == worst[p])
                {
                    q++;
                }

                if (worst[p] > 0)
                {
                    string status = worst[p] switch { 1 => "clean", 2 => "unchecked", _ => "failed" };
                    svg.Append($"<rect class=\"plot-block plot-block-{status}\" x=\"{N(frame.Left + p)}\" y=\"{N(frame.Top)}\" width=\"{q - p}\" height=\"{N(frame.Height)}\"/>");
                    if (worst[p] == 3)
                    {
                        failedTicks.Append($"M{N(frame.Left + p)} {N(frame.Top - 10)}h{Math.Max(2, q - p)}");
                    }
                }

                p = q;
            }

            if (failedTicks.Length > 0)
            {
                svg.Append($"<path class=\"plot-failed-ticks\" d=\"{failedTicks}\"/>");
            }

            if (blocks.FirstOrDefault(b => b.Position == selected) is { } shown)
            {
                double x0 = frame.X(shown.StartSeconds);
                svg.Append($"<rect class=\"plot-block-outline\" x=\"{N(x0 - 1)}\" y=\"{N(frame.Top)}\" width=\"{N(Math.Max(frame.X(shown.EndSeconds), x0 + 2) - x0 + 2)}\" height=\"{N(frame.Height)}\"/>");
            }
        }

        svg.Append($"<path class=\"plot-wave\" d=\"{frame.MinMaxPath(wave.Minimum, wave.Maximum, 0, wave.SecondsPerColumn)}\"/>");
        return Close(svg);
    }

    /// <summary>The zoomed stretch: the capture's signal above, the detector's conditioned signal, switching band and edges below.</summary>
    public static IHtmlContent Zoom(string id, ZoomView zoom)
    {
        ArgumentNullException.ThrowIfNull(zoom);
        const double height = 420;
        var signal = zoom.Signal;
        double from = signal.FromSeconds;
        double to = from + signal.DurationSeconds;
        double peak = RoundUp(Math.Max(MaxAbs(signal.Minimum, signal.Maximum), 1e-3));
        double conditionedPeak = RoundUp(Math.Max(Math.Max(MaxAbs(zoom.Conditioned.Minimum, zoom.Conditioned.Maximum), zoom.Band.Count > 0 ? zoom.Band.Max() : 0) * 1.1, 1e-4));
        var top = new SvgFrame(Left, 14, PlotWidth, 140, from, to, -peak, peak);
        var bottom = new SvgFrame(Left, 184, PlotWidth, 180, from, to, -conditionedPeak, conditionedPeak);
        int rising = zoom.Edges.Count(e => e.Rising);
        var svg = Open(id, height, $"Zoomed stretch with detector setting {zoom.Choice.Setting}",
            $"{signal.DurationSeconds * 1000:0.#} ms from {from:0.000} s. Top: the capture's signal. Bottom: the signal as setting {zoom.Choice.Setting} conditions it, the switching band around zero, and {zoom.Edges.Count} counted edge(s) ({rising} rising, {zoom.Edges.Count - rising} falling).");
        var (xTicks, xTitle) = TimeTicks(from, to);
        top.Axes(svg, xTicks, SymmetricTicks(peak), string.Empty, "signal", drawXLabels: false);
        svg.Append($"<path class=\"plot-wave\" d=\"{top.MinMaxPath(signal.Minimum, signal.Maximum, from, signal.SecondsPerColumn)}\"/>");

        bottom.Axes(svg, xTicks, SymmetricTicks(conditionedPeak), xTitle, "conditioned");

        // The band as a shaded area between +band and −band, edged by dashed lines.
        var upper = new StringBuilder();
        var lower = new StringBuilder();
        var area = new StringBuilder();
        double spc = zoom.Conditioned.SecondsPerColumn;
        for (int c = 0; c < zoom.Band.Count; c++)
        {
            double x = bottom.X(from + ((c + 0.5) * spc));
            upper.Append(c == 0 ? 'M' : 'L').Append(N(x)).Append(' ').Append(N(bottom.Y(zoom.Band[c])));
            lower.Append(c == 0 ? 'M' : 'L').Append(N(x)).Append(' ').Append(N(bottom.Y(-zoom.Band[c])));
        }

        area.Append(upper);
        for (int c = zoom.Band.Count - 1; c >= 0; c--)
        {
            area.Append('L').Append(N(bottom.X(from + ((c + 0.5) * spc)))).Append(' ').Append(N(bottom.Y(-zoom.Band[c])));
        }

        if (zoom.Band.Count > 0)
        {
            svg.Append($"<path class=\"plot-band-area\" d=\"{area}Z\"/>");
            svg.Append($"<path class=\"plot-band\" d=\"{upper}\"/><path class=\"plot-band\" d=\"{lower}\"/>");
        }

        svg.Append($"<path class=\"plot-conditioned\" d=\"{bottom.MinMaxPath(zoom.Conditioned.Minimum, zoom.Conditioned.Maximum, from, spc)}\"/>");

        // Edges: a thin line through both panels and a triangle pointing the way the trigger switched (shape, not colour).
        var lines = new StringBuilder();
        foreach (var e in zoom.Edges)
        {
            double x = bottom.X(e.Seconds);
            lines.Append('M').Append(N(x)).Append(' ').Append(N(top.Top)).Append('V').Append(N(bottom.Bottom));
        }

        if (zoom.Edges.Count > 0)
        {
            svg.Append($"<path class=\"plot-edge\" d=\"{lines}\"/>");
        }

        if (zoom.Edges.Count <= 400)
        {
            foreach (var e in zoom.Edges)
            {
                double x = bottom.X(e.Seconds);
                string points = e.Rising
                    ? $"{N(x - 4)},{N(bottom.Top + 8)} {N(x + 4)},{N(bottom.Top + 8)} {N(x)},{N(bottom.Top)}"
                    : $"{N(x - 4)},{N(bottom.Bottom - 8)} {N(x + 4)},{N(bottom.Bottom - 8)} {N(x)},{N(bottom.Bottom)}";
                svg.Append($"<polygon class=\"plot-edge-mark\" points=\"{points}\"/>");
            }
        }

        return Close(svg);
    }

    /// <summary>The pulse-length histogram on a log axis, with the profile's durations, boundaries and limits as vertical lines.</summary>
    public static IHtmlContent Histogram(string id, HistogramView histogram)
    {
        ArgumentNullException.ThrowIfNull(histogram);
        const double height = 330;
        double low = histogram.Bins[0].FromSeconds;
        double high = histogram.Bins[^1].ToSeconds;
        long most = Math.Max(1, histogram.Bins.Max(b => b.Count));
        double yMax = RoundUp(most * 1.15);
        var frame = new SvgFrame(Left, 64, PlotWidth, height - 64 - 46, low, high, 0, yMax, logX: true);
        long total = histogram.Bins.Sum(b => b.Count);
        var svg = Open(id, height, $"Pulse lengths read by setting {histogram.Choice.Setting}",
            $"{total} interval(s) between counted edges in {histogram.Bins.Count} bins from {low * 1e6:0} to {high * 1e6:0} µs on a log scale, with {histogram.Marks.Count} marked durations.");
        frame.Axes(svg, [.. LogTicks(low * 1e6, high * 1e6).Select(t => (t / 1e6, t.ToString("0", CultureInfo.InvariantCulture)))],
            [.. NiceTicks(0, yMax, 4).Select(t => (t, t.ToString("0", CultureInfo.InvariantCulture)))],
            "interval between counted edges (µs, log scale)", "intervals per bin");
        foreach (var b in histogram.Bins.Where(b => b.Count > 0))
        {
            double x0 = frame.X(b.FromSeconds);
            double x1 = frame.X(b.ToSeconds);
            double y = frame.Y(b.Count);
            svg.Append($"<rect class=\"plot-bar\" x=\"{N(x0)}\" y=\"{N(y)}\" width=\"{N(Math.Max(0.5, x1 - x0 - 0.5))}\" height=\"{N(frame.Bottom - y)}\"><title>{b.FromSeconds * 1e6:0.0}–{b.ToSeconds * 1e6:0.0} µs: {b.Count}</title></rect>");
        }

        // Labels stagger over three rows above the plot so that neighbouring marks do not overprint.
        int row = 0;
        foreach (var m in histogram.Marks)
        {
            double x = frame.X(m.Seconds);
            svg.Append($"<line class=\"plot-mark plot-mark-{Escape(m.Kind)}\" x1=\"{N(x)}\" x2=\"{N(x)}\" y1=\"{N(frame.Top - 4)}\" y2=\"{N(frame.Bottom)}\"/>");
            double y = frame.Top - 8 - (row * 16);
            svg.Append($"<text class=\"plot-mark-label plot-mark-label-{Escape(m.Kind)}\" x=\"{N(x)}\" y=\"{N(y)}\" text-anchor=\"middle\">{Escape(m.Label)}</text>");
            row = (row + 1) % 3;
        }

        return Close(svg);
    }

    /// <summary>Playback speed per block against time, as a deviation from nominal in per cent.</summary>
    public static IHtmlContent Speed(string id, SpeedView speed, double durationSeconds)
    {
        ArgumentNullException.ThrowIfNull(speed);
        const double height = 260;
        double worst = speed.Points.Count == 0 ? 0 : speed.Points.Max(p => Math.Abs(p.Speed - 1) * 100);
        double span = RoundUp(Math.Max(1, worst * 1.25));
        double duration = Math.Max(durationSeconds, 1e-3);
        var frame = new SvgFrame(Left, 16, PlotWidth, height - 16 - 46, 0, duration, -span, span);
        var svg = Open(id, height, $"Playback speed measured by setting {speed.Choice.Setting}",
            $"{speed.Points.Count} block(s); speed as per cent above or below nominal against time in the capture" +
            (speed.MedianSpeed is { } m ? $"; median {(m - 1) * 100:+0.00;-0.00;0.00} %." : "."));
        var (xTicks, xTitle) = TimeTicks(0, duration);
        frame.Axes(svg, xTicks, [.. NiceTicks(-span, span, 4).Select(t => (t, t.ToString("+0.#;-0.#;0", CultureInfo.InvariantCulture)))], xTitle, "speed vs nominal (%)");
        svg.Append($"<line class=\"plot-nominal\" x1=\"{N(frame.Left)}\" x2=\"{N(frame.Right)}\" y1=\"{N(frame.Y(0))}\" y2=\"{N(frame.Y(0))}\"/>");
        // The line joining the points helps the eye follow a drift; across hundreds of blocks it is only clutter.
        if (speed.Points.Count > 1 && speed.Points.Count <= SpeedRowsListed)
        {
            var d = new StringBuilder();
            for (int i = 0; i < speed.Points.Count; i++)
            {
                var p = speed.Points[i];
                d.Append(i == 0 ? 'M' : 'L').Append(N(frame.X(p.StartSeconds))).Append(' ').Append(N(frame.Y((p.Speed - 1) * 100)));
            }

            svg.Append($"<path class=\"plot-speed-line\" d=\"{d}\"/>");
        }

        // Clean readings are dots, all others crosses: the shape carries the status. Many points share two paths and no tips.
        bool many = speed.Points.Count > SpeedRowsListed;
        var dots = new StringBuilder();
        var crosses = new StringBuilder();
        foreach (var p in speed.Points)
        {
            double x = frame.X(p.StartSeconds);
            double y = frame.Y((p.Speed - 1) * 100);
            double r = many ? 2 : 4;
            if (many)
            {
                (p.Status == "clean" ? dots : crosses).Append(p.Status == "clean"
                    ? $"M{N(x - r)} {N(y)}a{N(r)} {N(r)} 0 1 0 {N(2 * r)} 0a{N(r)} {N(r)} 0 1 0 {N(-2 * r)} 0"
                    : $"M{N(x - 4)} {N(y - 4)}L{N(x + 4)} {N(y + 4)}M{N(x - 4)} {N(y + 4)}L{N(x + 4)} {N(y - 4)}");
                continue;
            }

            string tip = $"<title>Position {p.Position} ({Escape(p.Identity)}) at {p.StartSeconds:0.00} s: {(p.Speed - 1) * 100:+0.00;-0.00;0.00} %, {StatusText.Word(p.Status)}</title>";
            svg.Append(p.Status == "clean"
                ? $"<circle class=\"plot-point plot-point-clean\" cx=\"{N(x)}\" cy=\"{N(y)}\" r=\"{N(r)}\">{tip}</circle>"
                : $"<path class=\"plot-point plot-point-other\" d=\"M{N(x - 4)} {N(y - 4)}L{N(x + 4)} {N(y + 4)}M{N(x - 4)} {N(y + 4)}L{N(x + 4)} {N(y - 4)}\">{tip}</path>");
        }

        if (dots.Length > 0)
        {
            svg.Append($"<path class=\"plot-point plot-point-clean\" d=\"{dots}\"/>");
        }

        if (crosses.Length > 0)
        {
            svg.Append($"<path class=\"plot-point plot-point-other\" d=\"{crosses}\"/>");
        }

        return Close(svg);
    }


    /// <summary>Time ticks and the axis title: minutes and seconds for long spans, seconds with as many decimals as the step needs otherwise.</summary>
    public static (IReadOnlyList<(double, string)> Ticks, string Title) TimeTicks(double from, double to)
    {
        double span = to - from;
        if (span >= 180)
        {
            double stepMinutes = NiceTicks(0, span / 60, 8) is { Count: > 1 } t ? t[1] - t[0] : 1;
            var ticks = new List<(double, string)>();
            for (double m = Math.Ceiling(from / 60 / stepMinutes) * stepMinutes; m * 60 <= to; m += stepMinutes)
            {
                ticks.Add((m * 60, $"{(int)m}:{(int)Math.Round((m - Math.Floor(m)) * 60):00}"));
            }

            return (ticks, "time in the capture (minutes:seconds)");
        }

        var values = NiceTicks(from, to, 8);
        double step = values.Count > 1 ? values[1] - values[0] : span;
        int decimals = Math.Clamp((int)Math.Ceiling(-Math.Log10(step) - 1e-9), 0, 6);
        string format = decimals == 0 ? "0" : "0." + new string('0', decimals);
        return ([.. values.Select(v => (v, v.ToString(format, CultureInfo.InvariantCulture)))], "time in the capture (s)");
    }

    private static IReadOnlyList<(double, string)> SymmetricTicks(double peak) =>
        [.. new[] { -peak, -peak / 2, 0, peak / 2, peak }.Select(v => (v, v.ToString("0.###", CultureInfo.InvariantCulture)))];

    private static double MaxAbs(IReadOnlyList<float> minimum, IReadOnlyList<float> maximum)
    {
        double most = 0;
        for (int i = 0; i < minimum.Count; i++)
        {
            most = Math.Max(most, Math.Max(Math.Abs(minimum[i]), Math.Abs(maximum[i])));
        }

        return most;
    }

    /// <summary>The next value above <paramref name="value"/> of the form 1, 2 or 5 times a power of ten.</summary>
    private static double RoundUp(double value)
    {
        double power = Math.Pow(10, Math.Floor(Math.Log10(value)));
        foreach (double m in (ReadOnlySpan<double>)[1, 2, 5, 10])
        {
            if (m * power >= value)
            {
                return m * power;
            }
        }

        return 10 * power;
    }

    /// <summary>A plot that holds links is a group (an image's children are hidden from screen readers, links included).</summary>
    private static StringBuilder Open(string id, double height, string title, string description, bool holdsLinks = false)
    {
        var svg = new StringBuilder(16 * 1024);
        svg.Append($"<svg class=\"plot-svg\" viewBox=\"0 0 {N(Width)} {N(height)}\" role=\"{(holdsLinks ? "group" : "img")}\" aria-labelledby=\"{id}-title {id}-desc\" xmlns=\"http://www.w3.org/2000/svg\">");
        svg.Append($"<title id=\"{id}-title\">{Escape(title)}</title><desc id=\"{id}-desc\">{Escape(description)}</desc>");
        return svg;
    }

    private static HtmlString Close(StringBuilder svg) => new(svg.Append("</svg>").ToString());
}
