using System.Globalization;

namespace TapeVault.Bench;

/// <summary>
/// Peak memory of the decode over long captures: each profile's default bank over synthetic captures of 30, 60 and 120
/// minutes (or the lengths asked for), each decode a fresh child process whose peak resident set GNU time reports (the
/// outside reference for memory). Memory is flat when the longest capture's peak is within a few megabytes of the
/// shortest's. Prints figures; asserts nothing.
/// </summary>
public static class LongCaptureMemory
{
    /// <summary>memory [PROFILE ...] [--minutes 30,60,120]: one profile of each family unless profiles are named.</summary>
    public static int Run(string work, string[] args)
    {
        var profiles = new List<string>();
        int[] lengths = [30, 60, 120];
        for (int i = 0; i < args.Length; i++)
        {
            if (args[i] == "--minutes")
            {
                lengths = [.. args[++i].Split(',').Select(m => int.Parse(m, CultureInfo.InvariantCulture))];
            }
            else
            {
                profiles.Add(args[i]);
            }
        }

        if (profiles.Count == 0)
        {
            profiles.AddRange(["orrin-80", "three-class-pairs", "one-cycle-bits", "biphase-1200", "kcs-300"]);
        }

        Console.WriteLine($"Peak memory of the decode (default bank, 44.1 kHz 16-bit mono, whole child process, peak resident set by GNU time); load at start: {MachineLoad.Averages()}");
        Console.WriteLine("| profile | minutes | capture MB | peak MB | wall s | cpu s | decoded |");
        Console.WriteLine("|---|---|---|---|---|---|---|");
        foreach (string id in profiles)
        {
            var peaks = new List<double>();
            foreach (int minutes in lengths)
            {
                string path = id == "orrin-80" ? Path.Combine(work, $"orrin-{minutes}min.wav") : Path.Combine(work, $"{id}-{minutes}min.wav");
                Throughput.EnsureCapture(path, id, minutes);
                var run = Throughput.Child("bank", path, id);
                peaks.Add(run.PeakMegabytes);
                Console.WriteLine($"| {id} | {minutes} | {new FileInfo(path).Length / 1e6:0} | {run.PeakMegabytes:0} | {run.Seconds:0.0} | {run.CpuSeconds:0.0} | {run.Note} |");
            }

            Console.WriteLine($"{id}: peak {peaks.Min():0}–{peaks.Max():0} MB from {lengths.Min()} to {lengths.Max()} minutes (spread {peaks.Max() - peaks.Min():0} MB); goal: under 300 MB and flat.");
        }

        Console.WriteLine($"load at end: {MachineLoad.Averages()}");
        return 0;
    }
}
