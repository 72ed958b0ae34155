using TapeVault.Cli;
using TapeVault.Cli.Commands;
using TapeVault.Core.Audio;
using TapeVault.Core.Formats;

return Entry.Run(args, Console.Out, Console.Error);

namespace TapeVault.Cli
{
    /// <summary>Dispatches the subcommands; bad input ends with one line on standard error and exit code 2.</summary>
    public static class Entry
    {
        public const int BadInput = 2;

        public static int Run(string[] args, TextWriter output, TextWriter error)
        {
            ArgumentNullException.ThrowIfNull(args);
            ArgumentNullException.ThrowIfNull(error);
            if (args.Length == 0)
            {
                error.WriteLine("tapevault: no command given; run 'tapevault help' for the list.");
                return BadInput;
            }

            if (args[0] is "help" or "--help" or "-h")
            {
                if (args.Length == 1)
                {
                    WriteHelp(output);
                    return 0;
                }

                return WriteCommandHelp(args[1], output, error);
            }

            // "tapevault X --help" or "-h" anywhere after the command: that command's own help, nothing run.
            if (args.Skip(1).Any(a => a is "--help" or "-h"))
            {
                return WriteCommandHelp(args[0], output, error);
            }

            try
            {
                var help = CommandHelp.Find(args[0]) ?? throw new UsageException(UnknownCommand(args[0]));
                var rest = new CommandLine(args.Skip(1), help);
                return args[0] switch
                {
                    "decode" => DecodeCommand.Run(rest, output),
                    "merge" => MergeCommand.Run(rest, output),
                    "synth" => SynthCommand.Run(rest, output),
                    "profiles" => ProfilesCommand.Run(rest, output),
                    "demo" => DemoCommand.Run(rest, output),
                    "image" => ImageCommand.Run(rest, output, error),
                    "verify" => ArchiveCommands.Verify(rest, output, error, CliSettings.Load()),
                    "export" => ArchiveCommands.Export(rest, output, CliSettings.Load()),
                    "publish" => ArchiveCommands.Publish(rest, output, CliSettings.Load()),
                    "users" => UsersCommand.Run(rest, output, Console.In, CliSettings.Load()),
                    _ => throw new UsageException(UnknownCommand(args[0])),
                };
            }
            catch (Exception e) when (e is UsageException or CaptureFormatException or ProfileException)
            {
                error.WriteLine($"tapevault: {e.Message}");
                return BadInput;
            }
            catch (IOException e)
            {
                error.WriteLine($"tapevault: {e.Message}");
                return BadInput;
            }
            catch (UnauthorizedAccessException e)
            {
                error.WriteLine($"tapevault: {e.Message}");
                return BadInput;
            }
        }

        private static string UnknownCommand(string typed) =>
            CommandHelp.Nearest(typed, CommandHelp.All.Select(c => c.Name)) is { } near
                ? $"Unknown command '{typed}'; did you mean '{near}'? Run 'tapevault help' for the list."
                : $"Unknown command '{typed}'; run 'tapevault help' for the list.";

        private static int WriteCommandHelp(string command, TextWriter output, TextWriter error)
        {
            if (CommandHelp.Find(command) is { } help)
            {
                help.Write(output);
                return 0;
            }

            error.WriteLine($"tapevault: {UnknownCommand(command)}");
            return BadInput;
        }

        private static void WriteHelp(TextWriter output)
        {
            output.WriteLine("tapevault: decode, score and archive captures of data cassettes.");
            output.WriteLine();
            output.WriteLine($"  tapevault {DecodeCommand.Usage}");
            output.WriteLine($"  tapevault {MergeCommand.Usage}");
            output.WriteLine($"  tapevault {SynthCommand.Usage}");
            output.WriteLine("  tapevault profiles [--profiles DIR]");
            output.WriteLine("  tapevault demo [--out DIR]");
            output.WriteLine($"  tapevault {UsersCommand.Usage}");
            output.WriteLine($"  tapevault {ArchiveCommands.VerifyUsage}");
            output.WriteLine($"  tapevault {ArchiveCommands.ExportUsage}");
            output.WriteLine($"  tapevault {ArchiveCommands.PublishUsage}");
            output.WriteLine($"  tapevault {ImageCommand.Usage}");
            output.WriteLine();
            output.WriteLine("Run 'tapevault COMMAND --help' (or 'tapevault help COMMAND') for a command's options, units and defaults.");
        }
    }
}
