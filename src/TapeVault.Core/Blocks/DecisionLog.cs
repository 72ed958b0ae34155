namespace TapeVault.Core.Blocks;

/// <summary>
/// The decisions (pulse class, bit, tone) that built one block. Each has a distance to its decision boundary and a
/// residual from its nominal value, in the same units, and the distance from nominal to the boundary (its scale).
/// The block's noise is estimated from all the residuals at once, which turns distances into error odds.
/// </summary>
public sealed class DecisionLog
{
    /// <summary>A decision closer to its boundary than this fraction of the nominal distance counts as ambiguous.</summary>
    public const float AmbiguousMargin = 0.25f;

    /// <summary>How many decisions the prior on the noise is worth.</summary>
    public const int PriorDecisions = 40;

    private float[] _distance = new float[1024];
    private float[] _residual = new float[1024];
    private float[] _scale = new float[1024];
    private const int SubsampleSize = 255;
    private readonly float[] _scratch = new float[SubsampleSize];

    public int Count { get; private set; }

    public void Clear() => Count = 0;

    /// <summary>Keeps the first <paramref name="count"/> decisions only.</summary>
    public void Truncate(int count)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(count);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(count, Count);
        Count = count;
    }

    public void Add(float distance, float residual, float scale)
    {
        if (Count == _distance.Length)
        {
            Array.Resize(ref _distance, Count * 2);
            Array.Resize(ref _residual, Count * 2);
            Array.Resize(ref _scale, Count * 2);
        }

        _distance[Count] = Math.Max(0f, distance);
        _residual[Count] = Math.Abs(residual);
        _scale[Count] = scale;
        Count++;
    }

    /// <summary>Margin of decision i: 0 on the boundary, 1 at the nominal value or beyond.</summary>
    public float Margin(int i) => _scale[i] > 0 ? Math.Min(1f, _distance[i] / _scale[i]) : 0f;

    /// <summary>
    /// The spread of the decisions: 1.4826 × the median absolute residual (a robust standard deviation), but never
    /// below 2 % of the typical scale, so that a perfect synthetic block does not claim certainty it cannot have.
    /// </summary>
    public (double Sigma, double TypicalScale) NoiseEstimate()
    {
        if (Count == 0)
        {
            return (1, 1);
        }

        // The medians are taken over an even subsample of at most 255 decisions: as good an estimate of the spread
        // of a block as all of them, at a fraction of the cost for long blocks.
        int stride = (Count + SubsampleSize - 1) / SubsampleSize;
        int taken = (Count + stride - 1) / stride;
        var scratch = _scratch.AsSpan(0, taken);
        for (int i = 0, k = 0; k < taken; i += stride, k++)
        {
            scratch[k] = _scale[i];
        }

        double typicalScale = Median(scratch);
        for (int i = 0, k = 0; k < taken; i += stride, k++)
        {
            scratch[k] = _residual[i];
        }

        double observed = Math.Max(1.4826 * Median(scratch), 0.02 * typicalScale);

        // A handful of decisions says little about the noise: shrink towards a pessimistic prior (half the scale),
        // weighted as if it were PriorDecisions observations, so a block of a few bytes cannot claim near certainty.
        double prior = 0.5 * typicalScale;
        double sigma = Math.Sqrt((Count * observed * observed + PriorDecisions * prior * prior) / (Count + PriorDecisions));
        return (sigma, typicalScale);
    }

    /// <summary>The upper median by Hoare's selection: linear time on average, and it reorders <paramref name="values"/>.</summary>
    public static float Median(Span<float> values)
    {
        int k = values.Length / 2;
        int lo = 0, hi = values.Length - 1;
        while (lo < hi)
        {
            float pivot = values[(lo + hi) >>> 1];
            int i = lo, j = hi;
            while (i <= j)
            {
                while (values[i] < pivot)
                {
                    i++;
                }

                while (values[j] > pivot)
                {
                    j--;
                }

                if (i <= j)
                {
                    (values[i], values[j]) = (values[j], values[i]);
                    i++;
                    j--;
                }
            }

            if (k <= j)
            {
                hi = j;
            }
            else if (k >= i)
            {
                lo = i;
            }
            else
            {
                break;
            }
        }

        return values[k];
    }

    /// <summary>
    /// log(1 − odds) of decision i. Beyond nine standard deviations the odds are below 1e-19, which vanish next to
    /// 1 in double precision, so the common case costs no exponential.
    /// </summary>
    public double LogRightOdds(int i, double sigma)
    {
        double z = _distance[i] / sigma;
        return z > 9 ? 0 : Math.Log(Math.Max(1e-300, 1 - GaussianTail(z)));
    }

    /// <summary>Q(x), the upper tail of the standard normal distribution (Abramowitz and Stegun 7.1.26 via erfc).</summary>
    public static double GaussianTail(double x)
    {
        if (x < 0)
        {
            return 1 - GaussianTail(-x);
        }

        double z = x / Math.Sqrt(2);
        double t = 1 / (1 + 0.3275911 * z);
        double poly = t * (0.254829592 + t * (-0.284496736 + t * (1.421413741 + t * (-1.453152027 + t * 1.061405429))));
        return 0.5 * poly * Math.Exp(-z * z);
    }
}
