using System.CommandLine;
using System.CommandLine.Parsing;

namespace TapeVault.Cli;

/// <summary>
/// What was wrong with a command line, as the one sentence that goes on standard error: a mistyped command or option
/// with its nearest right spelling, an option without its value or given twice, a missing option or argument.
/// </summary>
public static class ParseProblems
{
    public static string? Describe(ParseResult parse)
    {
        ArgumentNullException.ThrowIfNull(parse);
        var command = parse.CommandResult.Command;

        // A word that looks like an option but is none is reported first, whether the parser left it over or took it
        // for a file name; an unknown word where a command is expected is an unknown command.
        var stray = parse.UnmatchedTokens.ToList();
        if (command.Subcommands.Count > 0 && stray.Count > 0 && !LooksLikeOption(stray[0]))
        {
            return UnknownCommand(stray[0], command);
        }

        var positional = parse.CommandResult.Children.OfType<ArgumentResult>().SelectMany(a => a.Tokens).Select(t => t.Value);
        if (positional.Concat(stray).FirstOrDefault(LooksLikeOption) is { } unknownOption)
        {
            return UnknownOption(unknownOption, command);
        }

        if (parse.Errors.Count == 0)
        {
            return null;
        }

        if (command.Subcommands.Count > 0)
        {
            return $"Say what to do: {string.Join(" | ", HelpWriter.Leaves(command).Select(c => $"tapevault {HelpWriter.Usage(c)}"))}.";
        }

        if (stray.Count > 0)
        {
            return $"Unexpected word '{stray[0]}'; usage: tapevault {HelpWriter.Usage(command)}";
        }

        foreach (var error in parse.Errors)
        {
            if (error.SymbolResult is OptionResult option)
            {
                if (option.IdentifierTokenCount > 0 && option.Tokens.Count == 0 && !HelpWriter.IsFlag(option.Option))
                {
                    return $"The option {option.Option.Name} needs a value.";
                }

                if (option.IdentifierTokenCount > 1)
                {
                    return $"The option {option.Option.Name} is given twice.";
                }
            }

            if (error.SymbolResult is ArgumentResult { Parent: OptionResult owner } && owner.IdentifierTokenCount > 0 && owner.Tokens.Count == 0)
            {
                return $"The option {owner.Option.Name} needs a value.";
            }
        }

        // Our own checks of a value (a number's range, a choice) speak in full sentences: the first one is the answer.
        foreach (var error in parse.Errors)
        {
            if (error.SymbolResult is ArgumentResult { Parent: OptionResult { IdentifierTokenCount: > 0 } })
            {
                return error.Message;
            }
        }

        foreach (var option in HelpWriter.OptionsOf(command).Where(o => o.Required && parse.GetResult(o) is not OptionResult { IdentifierTokenCount: > 0 }))
        {
            string also = option.Aliases.Count > 0 ? $" ({string.Join(", ", option.Aliases)})" : string.Empty;
            return $"The option {option.Name}{also} is required.";
        }

        foreach (var argument in command.Arguments)
        {
            int given = parse.GetResult(argument)?.Tokens.Count ?? 0;
            if (given < argument.Arity.MinimumNumberOfValues)
            {
                return $"Missing {argument.HelpName ?? argument.Name}; usage: tapevault {HelpWriter.Usage(command)}";
            }
        }

        return parse.Errors[0].Message.ReplaceLineEndings(" ");
    }

    public static string UnknownCommand(string typed, Command parent)
    {
        ArgumentNullException.ThrowIfNull(typed);
        ArgumentNullException.ThrowIfNull(parent);
        string path = parent is RootCommand ? string.Empty : HelpWriter.PathOf(parent) + " ";
        string list = parent is RootCommand ? "tapevault help" : $"tapevault {HelpWriter.PathOf(parent)} --help";
        return Spelling.Nearest(typed, parent.Subcommands.Where(c => !c.Hidden).Select(c => c.Name)) is { } near
            ? $"Unknown command '{path}{typed}'; did you mean '{path}{near}'? Run '{list}' for the list."
            : $"Unknown command '{path}{typed}'; run '{list}' for the list.";
    }

    /// <summary>"Unknown option --profle; did you mean --profile?", or without the question when nothing is near.</summary>
    private static string UnknownOption(string typed, Command command)
    {
        string name = typed.Split('=', 2)[0];
        var known = HelpWriter.OptionsOf(command).SelectMany(o => o.Aliases.Prepend(o.Name)).Select(n => n.TrimStart('-'));
        return Spelling.Nearest(name.TrimStart('-'), known) is { } near
            ? $"Unknown option {name}; did you mean --{near}?"
            : $"Unknown option {name}.";
    }

    /// <summary>"--word" or "-w": never a file name we take, and never a number (a negative one is "-3").</summary>
    private static bool LooksLikeOption(string word) =>
        word.Length > 1 && word[0] == '-' && !char.IsAsciiDigit(word[1]) && word[1] != '.';
}
