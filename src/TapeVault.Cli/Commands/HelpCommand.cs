using System.CommandLine;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault help [COMMAND ...]: the list of commands, or one command's help (the same as "COMMAND --help").</summary>
public sealed class HelpCommand : CliCommand
{
    private readonly Argument<string[]> words = new("COMMAND") { Description = "the command to explain, e.g. decode or image extract", Arity = ArgumentArity.ZeroOrMore };

    public HelpCommand()
        : base("help", "Show the list of commands, or one command's options, units and defaults.")
    {
        Arguments.Add(words);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        Command command = run.Parse.RootCommandResult.Command;
        foreach (string word in run.Value(words) ?? [])
        {
            command = command.Subcommands.FirstOrDefault(c => c.Name == word && !c.Hidden)
                ?? throw new UsageException(ParseProblems.UnknownCommand(word, command));
        }

        HelpWriter.Write(command, run.Output);
        return 0;
    }
}
