using System.Diagnostics;

namespace TapeVault.Tests.Shared;

/// <summary>
/// The tapevault command as a real process, as a user starts it: the CLI's assembly is copied beside the tests (the
/// test project references the CLI project), and runs on the same dotnet host that runs the tests.
/// </summary>
internal static class CliProcess
{
    /// <summary>Starts <c>tapevault ARGUMENTS</c> in <paramref name="workingDirectory"/>, its output redirected, with <paramref name="environment"/> added.</summary>
    public static Process Start(string workingDirectory, IEnumerable<string> arguments, IReadOnlyDictionary<string, string>? environment = null)
    {
        var start = new ProcessStartInfo(Environment.ProcessPath!)
        {
            WorkingDirectory = workingDirectory,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add(Path.Combine(AppContext.BaseDirectory, "tapevault.dll"));
        foreach (var arg in arguments)
        {
            start.ArgumentList.Add(arg);
        }

        foreach (var (key, value) in environment ?? new Dictionary<string, string>())
        {
            start.Environment[key] = value;
        }

        return Process.Start(start) ?? throw new InvalidOperationException("Could not start tapevault.");
    }

    /// <summary>
    /// <c>tapevault worker</c> over the archive that <paramref name="archive"/> names (<c>--database FILE</c> or
    /// <c>--connection STRING</c>, and <c>--store DIR</c>; none to take it from the settings), one job at a time, with no
    /// fixity schedule, looking for work every second and logging warnings only; <paramref name="environment"/> adds or
    /// overrides settings (a PostgreSQL archive or schedule), <paramref name="more"/> adds options.
    /// </summary>
    public static Process StartWorker(string workingDirectory, IEnumerable<string> archive, IReadOnlyDictionary<string, string> environment, params string[] more)
    {
        var settings = new Dictionary<string, string>
        {
            ["TapeVault__Fixity__Schedule"] = string.Empty,
            ["TapeVault__Jobs__PollSeconds"] = "1",
            ["Logging__LogLevel__Default"] = "Warning",
        };
        foreach (var (key, value) in environment)
        {
            settings[key] = value;
        }

        return Start(workingDirectory, ((string[])["worker", .. archive, "--workers", "1"]).Concat(more), settings);
    }

    /// <summary>
    /// Kills <paramref name="process"/> (and its children) when disposed, if it still runs: a test that fails halfway
    /// leaves no worker behind (disposing a <see cref="Process"/> alone does not end it), stopped (SIGSTOP) or not.
    /// </summary>
    public static IDisposable EndedWithTest(Process process)
    {
        ArgumentNullException.ThrowIfNull(process);
        return new Ender(process);
    }

    private sealed class Ender(Process process) : IDisposable
    {
        public void Dispose()
        {
            try
            {
                if (!process.HasExited)
                {
                    process.Kill(entireProcessTree: true);
                }
            }
            catch (InvalidOperationException)
            {
                // It ended in between.
            }
        }
    }
}
