using System.Diagnostics;
using System.Globalization;
using System.Text;
using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;

namespace TapeVault.Bench;

/// <summary>
/// Read-path throughput of every family: for each built-in profile, a 30-minute capture decoded with the profile's
/// default bank, beside a bare scan of the same file (read, convert to float, SHA-256, sum) in the same run; and, as the
/// outside reference, minimodem's single FSK detector (<c>minimodem --rx 300</c>) and SoX's <c>stat</c> on a KCS file
/// that minimodem itself wrote. Every figure is a whole process (start-up included), the median of three, and the
/// processes of one table run one after the other, so their ratios share the machine's load of that moment.
/// </summary>
public static class Throughput
{
    /// <summary>Every built-in profile, by family: the default bank of each is what a user gets.</summary>
    public static readonly string[] Profiles =
        ["orrin-80", "three-class-pairs", "one-cycle-bits", "kcs-300", "kcs-1200", "fsk-sync-1200", "biphase-1200", "biphase-1500"];

    private const int Runs = 3;

    /// <summary>
    /// <paramref name="minutes"/>: the capture length of the per-family table; <paramref name="longMinutes"/>: a second,
    /// longer capture of <paramref name="longProfile"/> for memory flatness (0 for none); <paramref name="only"/>: one
    /// profile alone (null for all).
    /// </summary>
    public static void Run(string work, int minutes, int longMinutes, string longProfile, string? only)
    {
        Console.WriteLine($"Read-path throughput: 44.1 kHz 16-bit mono, {minutes} min captures, whole processes, median of {Runs}");
        Console.WriteLine($"Load at start: {Load()}");
        Console.WriteLine($"Build: {BuildKind()}; {RuntimeSettings()}");
        string kcs = Path.Combine(work, $"minimodem-kcs300-{minutes}min.wav");
        EnsureMinimodemCapture(kcs, minutes);

        // The outside references, measured first and again at the end so a change of load between shows.
        var reference = MeasureReferences(kcs);
        Console.WriteLine();
        Console.WriteLine($"{"profile",-18} {"family",-12} {"scan s",7} {"sox s",6} {"bank s",7} {"vs scan",8} {"vs sox",7} {"vs mm",6} {"x real",7} {"Ms/s",6} {"cpu s",6} {"cpu/scan",8} {"cpu/mm",6} {"scan MB",8} {"bank MB",8} {"blocks",14}");
        Row(reference.MinimodemCapture, "kcs-300", minutes, reference);
        foreach (string id in Profiles)
        {
            if (only is not null && id != only)
            {
                continue;
            }

            string path = CapturePath(work, id, minutes);
            EnsureCapture(path, id, minutes);
            Row(path, id, minutes, reference);
        }

        if (longMinutes > 0 && (only is null || only == longProfile))
        {
            string path = CapturePath(work, longProfile, longMinutes);
            EnsureCapture(path, longProfile, longMinutes);
            Row(path, longProfile, longMinutes, reference);
            Console.WriteLine($"({longProfile} at {minutes} and {longMinutes} minutes: peak memory should be flat.)");
        }

        Console.WriteLine();
        Console.WriteLine($"Load at end: {Load()}");
        var again = MeasureReferences(kcs);
        Console.WriteLine("cpu: user + system seconds of the whole process (GNU time); on a shared machine the CPU ratios move less than the wall-clock ones.");
        Console.WriteLine($"Ratios are against our own scan and SoX's stat of the same file, and against minimodem --rx on the minimodem KCS file, all measured in this run.");
        Console.WriteLine($"minimodem at the start {reference.Minimodem.Seconds:0.00} s, at the end {again.Minimodem.Seconds:0.00} s (the load moved by their ratio).");
        Console.WriteLine("Goals: vs scan <= 4, vs minimodem < 1 (FSK), >= 1000x real time on 2 cores, peak memory < 300 MB and flat with length.");
        Console.WriteLine();
    }

