using TapeVault.Core.Blocks;
using System.Collections.Immutable;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Storage;
using TapeVault.Core.Audio;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;

namespace TapeVault.Archive.Runs;

/// <summary>
/// The pulse-length histogram of each detector setting over a whole capture: a pass over every sample, seconds of CPU
/// on a long capture, so the decode job makes them once, for every setting of its run in one pass of the bank, and
/// keeps them as small files under the store's <c>derived/surveys</c> folder (never under <c>objects/</c>, so audits
/// and exports do not see them). A survey depends only on the original (which never changes), the setting, the marks'
/// range and the bin count; the file's name carries a hash of all four, so a survey is never served for other choices.
/// </summary>
public static class WholeCaptureSurveys
{
    /// <summary>The bins of every pulse-length histogram the archive shows.</summary>
    public const int Bins = 90;

    /// <summary>The capture page and the decoder read the capture mixed to mono by default.</summary>
    public const ChannelChoice Channel = ChannelChoice.Mix;

    private static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web);

    /// <summary>Where the survey for these choices is kept.</summary>
    public static string CachePath(ContentStore store, string captureSha256, DetectorSetting setting, PulseMarkSet marks)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(setting);
        ArgumentNullException.ThrowIfNull(marks);
        if (!ContentStore.IsHash(captureSha256))
        {
            throw new ArgumentException("Not a lower-case hex SHA-256.", nameof(captureSha256));
        }

        string key = $"{captureSha256}|{SettingsJson.Write([setting])}|{marks.LowestSeconds:R}|{marks.HighestSeconds:R}|{Bins}|{Channel}";
        string keyHash = Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(key)))[..32];
        return Path.Combine(store.Root, "derived", "surveys", captureSha256[..2], $"{captureSha256}.{keyHash}.json");
    }

    /// <summary>The kept survey, or null when there is none (or it cannot be read, which only means computing it again).</summary>
    public static PulseHistogramResult? TryRead(string path)
    {
        try
        {
            if (!File.Exists(path))
            {
                return null;
            }

            var kept = JsonSerializer.Deserialize<Kept>(File.ReadAllBytes(path), Json);
            return kept is { Edges.Length: > 1 } && kept.Counts.Length == kept.Edges.Length - 1
                ? new PulseHistogramResult([.. kept.Edges], [.. kept.Counts], kept.Below, kept.Above)
                : null;
        }
        catch (Exception e) when (e is IOException or JsonException or UnauthorizedAccessException)
        {
            return null;
        }
    }

    /// <summary>Reads the capture once to survey one setting over all of it (mixed as the decoder reads it), and keeps the survey at <paramref name="path"/>.</summary>
    public static PulseHistogramResult MeasureAndKeep(ContentStore store, string capturePath, string path, DetectorSetting setting, PulseMarkSet marks, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(marks);
        PulseHistogramResult measured;
        using (var reader = CaptureReader.Open(capturePath, Channel))
        {
            measured = PulseSurvey.Measure(reader, setting, new PulseHistogram(marks.LowestSeconds, marks.HighestSeconds, Bins), cancellation);
        }

        Write(store, path, measured);
        return measured;
    }

    /// <summary>Keeps a survey: written aside in the store's temporary folder and renamed into place, so no reader sees half a file.</summary>
    public static void Write(ContentStore store, string path, PulseHistogramResult result)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(result);
        Directory.CreateDirectory(Path.GetDirectoryName(path)!);
        string temporary = Path.Combine(store.TempFolder, $"{Guid.NewGuid():N}.survey.part");
        File.WriteAllBytes(temporary, JsonSerializer.SerializeToUtf8Bytes(new Kept([.. result.BinEdgesSeconds], [.. result.Counts], result.Below, result.Above), Json));
        File.Move(temporary, path, overwrite: true);
    }

    /// <summary>
    /// The setting a capture's plots and its catalogue histogram are shown for when nobody chose one: the one with most
    /// clean readings, then most readings, then the first in the run's order.
    /// </summary>
    public static DetectorSetting ShownSetting(IReadOnlyList<DetectorSetting> settings, IEnumerable<(string SettingName, bool Clean)> readings)
    {
        ArgumentNullException.ThrowIfNull(settings);
        ArgumentNullException.ThrowIfNull(readings);
        if (settings.Count == 0)
        {
            throw new ArgumentException("A run has at least one detector setting.", nameof(settings));
        }

        var counts = readings.GroupBy(r => r.SettingName).ToDictionary(g => g.Key, g => (Clean: g.Count(r => r.Clean), All: g.Count()));
        // OrderBy is stable, so equals stay in the run's order.
        return settings.OrderByDescending(s => counts.GetValueOrDefault(s.Name).Clean).ThenByDescending(s => counts.GetValueOrDefault(s.Name).All).First();
    }

    /// <summary>
    /// The playback speed a setting's marks are placed for: the median over block positions of the speed of that
    /// setting's best reading there (clean first, then the most confident, then the earliest); 1 where it read no block.
    /// </summary>
    public static double SpeedOf(IEnumerable<(int Position, string SettingName, bool Clean, double Confidence, double Speed, double StartSeconds)> readings, string settingName)
    {
        ArgumentNullException.ThrowIfNull(readings);
        var speeds = readings.Where(r => r.SettingName == settingName)
            .GroupBy(r => r.Position)
            .Select(g => g.OrderByDescending(r => r.Clean).ThenByDescending(r => r.Confidence).ThenBy(r => r.StartSeconds).First().Speed)
            .Where(v => v > 0 && double.IsFinite(v))
            .Order()
            .ToArray();
        return speeds.Length == 0 ? 1
            : speeds.Length % 2 == 1 ? speeds[speeds.Length / 2]
            : 0.5 * (speeds[(speeds.Length / 2) - 1] + speeds[speeds.Length / 2]);
    }

    /// <summary>
    /// Surveys every setting of a decode run over the whole capture and keeps each one; returns how many were made
    /// (those already kept are not made again). <paramref name="counted"/>: the intervals the decode itself counted,
    /// setting by setting (read through <see cref="Channel"/>), so the capture is not read again; null to read it once
    /// more, every setting in one pass of the bank.
    /// </summary>
    public static int MakeForRun(ContentStore store, string capturePath, string captureSha256, FormatProfile profile, IReadOnlyList<DetectorSetting> settings, IReadOnlyList<CandidateRecord> candidates, CancellationToken cancellation, IReadOnlyList<IntervalSurvey>? counted = null)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(profile);
        ArgumentNullException.ThrowIfNull(settings);
        ArgumentNullException.ThrowIfNull(candidates);
        var readings = candidates.Select(c => (c.Position, c.SettingName, c.Status == BlockStatus.Clean, c.Confidence, c.Speed, c.StartSeconds)).ToList();
        if (counted is not null && counted.Count != settings.Count)
        {
            throw new ArgumentException("The decode counts one survey for each setting.", nameof(counted));
        }

        var wanted = new List<(DetectorSetting Setting, PulseHistogram Histogram, string Path, IntervalSurvey? Counted)>();
        for (int i = 0; i < settings.Count; i++)
        {
            var setting = settings[i];
            var marks = PulseMarks.For(profile, setting, SpeedOf(readings, setting.Name));
            string path = CachePath(store, captureSha256, setting, marks);
            if (!File.Exists(path))
            {
                wanted.Add((setting, new PulseHistogram(marks.LowestSeconds, marks.HighestSeconds, Bins), path, counted?[i]));
            }
        }

        if (wanted.Count == 0)
        {
            return 0;
        }

        if (counted is not null)
        {
            foreach (var w in wanted)
            {
                cancellation.ThrowIfCancellationRequested();
                Write(store, w.Path, w.Counted!.Into(w.Histogram));
            }

            return wanted.Count;
        }

        using var reader = CaptureReader.Open(capturePath, Channel);
        var results = PulseSurvey.MeasureAll(reader, [.. wanted.Select(w => w.Setting)], [.. wanted.Select(w => w.Histogram)], cancellation);
        for (int i = 0; i < wanted.Count; i++)
        {
            Write(store, wanted[i].Path, results[i]);
        }

        return wanted.Count;
    }

    private sealed record Kept(double[] Edges, long[] Counts, long Below, long Above);
}
