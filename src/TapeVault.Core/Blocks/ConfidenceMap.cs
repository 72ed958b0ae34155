using System.Collections.Frozen;
using System.Globalization;
using System.Text.Json;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Blocks;

/// <summary>What a reading's check said, as far as calibration tells readings apart.</summary>
public enum ConfidenceGroup
{
    /// <summary>Clean: the check holds and proves the bytes.</summary>
    Clean,

    /// <summary>The check holds but proves nothing alone (a weak check without support, all-alike bytes, guesses, no start evidence): failed, with the doubt that says so.</summary>
    HoldsUnproven,

    /// <summary>The check does not hold, or the block was cut short.</summary>
    Broken,

    /// <summary>The format has no check.</summary>
    Unchecked,
}

/// <summary>
/// Maps the scorer's model confidence (its estimate of P(right) from the decisions and the check, see
/// <see cref="BlockScorer"/>) to the rate at which readings of that model confidence were right, per format family
/// and <see cref="ConfidenceGroup"/>. Each map is a monotone step function fitted by pool-adjacent-violators
/// (isotonic regression) on the trust benchmark's readings of tuning seeds only; it is data, stored beside this type
/// in Calibration/confidence-map.json with the seeds, the reading counts and the command that refits it. Between
/// steps the map interpolates linearly. A built-in profile with enough readings of a group has a curve of its own
/// (formats of one family differ: a three-class pair format's failed readings are not a one-cycle format's); else
/// the family's curve stands, else the group's curve pooled over every family, else the model confidence.
/// </summary>
public sealed class ConfidenceMap
{
    private readonly FrozenDictionary<string, (double[] X, double[] Y)> _curves;

    private ConfidenceMap(FrozenDictionary<string, (double[] X, double[] Y)> curves, string provenance)
    {
        _curves = curves;
        Provenance = provenance;
    }

    /// <summary>
    /// The fewest readings a curve may be fitted on. A group with fewer keeps the model confidence: a step fitted on a
    /// hundred readings of mild damage lifted every reading of its group below its range to its rate, a wrong stream
    /// under heavy outside damage among them.
    /// </summary>
    public const int LeastReadings = 200;

    /// <summary>A map that changes nothing (model confidence as it is).</summary>
    public static ConfidenceMap Identity { get; } = new(FrozenDictionary<string, (double[], double[])>.Empty, "identity");

    /// <summary>The map the product uses, loaded once from the embedded Calibration/confidence-map.json.</summary>
    public static ConfidenceMap Default { get; } = LoadEmbedded();

    /// <summary>Where the map came from: the seeds, counts and command, as the file says.</summary>
    public string Provenance { get; }

    /// <summary>The calibration group of a reading with this status and these doubts.</summary>
    public static ConfidenceGroup GroupOf(BlockStatus status, BlockDoubts doubts) => status switch
    {
        BlockStatus.Clean => ConfidenceGroup.Clean,
        BlockStatus.Unchecked => ConfidenceGroup.Unchecked,
        _ when (doubts & (BlockDoubts.ChecksumMismatch | BlockDoubts.CutShort)) != 0 => ConfidenceGroup.Broken,
        _ => ConfidenceGroup.HoldsUnproven,
    };

    public static string Key(FormatFamily family, ConfidenceGroup group) =>
        string.Create(CultureInfo.InvariantCulture, $"{FamilyName(family)}/{group}");

    /// <summary>
    /// The key of a group's curve pooled over every family, used for a family whose own readings in the group were too
    /// few to fit (partial pooling: the group's behaviour in other families is a better guess than none).
    /// </summary>
    public static string PooledKey(ConfidenceGroup group) =>
        string.Create(CultureInfo.InvariantCulture, $"{PooledFamily}/{group}");

    /// <summary>The family name of pooled curves.</summary>
    public const string PooledFamily = "all";

    /// <summary>The key of one profile's own curve for a group.</summary>
    public static string ProfileKey(string profileId, ConfidenceGroup group) =>
        string.Create(CultureInfo.InvariantCulture, $"{ProfilePrefix}{profileId}/{group}");

    /// <summary>What a profile's own curve's key starts with (family names and profile ids never meet).</summary>
    public const string ProfilePrefix = "profile:";