    private sealed record References(string MinimodemCapture, Measured Minimodem, Measured SoxStat);

    private static References MeasureReferences(string kcs)
    {
        // Outside reference: minimodem (a general-purpose software FSK modem, one detector) reading the file it wrote,
        // and SoX reading, converting and summing it (the floor of any read path).
        var minimodem = Median(() => Measure(OutsideDamage.MinimodemPath, ["--rx", "300", "--stopbits", "2", "-q", "-f", kcs]));
        var stat = Median(() => Measure(OutsideDamage.SoxPath, [kcs, "-n", "stat"]));
        Console.WriteLine($"minimodem --rx 300 -f {Path.GetFileName(kcs)}: {minimodem.Seconds:0.00} s wall, {minimodem.CpuSeconds:0.00} s CPU, {minimodem.PeakMegabytes:0} MB; " +
            $"sox {Path.GetFileName(kcs)} -n stat: {stat.Seconds:0.00} s, {stat.PeakMegabytes:0} MB; minimodem read {minimodem.Note}");
        return new References(kcs, minimodem, stat);
    }

    private static void Row(string path, string id, int minutes, References reference)
    {
        var profile = ProfileCatalog.BuiltIn.Get(id);
        var scan = Median(() => Child("scan", path, id));
        // SoX's stat over the same file (read, convert, sum): the outside tool's bare scan beside our own.
        var sox = Median(() => Measure(OutsideDamage.SoxPath, [path, "-n", "stat"]));
        var bank = Median(() => Child("bank", path, id));
        double seconds = DurationSeconds(path);
        double samples = seconds * 44_100;
        string label = path == reference.MinimodemCapture ? $"{id} minimodem" : $"{id} {minutes}'";
        Console.WriteLine(
            $"{label,-18} {profile.Family.ToString().ToLowerInvariant(),-12} {scan.Seconds,7:0.00} {sox.Seconds,6:0.00} {bank.Seconds,7:0.00} {bank.Seconds / scan.Seconds,8:0.00} {bank.Seconds / sox.Seconds,7:0.00} " +
            $"{bank.Seconds / reference.Minimodem.Seconds,6:0.00} {seconds / bank.Seconds,7:0} {samples / bank.Seconds / 1e6,6:0.0} {bank.CpuSeconds,6:0.00} {bank.CpuSeconds / scan.CpuSeconds,8:0.00} {bank.CpuSeconds / reference.Minimodem.CpuSeconds,6:0.00} " +
            $"{scan.PeakMegabytes,8:0} {bank.PeakMegabytes,8:0} {bank.Note,14}");
    }

    private static double DurationSeconds(string path)
    {
        using var reader = CaptureReader.Open(path);
        return (double)reader.FrameCount / reader.SampleRate;
    }

    private static string CapturePath(string work, string id, int minutes) =>
        id == "orrin-80" ? Path.Combine(work, $"orrin-{minutes}min.wav") : Path.Combine(work, $"{id}-{minutes}min.wav");

    private static string Load()
    {
        try
        {
            return File.ReadAllText("/proc/loadavg").Trim() + " (1, 5, 15-minute load averages; running/total tasks; last pid)";
        }
        catch (IOException)
        {
            return "unknown";
        }
    }

    /// <summary>A long capture of the orrin-80 demo format (kept under its old name for the plot benchmark).</summary>
    internal static void EnsureCapture(string path, int minutes) => EnsureCapture(path, "orrin-80", minutes);

    /// <summary>A long capture of <paramref name="profileId"/>: files of random bytes, with mild noise and wow, so the decoders do real work.</summary>
    internal static void EnsureCapture(string path, string profileId, int minutes)
    {
        if (File.Exists(path))
        {
            return;
        }

        var clock = Stopwatch.StartNew();
        var profile = ProfileCatalog.BuiltIn.Get(profileId);
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

        File.Move(temporary, path, overwrite: true);
        Console.WriteLine($"(made {Path.GetFileName(path)} in {clock.Elapsed.TotalSeconds:0} s)");
    }

