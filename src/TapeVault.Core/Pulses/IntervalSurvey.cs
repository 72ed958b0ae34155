using TapeVault.Core.Edges;

namespace TapeVault.Core.Pulses;

/// <summary>
/// The intervals between one setting's counted edges over a whole capture, counted finely enough that any pulse-length
/// histogram can be drawn from them afterwards: the decode counts them as its edges pass (the file is read once), and
/// the histogram's range, which hangs on the playback speed the decode measures, is chosen when the decode is over.
/// <para>
/// A fine bin is one of 4096 equal steps of the mantissa of the interval in samples, within each octave (a relative
/// width of 1/8192 to 1/4096), from 1/16 sample to 2^27 samples; shorter and longer intervals are counted apart. A
/// histogram takes each fine bin at its centre, so an interval within a fine bin's width of one of its edges may
/// land in the neighbouring bin: every survey, made by a decode or by <see cref="PulseSurvey"/>, goes through here,
/// so they all count alike.
/// </para>
/// </summary>
public sealed class IntervalSurvey
{
    private const int MantissaBits = 12;
    private const int LowestExponent = -4;
    private const int Octaves = 31;
    private const int BinsPerOctave = 1 << MantissaBits;

    private readonly long[] _counts = new long[Octaves * BinsPerOctave];
    private readonly double _sampleRate;
    private long _shorter;
    private long _longer;
    private double _lastEdgeSample = double.NaN;

    public IntervalSurvey(double sampleRate)
    {
        if (!(sampleRate > 0) || !double.IsFinite(sampleRate))
        {
            throw new ArgumentOutOfRangeException(nameof(sampleRate), sampleRate, "The sample rate must be positive.");
        }

        _sampleRate = sampleRate;
    }

    /// <summary>Intervals counted so far.</summary>
    public long Total { get; private set; }

    /// <summary>
    /// Adds the time between each counted edge and the one before it, carrying the last edge over from the previous
    /// call, so a capture can be fed chunk by chunk.
    /// </summary>
    public void AddIntervals(ReadOnlySpan<Edge> edges)
    {
        double last = _lastEdgeSample;
        foreach (var edge in edges)
        {
            if (!double.IsNaN(last))
            {
                Add(edge.Sample - last);
            }

            last = edge.Sample;
        }

        _lastEdgeSample = last;
    }

    private void Add(double samples)
    {
        Total++;

        // The exponent and the top mantissa bits of the double are the fine bin: no logarithm per interval.
        long bits = BitConverter.DoubleToInt64Bits(samples);
        long index = (bits >> (52 - MantissaBits)) - ((1023L + LowestExponent) << MantissaBits);
        if (samples <= 0 || index < 0)
        {
            _shorter++;
        }
        else if (index >= _counts.Length)
        {
            _longer++;
        }
        else
        {
            _counts[index]++;
        }
    }

    /// <summary>Counts every interval into <paramref name="histogram"/> (each fine bin at its centre) and gives the result.</summary>
    public PulseHistogramResult Into(PulseHistogram histogram)
    {
        ArgumentNullException.ThrowIfNull(histogram);
        histogram.AddBelow(_shorter);
        histogram.AddAbove(_longer);
        for (int i = 0; i < _counts.Length; i++)
        {
            if (_counts[i] != 0)
            {
                // The centre of the fine bin: its lowest value with the next mantissa bit set.
                long bits = (((long)i + ((1023L + LowestExponent) << MantissaBits)) << (52 - MantissaBits)) | (1L << (51 - MantissaBits));
                histogram.Add(BitConverter.Int64BitsToDouble(bits) / _sampleRate, _counts[i]);
            }
        }

        return histogram.ToResult();
    }
}
