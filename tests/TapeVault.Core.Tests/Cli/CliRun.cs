using TapeVault.Cli;

namespace TapeVault.Core.Tests.Cli;

/// <summary>What one run of the tapevault command returned and printed.</summary>
internal sealed record CliResult(int ExitCode, string Output, string Error)
{
    /// <summary>The lines on standard error, without the final line break.</summary>
    public string[] ErrorLines => Error.Length == 0 ? [] : Error.TrimEnd('\n').Split('\n');

    public override string ToString() => $"exit {ExitCode}; stdout: {Output}; stderr: {Error}";
}

internal static class CliRun
{
    /// <summary>Runs the command in-process, as the tapevault executable would, with its two output streams captured.</summary>
    public static CliResult Run(params string[] args)
    {
        using var output = new StringWriter { NewLine = "\n" };
        using var error = new StringWriter { NewLine = "\n" };
        int exit = Entry.Run(args, output, error);
        return new CliResult(exit, output.ToString(), error.ToString());
    }
}
