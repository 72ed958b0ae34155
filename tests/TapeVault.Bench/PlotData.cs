using System.Diagnostics;
using TapeVault.Core.Audio;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;

namespace TapeVault.Bench;

/// <summary>
/// What the capture page costs on a long capture: the min/max overview computed from the file and read back from its
/// cache file, a zoom near the end (seek, read, scalar detector trace) and a whole-capture pulse survey.
/// </summary>
public static class PlotData
{
    public static void Run(string work, int minutes)
    {
        string path = Path.Combine(work, $"orrin-{minutes}min.wav");
        Throughput.EnsureCapture(path, minutes);
        Console.WriteLine($"Capture page data ({minutes} min, 44.1 kHz 16-bit mono, {new FileInfo(path).Length / 1e6:0} MB; median of three)");

        // The first read may come from disk; the later ones from the page cache, as a server that just stored the file would.
        var overview = Median(3, () => WaveformOverview.Compute(path, 1000), out var computed);
        Console.WriteLine($"  overview, 1000 columns, from the WAV file : {overview * 1000,8:0} ms");

        string cache = Path.Combine(work, "overview.bin");
        using (var file = File.Create(cache))
        {
            computed.WriteTo(file);
        }

        var cached = Median(3, () => WaveformOverview.ReadFrom(File.ReadAllBytes(cache))!, out _);
        Console.WriteLine($"  overview, from its cache file ({new FileInfo(cache).Length / 1024.0:0} KB)     : {cached * 1000,8:0.00} ms");

        var setting = DetectorBanks.Default[0];
        int rate = computed.SampleRate;
        // Near the end, where a read that had to start at the beginning would cost most; the tape still has signal there.
        long near = computed.FrameCount - (120L * rate);
        foreach (double seconds in (ReadOnlySpan<double>)[0.04, 2.0])
        {
            var zoom = Median(3, () =>
            {
                var samples = CaptureExcerpt.Read(path, near - (rate / 4), (int)((0.25 + seconds) * rate));
                return DetectorTrace.Run(samples, rate, setting, near - (rate / 4));
            }, out var trace);
            Console.WriteLine($"  zoom of {seconds * 1000,5:0} ms two minutes before the end  : {zoom * 1000,8:0.0} ms ({trace.Edges.Length} edges)");
        }

        var marks = PulseMarks.For(ProfileCatalog.BuiltIn.Get("orrin-80"), setting);
        var survey = Median(3, () =>
        {
            using var reader = CaptureReader.Open(path);
            return PulseSurvey.Measure(reader, setting, new PulseHistogram(marks.LowestSeconds, marks.HighestSeconds, 90));
        }, out var histogram);
        Console.WriteLine($"  pulse survey of the whole capture        : {survey * 1000,8:0} ms ({histogram.Total:N0} intervals)");
        Console.WriteLine();
    }

    /// <summary>
    /// The median wall-clock time of <paramref name="runs"/> runs. The processor time of the same run is printed beside
    /// it: on a shared machine the wall clock also counts the time other processes held the cores.
    /// </summary>
    private static double Median<T>(int runs, Func<T> work, out T result)
    {
        var times = new (double Wall, double Cpu)[runs];
        result = default!;
        var process = Process.GetCurrentProcess();
        for (int i = 0; i < runs; i++)
        {
            process.Refresh();
            var cpu = process.TotalProcessorTime;
            var stopwatch = Stopwatch.StartNew();
            result = work();
            times[i].Wall = stopwatch.Elapsed.TotalSeconds;
            process.Refresh();
            times[i].Cpu = (process.TotalProcessorTime - cpu).TotalSeconds;
        }

        Array.Sort(times);
        Console.Write($"  [cpu {times[runs / 2].Cpu * 1000,7:0.0} ms]");
        return times[runs / 2].Wall;
    }
}
