namespace TapeVault.Core.Pulses;

/// <summary>The class a pulse fell into, with the distances the error model needs (natural-log units).</summary>
public readonly record struct PulseDecision(int Class, float Distance, float Residual, float Scale)
{
    public bool IsValid => Class >= 0;
}

/// <summary>
/// Classifies pulse durations against nominal classes. Boundaries sit at the geometric mean of neighbours, so a
/// decision is symmetric in ratio: a pulse 20 % long is as far from its class as one 1/1.2 short. Distances are in
/// natural-log units of duration, which makes speed a shift rather than a scale.
/// </summary>
public sealed class PulseClassifier
{
    private readonly double[] _logNominal;
    private readonly double[] _logBoundary;
    private readonly double _logLowest;
    private readonly double _logHighest;
    private readonly double[] _boundary;
    private readonly double[] _nominal;
    private readonly double _lowest;
    private readonly double _highest;

    /// <param name="nominalSeconds">Nominal durations, ascending.</param>
    /// <param name="outerRatio">How far beyond the shortest and longest class a pulse may lie and still count.</param>
    public PulseClassifier(IReadOnlyList<double> nominalSeconds, double outerRatio = 1.6)
    {
        ArgumentNullException.ThrowIfNull(nominalSeconds);
        _logNominal = new double[nominalSeconds.Count];
        for (int i = 0; i < _logNominal.Length; i++)
        {
            _logNominal[i] = Math.Log(nominalSeconds[i]);
            if (i > 0 && _logNominal[i] <= _logNominal[i - 1])
            {
                throw new ArgumentException("Pulse classes must be given in ascending order of duration.", nameof(nominalSeconds));
            }
        }

        _logBoundary = new double[Math.Max(0, _logNominal.Length - 1)];
        for (int i = 0; i < _logBoundary.Length; i++)
        {
            _logBoundary[i] = 0.5 * (_logNominal[i] + _logNominal[i + 1]);
        }

        double outer = Math.Log(outerRatio);
        _logLowest = _logNominal[0] - outer;
        _logHighest = _logNominal[^1] + outer;
        _boundary = Array.ConvertAll(_logBoundary, Math.Exp);
        _nominal = [.. nominalSeconds];
        _lowest = Math.Exp(_logLowest);
        _highest = Math.Exp(_logHighest);
    }

    /// <summary>
    /// The durations (at nominal speed) that classify as class <paramref name="index"/>: from the boundary (or the
    /// shortest accepted duration) below its nominal to the boundary (or the longest accepted) above it.
    /// </summary>
    public (double Low, double High) ClassRange(int index)
    {
        double below = index > 0 ? _logBoundary[index - 1] : _logLowest;
        double above = index < _logBoundary.Length ? _logBoundary[index] : _logHighest;
        return (Math.Exp(below), Math.Exp(above));
    }

    /// <summary>Only the class of a pulse (−1 for none): no logarithm, for the hot path that needs no distances.</summary>
    public int ClassOf(double seconds, double speed)
    {
        double x = seconds * speed;
        if (!(x >= _lowest && x <= _highest))
        {
            return -1;
        }

        int c = 0;
        while (c < _boundary.Length && x > _boundary[c])
        {
            c++;
        }

        return c;
    }

    public double NominalSeconds(int index) => _nominal[index];

    /// <summary>Shortest duration (at nominal speed) that still counts as a pulse rather than a glitch.</summary>
    public double ShortestAcceptedSeconds => _lowest;

    public double LongestAcceptedSeconds => _highest;

    /// <summary>Classifies <paramref name="seconds"/> measured at playback <paramref name="speed"/> (1 = nominal).</summary>
    public PulseDecision Classify(double seconds, double speed)
    {
        // Single precision is ample for a duration (1e-7 relative) and its logarithm is cheaper.
        double x = MathF.Log((float)(seconds * speed));
        if (!(x >= _logLowest && x <= _logHighest))
        {
            return new PulseDecision(-1, 0, 0, 1);
        }

        int c = 0;
        while (c < _logBoundary.Length && x > _logBoundary[c])
        {
            c++;
        }

        double below = c > 0 ? x - _logBoundary[c - 1] : double.PositiveInfinity;
        double above = c < _logBoundary.Length ? _logBoundary[c] - x : double.PositiveInfinity;
        double distance = Math.Min(below, above);
        double scaleBelow = c > 0 ? _logNominal[c] - _logBoundary[c - 1] : double.PositiveInfinity;
        double scaleAbove = c < _logBoundary.Length ? _logBoundary[c] - _logNominal[c] : double.PositiveInfinity;
        double scale = below < above ? scaleBelow : scaleAbove;
        return new PulseDecision(c, (float)distance, (float)(x - _logNominal[c]), (float)scale);
    }
}
