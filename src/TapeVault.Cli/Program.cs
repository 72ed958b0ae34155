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
                WriteHelp(output);
                return 0;
            }

            try
            {
                var rest = args.Skip(1);
                return args[0] switch
                {
                    "decode" => DecodeCommand.Run(new CommandLine(rest, new HashSet<string>()), output),
                    "synth" => SynthCommand.Run(new CommandLine(rest, SynthCommand.Flags), output),
                    "profiles" => ProfilesCommand.Run(new CommandLine(rest, new HashSet<string>()), output),
                    "demo" => DemoCommand.Run(new CommandLine(rest, new HashSet<string>()), output),
                    "image" => ImageCommand.Run(new CommandLine(rest, ImageCommand.Flags), output, error),
                    "verify" => ArchiveCommands.Verify(new CommandLine(rest, new HashSet<string>()), output, error, CliSettings.Load()),
                    "export" => ArchiveCommands.Export(new CommandLine(rest, ArchiveCommands.ExportFlags), output, CliSettings.Load()),
                    "publish" => ArchiveCommands.Publish(new CommandLine(rest, new HashSet<string>()), output, CliSettings.Load()),
                    "users" => UsersCommand.Run(new CommandLine(rest, UsersCommand.Flags), output, Console.In, CliSettings.Load()),
                    _ => throw new UsageException($"Unknown command '{args[0]}'; run 'tapevault help'."),
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

        private static void WriteHelp(TextWriter output)
        {
            output.WriteLine("tapevault: decode, score and archive captures of data cassettes.");
            output.WriteLine();
            output.WriteLine($"  tapevault {DecodeCommand.Usage}");
            output.WriteLine($"  tapevault {SynthCommand.Usage}");
            output.WriteLine("  tapevault profiles [--profiles DIR]");
            output.WriteLine("  tapevault demo [--out DIR]");
            output.WriteLine($"  tapevault {UsersCommand.Usage}");
            output.WriteLine($"  tapevault {ArchiveCommands.VerifyUsage}");
            output.WriteLine($"  tapevault {ArchiveCommands.ExportUsage}");
            output.WriteLine($"  tapevault {ArchiveCommands.PublishUsage}");
            output.WriteLine($"  tapevault {ImageCommand.Usage}");
        }
    }
}
