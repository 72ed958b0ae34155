namespace TapeVault.Core.Merge;

/// <summary>
/// Maps one pass's capture times onto a common tape time: the capture time scaled by the pass's measured playback
/// speed (so that every pass counts nominal seconds of tape), then fitted to the reference pass by a straight line
/// through matching anchors, which takes out the different start of each capture and what is left of the speed error.
/// </summary>
public readonly record struct PassTimeline(double Speed, double Scale, double Offset)
{
    public static PassTimeline Identity => new(1, 1, 0);

    public double Map(double captureSeconds) => (Scale * Speed * captureSeconds) + Offset;

    /// <summary>
    /// Fits <paramref name="pass"/> to <paramref name="reference"/> from anchors: features (a block's identity, a run
    /// of confident bytes) at times in nominal tape seconds. Every pair of equal features votes for an offset; the
    /// offset most pairs agree on, within <paramref name="tolerance"/>, picks the pairs that then fit the line. With
    /// no agreeing pairs, <paramref name="fallbackOffset"/> stands. A slope is fitted only where the anchors span more
    /// than <paramref name="minimumSpread"/> seconds.
    /// </summary>
    public static (double Scale, double Offset, int Inliers) Fit(
        IReadOnlyList<(long Feature, double Time)> reference,
        IReadOnlyList<(long Feature, double Time)> pass,
        double tolerance,
        double fallbackOffset,
        int maximumRepeats = 8,
        double minimumSpread = 2)
    {
        ArgumentNullException.ThrowIfNull(reference);
        ArgumentNullException.ThrowIfNull(pass);
        var byFeature = new Dictionary<long, List<double>>();
        foreach (var (feature, time) in reference)
        {
            if (!byFeature.TryGetValue(feature, out var times))
            {
                times = [];
                byFeature.Add(feature, times);
            }

            times.Add(time);
        }

        // A feature seen many times (a run of spaces, a zero-filled block) votes for every offset and says nothing.
        var pairs = new List<(double Pass, double Reference)>();
        var passCounts = new Dictionary<long, int>();
        foreach (var (feature, _) in pass)
        {
            passCounts[feature] = passCounts.GetValueOrDefault(feature) + 1;
        }

        foreach (var (feature, time) in pass)
        {
            if (byFeature.TryGetValue(feature, out var times) && times.Count <= maximumRepeats && passCounts[feature] <= maximumRepeats)
            {
                foreach (double r in times)
                {
                    pairs.Add((time, r));
                }
            }
        }

        if (pairs.Count == 0)
        {
            return (1, fallbackOffset, 0);
        }

        // The offset with most pairs within the tolerance: sort the differences and slide a window over them.
        var differences = pairs.Select(p => p.Reference - p.Pass).Order().ToArray();
        int best = 0, bestCount = 0;
        for (int lo = 0, hi = 0; lo < differences.Length; lo++)
        {
            while (hi < differences.Length && differences[hi] - differences[lo] <= 2 * tolerance)
            {
                hi++;
            }

            // Equal support: the offset nearer the fallback (the captures' starts lined up) wins.
            if (hi - lo > bestCount || (hi - lo == bestCount && Math.Abs(differences[lo + ((hi - lo) / 2)] - fallbackOffset) < Math.Abs(differences[best + (bestCount / 2)] - fallbackOffset)))
            {
                bestCount = hi - lo;
                best = lo;
            }
        }

        return Refine(pairs, 1, differences[best + (bestCount / 2)], tolerance, minimumSpread);
    }

    /// <summary>
    /// Fits a pass to <paramref name="reference"/> by the rhythm of places alone (the starts of blocks, whatever was
    /// read there): every scale within the bounds a speed measurement can be off, in steps that move the far end of a
    /// long tape by less than the tolerance, and every offset two places pair for; the line that most places lie on
    /// within <paramref name="tolerance"/> wins (at equal support, the scale nearer 1, then the offset nearer
    /// <paramref name="fallbackOffset"/>), then is refined as <see cref="Fit"/> refines its own.
    /// </summary>
    public static (double Scale, double Offset, int Inliers) FitRhythm(
        IReadOnlyList<double> reference,
        IReadOnlyList<double> pass,
        double tolerance,
        double fallbackOffset,
        double minimumSpread = 2)
    {
        ArgumentNullException.ThrowIfNull(reference);
        ArgumentNullException.ThrowIfNull(pass);
        if (reference.Count == 0 || pass.Count == 0)
        {
            return (1, fallbackOffset, 0);
        }

        var differences = new double[reference.Count * pass.Count];
        (double Scale, double Offset, int Count) best = (1, fallbackOffset, 0);
        for (int step = 0; step <= 2 * RhythmSteps; step++)
        {
            // 1, then alternately above and below it, so that equal support keeps the scale nearer 1.
            double scale = 1 + ((step % 2 == 0 ? 1 : -1) * ((step + 1) / 2) * (MostScaleError / RhythmSteps));
            int n = 0;
            foreach (double x in pass)
            {
                foreach (double r in reference)
                {
                    differences[n++] = r - (scale * x);
                }
            }

            Array.Sort(differences);
            for (int lo = 0, hi = 0; lo < differences.Length; lo++)
            {
                while (hi < differences.Length && differences[hi] - differences[lo] <= 2 * tolerance)
                {
                    hi++;
                }

                double offset = differences[lo + ((hi - lo) / 2)];
                if (hi - lo > best.Count || (hi - lo == best.Count && scale == best.Scale && Math.Abs(offset - fallbackOffset) < Math.Abs(best.Offset - fallbackOffset)))
                {
                    best = (scale, offset, hi - lo);
                }
            }
        }

        if (best.Count == 0)
        {
            return (1, fallbackOffset, 0);
        }

        var pairs = new List<(double Pass, double Reference)>(differences.Length);
        foreach (double x in pass)
        {
            foreach (double r in reference)
            {
                pairs.Add((x, r));
            }
        }

        return Refine(pairs, best.Scale, best.Offset, tolerance, minimumSpread);
    }

    /// <summary>How far a pass's scale may be from 1 after its speed was measured: a few per cent.</summary>
    private const double MostScaleError = 0.03;

    /// <summary>The scales <see cref="FitRhythm"/> tries on either side of 1 (0.001 apart: 30 ms over 30 s of tape).</summary>
    private const int RhythmSteps = 30;

    /// <summary>
    /// Least squares on the pairs within <paramref name="tolerance"/> of the line, twice (then on those near the refined
    /// line); the scale is fitted only where they span more than <paramref name="minimumSpread"/> seconds.
    /// </summary>
    private static (double Scale, double Offset, int Inliers) Refine(List<(double Pass, double Reference)> pairs, double scale, double offset, double tolerance, double minimumSpread)
    {
        int bestCount = 0;

        // Twice: least squares on the pairs near the current line, then again on those near the refined one.
        for (int round = 0; round < 2; round++)
        {
            double sw = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
            double minX = double.PositiveInfinity, maxX = double.NegativeInfinity;
            foreach (var (x, y) in pairs)
            {
                if (Math.Abs(y - ((scale * x) + offset)) <= tolerance)
                {
                    sw++;
                    sx += x;
                    sy += y;
                    sxx += x * x;
                    sxy += x * y;
                    minX = Math.Min(minX, x);
                    maxX = Math.Max(maxX, x);
                }
            }

            if (sw == 0)
            {
                break;
            }

            double variance = (sxx / sw) - ((sx / sw) * (sx / sw));

            // A slope needs anchors spread over some seconds of tape; it is bounded to the few per cent a speed
            // measurement can be off, so that a bad set of pairs cannot fold the timeline.
            if (sw >= 3 && maxX - minX > minimumSpread && variance > 0)
            {
                double slope = ((sxy / sw) - ((sx / sw) * (sy / sw))) / variance;
                scale = Math.Clamp(slope, 1 - MostScaleError, 1 + MostScaleError);
            }

            offset = (sy / sw) - (scale * (sx / sw));
            bestCount = (int)sw;
        }

        return (scale, offset, bestCount);
    }
}