    public static string FamilyName(FormatFamily family) => family switch
    {
        FormatFamily.PulseWidth => "pulse-width",
        FormatFamily.Fsk => "fsk",
        FormatFamily.Biphase => "biphase",
        _ => family.ToString(),
    };

    /// <summary>The calibrated confidence of a reading of <paramref name="family"/> in <paramref name="group"/> whose model said <paramref name="model"/>.</summary>
    public double Map(FormatFamily family, ConfidenceGroup group, double model) => Map(null, family, group, model);

    /// <summary>As <see cref="Map(FormatFamily, ConfidenceGroup, double)"/>, by <paramref name="profileId"/>'s own curve where the map has one.</summary>
    public double Map(string? profileId, FormatFamily family, ConfidenceGroup group, double model)
    {
        if ((profileId is null || !_curves.TryGetValue(ProfileKey(profileId, group), out var curve))
            && !_curves.TryGetValue(Key(family, group), out curve)
            && !_curves.TryGetValue(PooledKey(group), out curve))
        {
            return model;
        }

        return Interpolate(curve.X, curve.Y, model);
    }

    /// <summary>A curve's value at <paramref name="model"/>: linear between its steps (<paramref name="x"/> rising), flat beyond its ends.</summary>
    public static double Interpolate(double[] x, double[] y, double model)
    {
        ArgumentNullException.ThrowIfNull(x);
        ArgumentNullException.ThrowIfNull(y);
        if (model <= x[0])
        {
            return y[0];
        }

        if (model >= x[^1])
        {
            return y[^1];
        }

        int i = Array.BinarySearch(x, model);
        if (i >= 0)
        {
            return y[i];
        }

        int hi = ~i;
        int lo = hi - 1;
        double t = (model - x[lo]) / (x[hi] - x[lo]);
        return y[lo] + (t * (y[hi] - y[lo]));
    }

    /// <summary>
    /// Reads a map from its JSON: { "provenance": "...", "curves": { "family/Group": { "readings": N, "x": [...], "y": [...] } } },
    /// N at least <see cref="LeastReadings"/>, x rising, y in 0..1 and not falling.
    /// </summary>
    public static ConfidenceMap Parse(string json)
    {
        using var document = JsonDocument.Parse(json);
        var root = document.RootElement;
        string provenance = root.TryGetProperty("provenance", out var p) ? p.GetString() ?? string.Empty : string.Empty;
        var curves = new Dictionary<string, (double[], double[])>(StringComparer.Ordinal);
        if (root.TryGetProperty("curves", out var all))
        {
            foreach (var curve in all.EnumerateObject())
            {
                int readings = curve.Value.TryGetProperty("readings", out var n) ? n.GetInt32() : 0;
                if (readings < LeastReadings)
                {
                    throw new FormatException($"Confidence map curve {curve.Name}: fitted on {readings} readings, fewer than the {LeastReadings} a curve needs.");
                }

                double[] x = [.. curve.Value.GetProperty("x").EnumerateArray().Select(e => e.GetDouble())];
                double[] y = [.. curve.Value.GetProperty("y").EnumerateArray().Select(e => e.GetDouble())];
                if (x.Length == 0 || x.Length != y.Length)
                {
                    throw new FormatException($"Confidence map curve {curve.Name}: x and y must be non-empty and of one length.");
                }

                for (int i = 0; i < x.Length; i++)
                {
                    if (y[i] is < 0 or > 1 || (i > 0 && (x[i] <= x[i - 1] || y[i] < y[i - 1])))
                    {
                        throw new FormatException($"Confidence map curve {curve.Name}: x must rise and y must not fall, within 0..1 (point {i}).");
                    }
                }

                curves[curve.Name] = (x, y);
            }
        }

        return new ConfidenceMap(curves.ToFrozenDictionary(StringComparer.Ordinal), provenance);
    }

    private static ConfidenceMap LoadEmbedded()
    {
        using var stream = typeof(ConfidenceMap).Assembly.GetManifestResourceStream("TapeVault.Core.Blocks.Calibration.confidence-map.json");
        if (stream is null)
        {
            return Identity;
        }

        using var reader = new StreamReader(stream);
        return Parse(reader.ReadToEnd());
    }
}