    /// <summary>
    /// A Kansas City Standard stream written by minimodem (300 baud, the standard's tones, two stop bits) carrying
    /// printable text for <paramref name="minutes"/>, after a 2-second lead-in of mark tone that SoX makes.
    /// </summary>
    internal static void EnsureMinimodemCapture(string path, int minutes)
    {
        if (File.Exists(path))
        {
            return;
        }

        var clock = Stopwatch.StartNew();
        var profile = ProfileCatalog.BuiltIn.Get("kcs-300");
        // 300 baud, 11 bits a character (start, eight data, two stop): 300/11 characters a second.
        int characters = (int)((minutes * 60.0 - 3) * 300 / 11);
        var random = new Random(minutes);
        var text = new StringBuilder(characters);
        while (text.Length < characters)
        {
            text.Append(random.Next(5) == 0 ? ' ' : (char)('a' + random.Next(26)));
            if (random.Next(60) == 0)
            {
                text.Append('\n');
            }
        }

        string temporary = Path.Combine(Path.GetDirectoryName(path)!, "minimodem-kcs-part.wav");
        OutsideDamage.MinimodemCapture(temporary, profile, [Encoding.ASCII.GetBytes(text.ToString(0, characters))], 44_100, leadInSeconds: 2, volume: 0.5);
        File.Move(temporary, path, overwrite: true);
        Console.WriteLine($"(made {Path.GetFileName(path)} with minimodem and SoX in {clock.Elapsed.TotalSeconds:0} s)");
    }

    internal readonly record struct Measured(double Seconds, double CpuSeconds, double PeakMegabytes, string Note);

    // This machine's speed wanders from run to run: each figure is the median of three runs.
    private static Measured Median(Func<Measured> run)
    {
        var runs = new Measured[Runs];
        for (int i = 0; i < runs.Length; i++)
        {
            runs[i] = run();
        }

        Array.Sort(runs, (a, b) => a.Seconds.CompareTo(b.Seconds));
        return runs[runs.Length / 2];
    }

    /// <summary>
    /// Whether the decoder the children run was compiled ahead (ReadyToRun, as a publish for one runtime makes it) or is
    /// compiled by the JIT as it runs (a build, <c>dotnet run</c>): a ReadyToRun image carries a managed native header in
    /// its CLI header (ECMA-335 II.25.3.3), which <see cref="System.Reflection.PortableExecutable.PEReader"/> reads.
    /// </summary>
    internal static string BuildKind()
    {
        using var stream = File.OpenRead(typeof(CaptureDecoder).Assembly.Location);
        using var pe = new System.Reflection.PortableExecutable.PEReader(stream);
        return pe.PEHeaders.CorHeader?.ManagedNativeHeaderDirectory.Size > 0
            ? "ReadyToRun (a publish for one runtime: dotnet publish -r linux-x64)"
            : "JIT only (a build; publish for one runtime for the ReadyToRun figures)";
    }

    /// <summary>
    /// The tiered-compilation settings the children run with, as the runtime was given them (the runtime configuration
    /// the build wrote, or the environment's <c>DOTNET_TieredPGO</c>, which overrides it): the command ships with tiered PGO off.
    /// </summary>
    internal static string RuntimeSettings()
    {
        string? variable = Environment.GetEnvironmentVariable("DOTNET_TieredPGO");
        bool pgo = variable is not null ? variable != "0" : AppContext.GetData("System.Runtime.TieredPGO") is not string configured || !bool.TryParse(configured, out bool on) || on;
        return pgo ? "tiered PGO on (the command ships with it off)" : "tiered PGO off (as the command ships)";
    }

