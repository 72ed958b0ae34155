using System.Collections.Immutable;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Pulses;

public enum PulseMarkKind
{
    /// <summary>A duration the format writes (a pulse class, a tone's cycle, a biphase half or whole cell).</summary>
    Nominal,

    /// <summary>Where the decoder's decision changes from one class to the next.</summary>
    Boundary,

    /// <summary>The shortest or longest duration the decoder still accepts.</summary>
    Limit,
}

/// <summary>One marked duration on a pulse-length histogram, as measured in the capture (so divided by the playback speed).</summary>
public sealed record PulseMark(string Label, double Seconds, PulseMarkKind Kind);

/// <summary>What a histogram of one setting's edge intervals should show for a profile.</summary>
/// <param name="Measures">A sentence saying what an interval between two counted edges is for this profile and setting.</param>
/// <param name="Marks">The durations to mark, shortest first.</param>
/// <param name="LowestSeconds">A sensible lower end for the histogram's axis.</param>
/// <param name="HighestSeconds">A sensible upper end.</param>
public sealed record PulseMarkSet(string Measures, ImmutableArray<PulseMark> Marks, double LowestSeconds, double HighestSeconds);

/// <summary>
/// The classes and decision boundaries a decoder applies to the intervals between one setting's edges, placed where
/// they fall in a capture played at <c>speed</c> times nominal: a decoder compares <c>measured × speed</c> with the
/// nominal, so a mark sits at <c>nominal / speed</c>.
/// </summary>
public static class PulseMarks
{
    public static PulseMarkSet For(FormatProfile profile, DetectorSetting setting, double speed = 1)
    {
        ArgumentNullException.ThrowIfNull(profile);
        ArgumentNullException.ThrowIfNull(setting);
        if (!(speed > 0) || !double.IsFinite(speed))
        {
            throw new ArgumentOutOfRangeException(nameof(speed), speed, "The playback speed must be a positive number.");
        }

        bool both = setting.Edges == EdgeSelection.Both;
        return profile.Family switch
        {
            FormatFamily.PulseWidth => PulseWidth(profile.PulseWidth!, both, speed),
            FormatFamily.Fsk => Fsk(profile.Fsk!, both, speed),
            FormatFamily.Biphase => Biphase(profile.Biphase!, speed),
            _ => throw new ArgumentOutOfRangeException(nameof(profile)),
        };
    }

    /// <summary>
    /// Whole cycles, or half cycles when the setting counts both edges: the decoder then pairs two halves and classifies
    /// their sum, so on a histogram of halves every class and boundary sits at half its duration.
    /// </summary>
    private static PulseMarkSet PulseWidth(PulseWidthEncoding encoding, bool halves, double speed)
    {
        double unit = (halves ? 0.5 : 1.0) / speed;
        var nominal = encoding.Classes.Select(c => c.Seconds).ToArray();
        var classifier = new PulseClassifier(nominal);
        var marks = ImmutableArray.CreateBuilder<PulseMark>();
        marks.Add(new PulseMark("shortest accepted", classifier.ShortestAcceptedSeconds * unit, PulseMarkKind.Limit));
        for (int i = 0; i < nominal.Length; i++)
        {
            marks.Add(new PulseMark($"{encoding.Classes[i].Name} ({Micro(nominal[i])})", nominal[i] * unit, PulseMarkKind.Nominal));
            if (i + 1 < nominal.Length)
            {
                marks.Add(new PulseMark($"{encoding.Classes[i].Name} | {encoding.Classes[i + 1].Name}", GeometricMean(nominal[i], nominal[i + 1]) * unit, PulseMarkKind.Boundary));
            }
        }

        marks.Add(new PulseMark("longest accepted", classifier.LongestAcceptedSeconds * unit, PulseMarkKind.Limit));
        string measures = halves
            ? "Each interval is half a cycle: this setting counts rising and falling edges, and the decoder adds two halves to make one pulse."
            : "Each interval is one whole cycle (one pulse): this setting counts one kind of edge.";
        return new PulseMarkSet(measures, marks.ToImmutable(), classifier.ShortestAcceptedSeconds * unit / 1.5, classifier.LongestAcceptedSeconds * unit * 1.5);
    }

    /// <summary>Tone cycles; the FSK decoder tells the tones apart by correlation, not by interval, so there is no boundary to mark.</summary>
    private static PulseMarkSet Fsk(FskEncoding fsk, bool halves, double speed)
    {
        double unit = (halves ? 0.5 : 1.0) / speed;
        double mark = unit / fsk.MarkHz;
        double space = unit / fsk.SpaceHz;
        var marks = new[]
        {
            new PulseMark($"mark tone {fsk.MarkHz:0} Hz", mark, PulseMarkKind.Nominal),
            new PulseMark($"space tone {fsk.SpaceHz:0} Hz", space, PulseMarkKind.Nominal),
        }.OrderBy(m => m.Seconds).ToImmutableArray();
        string measures = (halves ? "Each interval is half a tone cycle. " : "Each interval is one tone cycle. ") +
            "The decoder tells the two tones apart by correlating a bit's length of signal with each, not by these intervals, so no boundary is marked; it takes the playback speed from the mark tone's cycles.";
        return new PulseMarkSet(measures, marks, marks[0].Seconds / 2.5, marks[^1].Seconds * 2.5);
    }

    /// <summary>Biphase reads every transition: intervals are half a cell or a whole cell, classified as the decoder does.</summary>
    private static PulseMarkSet Biphase(BiphaseEncoding biphase, double speed)
    {
        double unit = 1.0 / speed;
        double half = biphase.CellSeconds / 2;
        double whole = biphase.CellSeconds;

        // The biphase decoder's classifier: the two durations, accepted up to 1.45 times beyond them.
        var classifier = new PulseClassifier([half, whole], outerRatio: 1.45);
        var marks = ImmutableArray.Create(
            new PulseMark("shortest accepted", classifier.ShortestAcceptedSeconds * unit, PulseMarkKind.Limit),
            new PulseMark($"half cell ({Micro(half)})", half * unit, PulseMarkKind.Nominal),
            new PulseMark("half | whole", GeometricMean(half, whole) * unit, PulseMarkKind.Boundary),
            new PulseMark($"whole cell ({Micro(whole)})", whole * unit, PulseMarkKind.Nominal),
            new PulseMark("longest accepted", classifier.LongestAcceptedSeconds * unit, PulseMarkKind.Limit));
        const string measures = "Each interval runs from one transition to the next: half a bit cell between a mid-cell and a cell-boundary transition, a whole cell between two mid-cell ones.";
        return new PulseMarkSet(measures, marks, marks[0].Seconds / 1.5, marks[^1].Seconds * 1.5);
    }

    /// <summary>The classifier's boundary between two neighbouring classes (the mean of their logarithms).</summary>
    private static double GeometricMean(double a, double b) => Math.Sqrt(a * b);

    private static string Micro(double seconds) => $"{seconds * 1e6:0} µs";
}
