namespace TapeVault.Core.Detection;

/// <summary>How the Schmitt trigger's switching band is set.</summary>
public enum ThresholdMode
{
    /// <summary>The band is ±hysteresis in full-scale units, whatever the signal level.</summary>
    Fixed,

    /// <summary>The band is ±hysteresis × a running peak envelope, so it follows the level of the capture.</summary>
    Relative,
}

/// <summary>Which transitions of the two-level signal count as pulse boundaries.</summary>
public enum EdgeSelection
{
    Rising,
    Falling,
    Both,
}

/// <summary>
/// One whole read chain: DC block, low-pass, optional differentiation and inversion, and a Schmitt trigger.
/// A bank runs several of these over the same samples; the decoder scores what each produces.
/// </summary>
public sealed record DetectorSetting
{
    public DetectorSetting(
        string name,
        double highPassHz,
        double? lowPassHz,
        bool differentiate,
        bool invert,
        ThresholdMode thresholdMode,
        double hysteresis,
        EdgeSelection edges)
    {
        if (string.IsNullOrWhiteSpace(name))
        {
            throw new ArgumentException("A detector setting needs a name.", nameof(name));
        }

        if (!(highPassHz > 0) || !double.IsFinite(highPassHz))
        {
            throw new ArgumentException($"Detector setting '{name}': highPassHz must be above 0 (a DC block is always needed), not {highPassHz}.", nameof(highPassHz));
        }

        if (lowPassHz is { } lp && (!(lp > highPassHz) || !double.IsFinite(lp)))
        {
            throw new ArgumentException($"Detector setting '{name}': lowPassHz must be above highPassHz ({highPassHz}), not {lp}.", nameof(lowPassHz));
        }

        if (!(hysteresis > 0) || hysteresis >= 1)
        {
            throw new ArgumentException($"Detector setting '{name}': hysteresis must be between 0 and 1 (exclusive), not {hysteresis}.", nameof(hysteresis));
        }

        Name = name;
        HighPassHz = highPassHz;
        LowPassHz = lowPassHz;
        Differentiate = differentiate;
        Invert = invert;
        ThresholdMode = thresholdMode;
        Hysteresis = hysteresis;
        Edges = edges;
    }

    public string Name { get; }

    /// <summary>Cut-off of the one-pole DC-blocking high-pass, in Hz.</summary>
    public double HighPassHz { get; }

    /// <summary>Cut-off of the second-order Butterworth low-pass, in Hz; null for none.</summary>
    public double? LowPassHz { get; }

    /// <summary>Differentiate once more: suits captures taken off a head amplifier, whose pulses mark the reversals.</summary>
    public bool Differentiate { get; }

    /// <summary>Flip the polarity, for chains wired the other way round.</summary>
    public bool Invert { get; }

    public ThresholdMode ThresholdMode { get; }

    /// <summary>Half-width of the Schmitt trigger's band: full-scale units (fixed mode) or a fraction of the envelope (relative mode).</summary>
    public double Hysteresis { get; }

    public EdgeSelection Edges { get; }

    /// <summary>A one-line description for tables and logs.</summary>
    public string Describe() =>
        $"{Name}: HP {HighPassHz:0.#} Hz, LP {(LowPassHz is { } lp ? $"{lp:0} Hz" : "off")}, " +
        $"{(Differentiate ? "differentiated" : "direct")}, {(Invert ? "inverted" : "normal")}, " +
        $"{ThresholdMode.ToString().ToLowerInvariant()} ±{Hysteresis:0.###}, {Edges.ToString().ToLowerInvariant()} edges";
}
