using System.Diagnostics;
using System.Globalization;

namespace TapeVault.Core.Tests.Hardening.Fuzzing;

/// <summary>What went wrong with one input.</summary>
internal enum FuzzFault
{
    /// <summary>An exception other than the documented one escaped, or an accepted input broke a promise.</summary>
    Crash,

    /// <summary>The input took longer than the time limit.</summary>
    Hang,

    /// <summary>The reader allocated more than the cap for an input of its size.</summary>
    Allocation,

    /// <summary>The documented exception came with a message that is not one plain sentence.</summary>
    UnclearMessage,
}

/// <summary>One input that failed, with what was done to its seed, so that it can be reproduced.</summary>
internal sealed record FuzzFailure(FuzzFault Fault, int Index, string Mutations, string Detail, byte[] Input);

/// <summary>What a run over one target found.</summary>
internal sealed record FuzzReport(
    string Target,
    int Inputs,
    int Accepted,
    int Refused,
    IReadOnlyList<FuzzFailure> Failures,
    double SlowestMilliseconds,
    string SlowestMutations,
    long MostAllocatedBytes,
    int MostAllocatedInputBytes,
    IReadOnlyDictionary<string, int> RefusalReasons,
    TimeSpan Elapsed)
{
    public string Summary => string.Create(CultureInfo.InvariantCulture,
        $"{Target,-8} {Inputs,7} inputs: {Accepted,6} accepted, {Refused,6} refused, {Failures.Count(f => f.Fault == FuzzFault.Crash),3} crashes, {Failures.Count(f => f.Fault == FuzzFault.Hang),3} hangs, {Failures.Count(f => f.Fault == FuzzFault.Allocation),3} over the allocation cap, {Failures.Count(f => f.Fault == FuzzFault.UnclearMessage),3} unclear messages; slowest {SlowestMilliseconds:0.0} ms; most allocated {MostAllocatedBytes / 1024.0:0} KiB (input {MostAllocatedInputBytes} B); {Elapsed.TotalSeconds:0.0} s");
}

/// <summary>
/// Runs a fixed count of seeded mutations of a target's seeds, each on a worker under a time limit, and measures
/// what each allocates on its own thread (GC.GetAllocatedBytesForCurrentThread before and after).
/// </summary>
internal static class FuzzRun
{
    /// <summary>Allocation allowed per input: this many times its size, plus <see cref="FixedAllowanceBytes"/>.</summary>
    public const int AllocationPerInputByte = 4;

    /// <summary>Buffers every read needs whatever the input (file stream, sample buffers, hash state, parser).</summary>
    public const long FixedAllowanceBytes = 512L * 1024;

    public static FuzzReport Run(FuzzTarget target, int count, int seed, TimeSpan timeLimit)
    {
        ArgumentNullException.ThrowIfNull(target);

        // The seeds themselves first, once each, untimed: they warm the JIT and must all be accepted.
        foreach (byte[] input in target.Seeds)
        {
            var (work, cleanup) = target.Prepare(input, new Random(seed));
            work();
            cleanup();
        }

        var random = new Random(seed);
        var failures = new List<FuzzFailure>();
        int accepted = 0;
        int refused = 0;
        double slowest = 0;
        string slowestMutations = string.Empty;
        long mostAllocated = 0;
        int mostAllocatedInput = 0;
        var reasons = new Dictionary<string, int>(StringComparer.Ordinal);
        var clock = Stopwatch.StartNew();
        for (int i = 0; i < count; i++)
        {
            byte[] source = target.Seeds[random.Next(target.Seeds.Count)];
            var (input, mutations) = Mutator.Mutate(source, target.Kind, random);
            var (work, cleanup) = target.Prepare(input, random);
            var attempt = Task.Factory.StartNew(() => Measure(work), CancellationToken.None, TaskCreationOptions.LongRunning, TaskScheduler.Default);

            // A busy machine (other test classes run alongside) can keep a worker from starting for a while: an input
            // hangs when it is still running well past the limit, or when its own measured time exceeds the limit.
            if (!attempt.Wait(timeLimit * 10) || attempt.Result.Milliseconds > timeLimit.TotalMilliseconds)
            {
                // The worker cannot be stopped; it is left to finish, and its input is reported.
                failures.Add(new FuzzFailure(FuzzFault.Hang, i, mutations, $"still running after {timeLimit.TotalMilliseconds:0} ms", input));
                continue;
            }

            cleanup();
            var (error, elapsed, allocated) = attempt.Result;
            if (elapsed > slowest)
            {
                slowest = elapsed;
                slowestMutations = mutations;
            }

            if (allocated > mostAllocated)
            {
                mostAllocated = allocated;
                mostAllocatedInput = input.Length;
            }

            long cap = (AllocationPerInputByte * (long)input.Length) + FixedAllowanceBytes;
            if (error is null)
            {
                accepted++;
            }
            else if (target.Documented.IsInstanceOfType(error))
            {
                refused++;
                string reason = Reason(error.Message);
                reasons[reason] = reasons.GetValueOrDefault(reason) + 1;
                if (!IsOneSentence(error.Message))
                {
                    failures.Add(new FuzzFailure(FuzzFault.UnclearMessage, i, mutations, error.Message, input));
                }
            }
            else
            {
                failures.Add(new FuzzFailure(FuzzFault.Crash, i, mutations, $"{error.GetType().FullName}: {error.Message}", input));
            }

            if (allocated > cap)
            {
                failures.Add(new FuzzFailure(FuzzFault.Allocation, i, mutations, $"{allocated} bytes allocated for a {input.Length}-byte input (cap {cap})", input));
            }
        }

        return new FuzzReport(target.Name, count, accepted, refused, failures, slowest, slowestMutations, mostAllocated, mostAllocatedInput, reasons, clock.Elapsed);
    }

    /// <summary>Capital first, full stop last, one line, no library names: what every refusal must look like.</summary>
    public static bool IsOneSentence(string message) =>
        message.Length > 10 && char.IsUpper(message[0]) && message.EndsWith('.') && !message.Contains('\n', StringComparison.Ordinal)
        && !message.Contains("NAudio", StringComparison.OrdinalIgnoreCase) && !message.Contains("Exception", StringComparison.Ordinal);

    /// <summary>A refusal's message with its numbers and quoted parts blanked, so that like refusals count together.</summary>
    private static string Reason(string message)
    {
        var text = new System.Text.StringBuilder(message.Length);
        bool quoted = false;
        foreach (char c in message)
        {
            // A quote opens after a space or a bracket; an apostrophe inside a word ("file's") is text.
            if (c == '\'' && (quoted || text.Length == 0 || !char.IsLetter(text[^1])))
            {
                quoted = !quoted;
                text.Append(quoted ? "'…" : "'");
            }
            else if (!quoted)
            {
                if (!char.IsAsciiDigit(c))
                {
                    text.Append(c);
                }
                else if (text.Length == 0 || text[^1] != '#')
                {
                    text.Append('#');
                }
            }
        }

        return text.ToString();
    }

    private static (Exception? Error, double Milliseconds, long Allocated) Measure(Action work)
    {
        long before = GC.GetAllocatedBytesForCurrentThread();
        long start = Stopwatch.GetTimestamp();
        Exception? error = null;
        try
        {
            work();
        }
        catch (Exception e)
        {
            error = e;
        }

        double milliseconds = Stopwatch.GetElapsedTime(start).TotalMilliseconds;
        long allocated = GC.GetAllocatedBytesForCurrentThread() - before;
        return (error, milliseconds, allocated);
    }
}
