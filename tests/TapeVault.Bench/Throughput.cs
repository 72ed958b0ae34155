using System.Diagnostics;
using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;

namespace TapeVault.Bench;

/// <summary>
/// Read-path throughput: a bare scan of a capture (read, convert to float, sum) against a decode with the default
/// bank of eight settings, on a synthesised capture of the demo pulse-width format.
/// </summary>
public static class Throughput
{
    public static void Run(string work, int[] minutes)
    {
        Console.WriteLine("Read-path throughput (orrin-80, 44.1 kHz 16-bit mono, default bank of 8 settings)");
        Console.WriteLine($"{"capture",8} {"scan Ms/s",10} {"bank Ms/s",10} {"ratio",6} {"x real time",12} {"scan peak MB",13} {"bank peak MB",13} {"blocks clean",13}");
        foreach (int m in minutes)
        {
            string path = Path.Combine(work, $"orrin-{m}min.wav");
            EnsureCapture(path, m);
            // This machine's speed wanders by ±20 % from run to run: each figure is the median of three runs.
            var scan = Median(Child("scan", path), Child("scan", path), Child("scan", path));
            var bank = Median(Child("bank", path), Child("bank", path), Child("bank", path));
            double seconds = m * 60.0;
            double samples = seconds * 44_100;
            double scanRate = samples / scan.Seconds;
            double bankRate = samples / bank.Seconds;
            Console.WriteLine($"{m + " min",8} {scanRate / 1e6,10:0.0} {bankRate / 1e6,10:0.0} {scanRate / bankRate,6:0.00} {seconds / bank.Seconds,12:0} {scan.PeakMegabytes,13:0} {bank.PeakMegabytes,13:0} {bank.Note,13}");
        }

        Console.WriteLine("Each figure is the median of three runs, each in a fresh process.");
        Console.WriteLine("Goals: ratio <= 4, >= 1000x real time for the bank on 2 cores, peak memory < 300 MB and flat from 30 to 60 minutes.");
        Console.WriteLine();
    }

    /// <summary>A long capture: the demo format's files repeated, with mild noise and wow, so the decoders do real work.</summary>
    internal static void EnsureCapture(string path, int minutes)
    {
        if (File.Exists(path))
        {
            return;
        }

        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");
        var random = new Random(minutes);
        var files = new List<TapeFile>();
        double seconds = 0;
        int index = 0;

        // Fill the tape with files of random bytes until it runs as long as the capture; measuring the length is cheap
        // (the reversals are counted, not rendered).
        while (true)
        {
            var content = new byte[4096];
            random.NextBytes(content);
            files.Add(new TapeFile($"F{index++:D4}", content));
            double tape = 0;
            foreach (double reversal in FluxWriter.Reversals(profile, BlockWriter.Blocks(profile, files[^1..])))
            {
                tape = reversal;
            }

            seconds += tape;
            if (seconds > minutes * 60)
            {
                break;
            }
        }

        var blocks = BlockWriter.Blocks(profile, files);
        var damage = new ChannelDamage { SnrDb = 24, WowPercent = 0.2, Seed = minutes };
        var model = CaptureSynthesizer.Model(profile, blocks, damage, out _);

        string temporary = path + ".tmp";
        using (var writer = new CaptureWriterStream(temporary, damage.SampleRate))
        {
            var chunk = new float[65_536];
            long limit = (long)(minutes * 60.0 * damage.SampleRate);
            long written = 0;
            int count;
            while (written < limit && (count = model.Render(chunk)) > 0)
            {
                int take = (int)Math.Min(count, limit - written);
                writer.Write(chunk.AsSpan(0, take));
                written += take;
            }

            // A short tape is padded with silence so every capture is exactly as long as its label says.
            Array.Clear(chunk);
            while (written < limit)
            {
                int take = (int)Math.Min(chunk.Length, limit - written);
                writer.Write(chunk.AsSpan(0, take));
                written += take;
            }
        }

        File.Move(temporary, path);
    }

    private readonly record struct ChildResult(double Seconds, double PeakMegabytes, string Note);

    private static ChildResult Median(params ChildResult[] runs)
    {
        Array.Sort(runs, (a, b) => a.Seconds.CompareTo(b.Seconds));
        return runs[runs.Length / 2];
    }

    private static ChildResult Child(string mode, string path)
    {
        var start = new ProcessStartInfo(Environment.ProcessPath!, ["--child", mode, path])
        {
            RedirectStandardOutput = true,
            UseShellExecute = false,
        };
        using var process = Process.Start(start)!;
        string output = process.StandardOutput.ReadToEnd();
        process.WaitForExit();
        var parts = output.Trim().Split(' ');
        return new ChildResult(double.Parse(parts[0]), double.Parse(parts[1]), parts.Length > 2 ? parts[2] : string.Empty);
    }

    public static int RunChild(string[] args)
    {
        string mode = args[0];
        string path = args[1];
        var stopwatch = Stopwatch.StartNew();
        string note = string.Empty;
        if (mode == "scan")
        {
            using var reader = CaptureReader.Open(path);
            var chunk = new float[16_384];
            double sum = 0;
            int read;
            while ((read = reader.Read(chunk)) > 0)
            {
                sum += System.Numerics.Tensors.TensorPrimitives.Sum<float>(chunk.AsSpan(0, read));
            }

            reader.Complete();
            // The sum is printed so the scan cannot be optimised away.
            note = double.IsFinite(sum) ? "-" : "non-finite";
        }
        else
        {
            var result = CaptureDecoder.Decode(path, ProfileCatalog.BuiltIn.Get("orrin-80"));
            int clean = result.Best.Count(b => b.Status == BlockStatus.Clean);
            note = $"{clean}/{result.Best.Count}";
        }

        stopwatch.Stop();
        double peak = Process.GetCurrentProcess().PeakWorkingSet64 / 1e6;
        Console.WriteLine(FormattableString.Invariant($"{stopwatch.Elapsed.TotalSeconds} {peak} {note}"));
        return 0;
    }
}
