using System.Collections.Immutable;
using System.Runtime.InteropServices;
using TapeVault.Core.Edges;

namespace TapeVault.Core.Pulses;

/// <summary>
/// How many pulses fell into each bin of duration. Bins are spaced evenly in the logarithm of duration, as the
/// classifier's decisions are (a boundary is the geometric mean of two classes), so a class and its boundaries keep
/// their proportions wherever they sit on the axis.
/// </summary>
/// <param name="BinEdgesSeconds">Bin i holds durations in [edge i, edge i+1); one more edge than bins.</param>
/// <param name="Counts">Pulses per bin.</param>
/// <param name="Below">Pulses shorter than the first edge.</param>
/// <param name="Above">Pulses at or beyond the last edge.</param>
public sealed record PulseHistogramResult(ImmutableArray<double> BinEdgesSeconds, ImmutableArray<long> Counts, long Below, long Above)
{
    public int Bins => Counts.Length;

    public long InRange
    {
        get
        {
            long total = 0;
            foreach (long count in Counts)
            {
                total += count;
            }

            return total;
        }
    }

    public long Total => InRange + Below + Above;
}

/// <summary>Counts pulse durations into log-spaced bins as edges stream past; no allocation per pulse.</summary>
public sealed class PulseHistogram
{
    private readonly double _logLowest;
    private readonly double _binsPerLogUnit;
    private readonly long[] _counts;
    private readonly double[] _edges;
    private long _below;
    private long _above;
    private double _lastEdgeSample = double.NaN;

    /// <param name="lowestSeconds">The first bin's lower edge.</param>
    /// <param name="highestSeconds">The last bin's upper edge.</param>
    /// <param name="bins">How many bins between them.</param>
    public PulseHistogram(double lowestSeconds, double highestSeconds, int bins)
    {
        if (!(lowestSeconds > 0) || !(highestSeconds > lowestSeconds) || !double.IsFinite(highestSeconds))
        {
            throw new ArgumentException($"A histogram needs 0 < lowest < highest, not {lowestSeconds} and {highestSeconds}.", nameof(lowestSeconds));
        }

        ArgumentOutOfRangeException.ThrowIfLessThan(bins, 1);
        _logLowest = Math.Log(lowestSeconds);
        _binsPerLogUnit = bins / (Math.Log(highestSeconds) - _logLowest);
        _counts = new long[bins];
        _edges = new double[bins + 1];
        for (int i = 0; i <= bins; i++)
        {
            _edges[i] = Math.Exp(_logLowest + (i / _binsPerLogUnit));
        }

        // Exact ends, so that a pulse of exactly the lowest or highest duration lands where the caller expects.
        _edges[0] = lowestSeconds;
        _edges[bins] = highestSeconds;
    }

    /// <summary>The bin <paramref name="seconds"/> falls in; −1 below the range, <see cref="PulseHistogramResult.Bins"/> at or above it.</summary>
    public int BinOf(double seconds)
    {
        if (!(seconds >= _edges[0]))
        {
            return -1;
        }

        if (seconds >= _edges[^1])
        {
            return _counts.Length;
        }

        // The logarithm gives the bin to within rounding; the stored edges decide a duration on an edge.
        int bin = Math.Clamp((int)((Math.Log(seconds) - _logLowest) * _binsPerLogUnit), 0, _counts.Length - 1);
        while (bin > 0 && seconds < _edges[bin])
        {
            bin--;
        }

        while (bin < _counts.Length - 1 && seconds >= _edges[bin + 1])
        {
            bin++;
        }

        return bin;
    }

    public void Add(double seconds) => Add(seconds, 1);

    /// <summary>Counts <paramref name="count"/> pulses of <paramref name="seconds"/>.</summary>
    public void Add(double seconds, long count)
    {
        int bin = BinOf(seconds);
        if (bin < 0)
        {
            _below += count;
        }
        else if (bin == _counts.Length)
        {
            _above += count;
        }
        else
        {
            _counts[bin] += count;
        }
    }

    /// <summary>Counts <paramref name="count"/> pulses known to be shorter than any bin.</summary>
    public void AddBelow(long count) => _below += count;

    /// <summary>Counts <paramref name="count"/> pulses known to be longer than any bin.</summary>
    public void AddAbove(long count) => _above += count;

    /// <summary>
    /// Adds the time between each counted edge and the one before it, carrying the last edge over from the previous
    /// call, so a capture can be fed chunk by chunk.
    /// </summary>
    public void AddIntervals(ReadOnlySpan<Edge> edges, double sampleRate)
    {
        foreach (var edge in edges)
        {
            if (!double.IsNaN(_lastEdgeSample))
            {
                Add((edge.Sample - _lastEdgeSample) / sampleRate);
            }

            _lastEdgeSample = edge.Sample;
        }
    }

    public PulseHistogramResult ToResult() =>
        new([.. _edges], ImmutableCollectionsMarshal.AsImmutableArray((long[])_counts.Clone()), _below, _above);
}
