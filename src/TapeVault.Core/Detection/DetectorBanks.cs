namespace TapeVault.Core.Detection;

/// <summary>The built-in banks of detector settings.</summary>
public static class DetectorBanks
{
    /// <summary>
    /// Eight settings that between them cover a deck's line output (which looks like the magnetisation) and a head
    /// amplifier (which looks like its derivative), in both polarities, with a narrow and a wide filter.
    /// </summary>
    public static IReadOnlyList<DetectorSetting> Default { get; } =
    [
        new("line-rise", 30, 9000, differentiate: false, invert: false, ThresholdMode.Relative, 0.2, EdgeSelection.Rising),
        new("line-fall", 30, 9000, differentiate: false, invert: true, ThresholdMode.Relative, 0.2, EdgeSelection.Rising),
        new("line-both", 30, 9000, differentiate: false, invert: false, ThresholdMode.Relative, 0.2, EdgeSelection.Both),
        new("line-narrow", 120, 5000, differentiate: false, invert: false, ThresholdMode.Relative, 0.35, EdgeSelection.Rising),
        new("head-rise", 30, 9000, differentiate: true, invert: false, ThresholdMode.Relative, 0.25, EdgeSelection.Rising),
        new("head-fall", 30, 9000, differentiate: true, invert: true, ThresholdMode.Relative, 0.25, EdgeSelection.Rising),
        new("head-both", 30, 9000, differentiate: true, invert: false, ThresholdMode.Relative, 0.25, EdgeSelection.Both),
        new("line-fixed", 30, 7000, differentiate: false, invert: false, ThresholdMode.Fixed, 0.02, EdgeSelection.Both),
    ];
}
