using System.CommandLine;
using System.CommandLine.Completions;
using System.CommandLine.Help;
using TapeVault.Archive;
using TapeVault.Cli.Commands;
using TapeVault.Core.Audio;
using TapeVault.Core.Formats;

namespace TapeVault.Cli;

/// <summary>
/// Parses the command line with System.CommandLine and runs the command; bad input ends with one line on standard
/// error, "tapevault: …", and exit code 2, before anything is read or written.
/// </summary>
public static class Entry
{
    public const int BadInput = 2;

    public static int Run(string[] args, TextWriter output, TextWriter error)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(output);
        ArgumentNullException.ThrowIfNull(error);
        if (args.Length == 0)
        {
            error.WriteLine("tapevault: no command given; run 'tapevault help' for the list.");
            return BadInput;
        }

        var root = CommandTree.Build();
        // Words are taken as typed: "@name" is a file name like any other, not a file of further words.
        var parse = root.Parse(args, new ParserConfiguration { ResponseFileTokenReplacer = null });
        var invocation = new InvocationConfiguration { Output = output, Error = error, EnableDefaultExceptionHandler = false };

        // "[suggest:N]" (tab completion) answers with the words that fit, whatever else is on the line.
        if (root.Directives.OfType<SuggestDirective>().Any(d => parse.GetResult(d) is not null))
        {
            return parse.Invoke(invocation);
        }

        // "--help" or "-h" anywhere: that command's help, nothing run, even when the rest of the line is wrong.
        if (root.Options.OfType<HelpOption>().Any(h => parse.GetResult(h) is not null))
        {
            HelpWriter.Write(parse.CommandResult.Command, output);
            return 0;
        }

        try
        {
            if (ParseProblems.Describe(parse) is { } problem)
            {
                throw new UsageException(problem);
            }

            return parse.Invoke(invocation);
        }
        catch (Exception e) when (e is UsageException or CaptureFormatException or ProfileException or IOException or UnauthorizedAccessException)
        {
            error.WriteLine($"tapevault: {e.Message.ReplaceLineEndings(" ")}");
            return BadInput;
        }
        catch (Exception e) when (e is ArchiveInputException or ArchiveNotFoundException or ArchiveConflictException)
        {
            error.WriteLine($"tapevault: {e.Message.ReplaceLineEndings(" ")}");
            return BadInput;
        }
    }
}