    /// <summary>A benchmark child process: the whole process is timed, start-up included.</summary>
    internal static Measured Child(string mode, string path, string profile) =>
        Measure(Environment.ProcessPath!, [.. SelfArguments(), "--child", mode, path, profile]);

    /// <summary>
    /// What the benchmark's own process needs before its arguments to start again as it was started: nothing through
    /// its apphost (<c>TapeVault.Bench</c>, <c>dotnet run</c>), its assembly's path when the process is the dotnet host
    /// (<c>dotnet TapeVault.Bench.dll</c>), which would otherwise take <c>--child</c> for an option of its own.
    /// </summary>
    internal static string[] SelfArguments() =>
        string.Equals(Path.GetFileNameWithoutExtension(Environment.ProcessPath), "dotnet", StringComparison.OrdinalIgnoreCase)
            ? [typeof(Throughput).Assembly.Location]
            : [];

    /// <summary>
    /// Runs <paramref name="program"/> under GNU time (outside reference for peak resident memory and CPU time) and
    /// times it from here. Standard output's first line is kept as the note.
    /// </summary>
    private static Measured Measure(string program, IReadOnlyList<string> arguments)
    {
        var start = new ProcessStartInfo("/usr/bin/time")
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add("-f");
        start.ArgumentList.Add("tapevault-time %e %U %S %M");
        start.ArgumentList.Add(program);
        foreach (string argument in arguments)
        {
            start.ArgumentList.Add(argument);
        }

        var clock = Stopwatch.StartNew();
        using var process = Process.Start(start)!;
        var output = process.StandardOutput.ReadToEndAsync();
        string error = process.StandardError.ReadToEnd();
        process.WaitForExit();
        double wall = clock.Elapsed.TotalSeconds;
        string stdout = output.Result;
        string? times = error.Split('\n').LastOrDefault(l => l.StartsWith("tapevault-time ", StringComparison.Ordinal));
        if (process.ExitCode != 0 || times is null)
        {
            throw new InvalidOperationException($"{program} {string.Join(' ', arguments)} failed ({process.ExitCode}): {error}");
        }

        var parts = times.Split(' ');
        double cpu = double.Parse(parts[2], CultureInfo.InvariantCulture) + double.Parse(parts[3], CultureInfo.InvariantCulture);
        double peak = double.Parse(parts[4], CultureInfo.InvariantCulture) * 1024 / 1e6;
        string note = program == OutsideDamage.MinimodemPath
            ? $"{stdout.Length} characters"
            : stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries).FirstOrDefault()?.Trim() ?? string.Empty;
        return new Measured(wall, cpu, peak, note);
    }

    public static int RunChild(string[] args)
    {
        string mode = args[0];
        string path = args[1];
        string note;
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
            // bank-sparse: the tone windows read every few samples (DecodeOptions.SparseToneReadings).
            var result = CaptureDecoder.Decode(path, ProfileCatalog.BuiltIn.Get(args[2]), options: new DecodeOptions { SparseToneReadings = mode == "bank-sparse" });
            int clean = result.Best.Count(b => b.Status == BlockStatus.Clean);
            int unread = result.Best.Count(b => b.Status == BlockStatus.Unchecked);
            note = clean > 0 || unread == 0
                ? $"{clean}/{result.Best.Count} clean"
                : $"{result.Best.Sum(b => b.Payload.Length)} B read";

            // A look at the heap with the result still held: how many readings it keeps, the per-byte data they carry
            // (payload, margins, error odds, times), and the managed heap after a full collection.
            long perByte = result.Candidates.Sum(c => (long)c.Payload.Length * (sizeof(byte) + sizeof(float) + sizeof(float) + sizeof(double)));
            long heap = GC.GetTotalMemory(forceFullCollection: true);
            note += $"; {result.Candidates.Count} readings, {perByte / 1e6:0.0} MB per-byte data, heap {heap / 1e6:0.0} MB";
            GC.KeepAlive(result);
        }

        Console.WriteLine(note);
        return 0;
    }
}
