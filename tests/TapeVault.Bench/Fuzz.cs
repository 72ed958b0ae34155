using System.Globalization;
using TapeVault.Core.Tests.Hardening.Fuzzing;

namespace TapeVault.Bench;

/// <summary>
/// <c>fuzz [COUNT] [SEED] [all]</c>: the random-mutation run of the hardening tests (tests/TapeVault.Core.Tests/Hardening),
/// longer. COUNT mutations per reader (WAV, profile, image container), each under a one-second limit. Prints the
/// counts by outcome, the slowest input, the most any input allocated and the commonest refusals (every kind of refusal with <c>all</c>); writes every failing
/// input to the work folder; exits 1 when any input failed.
/// </summary>
public static class Fuzz
{
    public static int Run(string work, string[] args)
    {
        ArgumentNullException.ThrowIfNull(args);
        int count = args.Length > 0 ? int.Parse(args[0], CultureInfo.InvariantCulture) : 20_000;
        int seed = args.Length > 1 ? int.Parse(args[1], CultureInfo.InvariantCulture) : 20_261_202;
        int reasonsShown = args.Length > 2 && args[2] == "all" ? int.MaxValue : 8;
        string folder = Path.Combine(work, "fuzz");
        string inputs = Path.Combine(folder, "inputs");
        Directory.CreateDirectory(inputs);
        Console.WriteLine($"Fuzzing: {count} mutations per reader, seed {seed}, limit 1 s per input, allocation cap {FuzzRun.AllocationPerInputByte}x input + {FuzzRun.FixedAllowanceBytes / 1024} KiB");
        int failed = 0;
        foreach (var target in FuzzTargets.All(inputs))
        {
            var report = FuzzRun.Run(target, count, seed, TimeSpan.FromSeconds(1));
            Console.WriteLine(report.Summary);
            Console.WriteLine($"         slowest input: {report.SlowestMutations}");
            foreach (var (reason, times) in report.RefusalReasons.OrderByDescending(r => r.Value).ThenBy(r => r.Key, StringComparer.Ordinal).Take(reasonsShown))
            {
                Console.WriteLine($"         {times,6} × {reason}");
            }

            Console.WriteLine($"         {report.RefusalReasons.Count} distinct refusals in all");
            foreach (var failure in report.Failures)
            {
                string path = Path.Combine(folder, $"{target.Name}-{failure.Index}-{failure.Fault}.bin");
                File.WriteAllBytes(path, failure.Input);
                Console.WriteLine($"  FAILED #{failure.Index} {failure.Fault}: {failure.Detail} [{failure.Mutations}] -> {path}");
            }

            failed += report.Failures.Count;
        }

        Console.WriteLine(failed == 0 ? "No input failed." : $"{failed} input(s) failed.");
        return failed == 0 ? 0 : 1;
    }
}
