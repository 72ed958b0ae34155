using System.Globalization;
using System.Net;
using System.Text;

namespace TapeVault.Web.Plots;

/// <summary>
/// The drawing area of one plot panel and the mapping from data to SVG coordinates, with the few primitives the
/// capture page's plots share. Styling is by class only (site.css): the page's policy allows no inline styles.
/// </summary>
public sealed class SvgFrame
{
    public SvgFrame(double left, double top, double width, double height, double xMin, double xMax, double yMin, double yMax, bool logX = false)
    {
        if (!(xMax > xMin) || !(yMax > yMin) || (logX && !(xMin > 0)))
        {
            throw new ArgumentException("A plot needs a non-empty range on both axes (and positive values on a log axis).");
        }

        (Left, Top, Width, Height, XMin, XMax, YMin, YMax, LogX) = (left, top, width, height, xMin, xMax, yMin, yMax, logX);
    }

    public double Left { get; }

    public double Top { get; }

    public double Width { get; }

    public double Height { get; }

    public double XMin { get; }

    public double XMax { get; }

    public double YMin { get; }

    public double YMax { get; }

    public bool LogX { get; }

    public double Right => Left + Width;

    public double Bottom => Top + Height;

    public double X(double value)
    {
        double f = LogX
            ? (Math.Log(Math.Max(value, XMin * 1e-3)) - Math.Log(XMin)) / (Math.Log(XMax) - Math.Log(XMin))
            : (value - XMin) / (XMax - XMin);
        return Left + (Math.Clamp(f, -0.01, 1.01) * Width);
    }

    public double Y(double value) => Top + (Math.Clamp((YMax - value) / (YMax - YMin), -0.01, 1.01) * Height);

    /// <summary>A number for an SVG attribute: invariant, two decimals at most.</summary>
    public static string N(double value) => value.ToString("0.##", CultureInfo.InvariantCulture);

    public static string Escape(string text) => WebUtility.HtmlEncode(text);

    /// <summary>Frame, grid lines and tick labels of both axes, and the axis titles.</summary>
    public void Axes(StringBuilder svg, IEnumerable<(double Value, string Label)> xTicks, IEnumerable<(double Value, string Label)> yTicks, string xTitle, string yTitle, bool drawXLabels = true)
    {
        ArgumentNullException.ThrowIfNull(svg);
        svg.Append($"<rect class=\"plot-area\" x=\"{N(Left)}\" y=\"{N(Top)}\" width=\"{N(Width)}\" height=\"{N(Height)}\"/>");
        foreach (var (value, label) in yTicks)
        {
            double y = Y(value);
            svg.Append($"<line class=\"plot-grid\" x1=\"{N(Left)}\" x2=\"{N(Right)}\" y1=\"{N(y)}\" y2=\"{N(y)}\"/>");
            svg.Append($"<text class=\"plot-tick\" x=\"{N(Left - 6)}\" y=\"{N(y + 4)}\" text-anchor=\"end\">{Escape(label)}</text>");
        }

        foreach (var (value, label) in xTicks)
        {
            double x = X(value);
            svg.Append($"<line class=\"plot-grid\" x1=\"{N(x)}\" x2=\"{N(x)}\" y1=\"{N(Top)}\" y2=\"{N(Bottom)}\"/>");
            if (drawXLabels)
            {
                svg.Append($"<text class=\"plot-tick\" x=\"{N(x)}\" y=\"{N(Bottom + 16)}\" text-anchor=\"middle\">{Escape(label)}</text>");
            }
        }

        if (xTitle.Length > 0)
        {
            svg.Append($"<text class=\"plot-axis-title\" x=\"{N(Left + (Width / 2))}\" y=\"{N(Bottom + 36)}\" text-anchor=\"middle\">{Escape(xTitle)}</text>");
        }

        double yMid = Top + (Height / 2);
        svg.Append($"<text class=\"plot-axis-title\" x=\"14\" y=\"{N(yMid)}\" text-anchor=\"middle\" transform=\"rotate(-90 14 {N(yMid)})\">{Escape(yTitle)}</text>");
    }

    /// <summary>
    /// Min/max columns as one continuous path: down each column's span, then on to the next, so a dense stretch reads
    /// as a filled band and a sparse one (a sample per column) as the curve through its samples.
    /// </summary>
    public string MinMaxPath(IReadOnlyList<float> minimum, IReadOnlyList<float> maximum, double fromX, double columnWidth)
    {
        ArgumentNullException.ThrowIfNull(minimum);
        ArgumentNullException.ThrowIfNull(maximum);
        var d = new StringBuilder(minimum.Count * 24);
        for (int c = 0; c < minimum.Count; c++)
        {
            double x = X(fromX + ((c + 0.5) * columnWidth));
            d.Append(c == 0 ? 'M' : 'L').Append(N(x)).Append(' ').Append(N(Y(maximum[c])));
            d.Append('L').Append(N(x)).Append(' ').Append(N(Y(minimum[c])));
        }

        return d.ToString();
    }

    /// <summary>About <paramref name="count"/> round tick values (1, 2 or 5 times a power of ten apart) covering [min, max].</summary>
    public static IReadOnlyList<double> NiceTicks(double min, double max, int count = 6)
    {
        double span = max - min;
        if (!(span > 0))
        {
            return [min];
        }

        double raw = span / Math.Max(1, count);
        double power = Math.Pow(10, Math.Floor(Math.Log10(raw)));
        double step = (raw / power) switch
        {
            < 1.5 => power,
            < 3.5 => 2 * power,
            < 7.5 => 5 * power,
            _ => 10 * power,
        };
        var ticks = new List<double>();
        for (double t = Math.Ceiling(min / step) * step; t <= max + (step * 1e-9); t += step)
        {
            ticks.Add(Math.Abs(t) < step * 1e-9 ? 0 : t);
        }

        return ticks;
    }

    /// <summary>Ticks at 1, 2 and 5 times each power of ten inside [min, max], for a log axis.</summary>
    public static IReadOnlyList<double> LogTicks(double min, double max)
    {
        var ticks = new List<double>();
        for (double decade = Math.Pow(10, Math.Floor(Math.Log10(min))); decade <= max; decade *= 10)
        {
            foreach (double m in (ReadOnlySpan<double>)[1, 2, 5])
            {
                double t = m * decade;
                if (t >= min && t <= max)
                {
                    ticks.Add(t);
                }
            }
        }

        return ticks;
    }
}
