using System.CommandLine;
using System.CommandLine.Help;

namespace TapeVault.Cli;

/// <summary>
/// A command's help, written from the command itself (its arguments and options with their descriptions, units and
/// defaults), so that the help and the parser cannot drift apart.
/// </summary>
public static class HelpWriter
{
    private const string HelpRow = "--help, -h";

    /// <summary>"decode", "image extract": the words after "tapevault" that name the command.</summary>
    public static string PathOf(Command command)
    {
        ArgumentNullException.ThrowIfNull(command);
        var words = new List<string>();
        for (Command? c = command; c is not null and not RootCommand; c = c.Parents.OfType<Command>().FirstOrDefault())
        {
            words.Insert(0, c.Name);
        }

        return string.Join(' ', words);
    }

    /// <summary>The options a command lists: its own, without the built-in help and version options.</summary>
    public static IEnumerable<Option> OptionsOf(Command command)
    {
        ArgumentNullException.ThrowIfNull(command);
        return command.Options.Where(o => !o.Hidden && o is not HelpOption and not VersionOption);
    }

    /// <summary>Every command that runs (not a group), depth first in the order they were added.</summary>
    public static IEnumerable<Command> Leaves(Command command)
    {
        ArgumentNullException.ThrowIfNull(command);
        foreach (var sub in command.Subcommands.Where(c => !c.Hidden))
        {
            if (sub.Subcommands.Count == 0)
            {
                yield return sub;
            }
            else
            {
                foreach (var leaf in Leaves(sub))
                {
                    yield return leaf;
                }
            }
        }
    }

    /// <summary>The usage line after "tapevault": the command's words, its arguments, its options.</summary>
    public static string Usage(Command command)
    {
        ArgumentNullException.ThrowIfNull(command);
        if (command is CliCommand { Usage: { } custom })
        {
            return custom;
        }

        var parts = new List<string> { PathOf(command) };
        foreach (var argument in command.Arguments.Where(a => !a.Hidden))
        {
            string name = ArgumentName(argument);
            if (argument.Arity.MaximumNumberOfValues > 1)
            {
                name += " ...";
            }

            parts.Add(argument.Arity.MinimumNumberOfValues == 0 ? $"[{name}]" : name);
        }

        foreach (var option in OptionsOf(command))
        {
            string text = OptionText(option, aliases: false);
            parts.Add(option.Required ? text : $"[{text}]");
        }

        return string.Join(' ', parts);
    }

    public static void Write(Command command, TextWriter output)
    {
        ArgumentNullException.ThrowIfNull(command);
        ArgumentNullException.ThrowIfNull(output);
        if (command is RootCommand root)
        {
            WriteRoot(root, output);
            return;
        }

        output.WriteLine($"tapevault {PathOf(command)}: {command.Description}");
        output.WriteLine();
        output.WriteLine("Usage:");
        var runnable = command.Subcommands.Count == 0 ? [command] : Leaves(command).ToList();
        foreach (var leaf in runnable)
        {
            output.WriteLine($"  tapevault {Usage(leaf)}");
        }

        var rows = new List<(string Left, string Right)>();
        if (command.Subcommands.Count > 0)
        {
            output.WriteLine();
            output.WriteLine("Commands:");
            WriteRows(output, [.. command.Subcommands.Where(c => !c.Hidden).Select(c => (c.Name, c.Description ?? string.Empty))]);
            output.WriteLine();
            output.WriteLine($"Run 'tapevault {PathOf(command)} COMMAND --help' for a command's options, units and defaults.");
            return;
        }

        if (command.Arguments.Any(a => !a.Hidden))
        {
            output.WriteLine();
            output.WriteLine("Arguments:");
            WriteRows(output, [.. command.Arguments.Where(a => !a.Hidden).Select(a => (ArgumentName(a), a.Description ?? string.Empty))]);
        }

        output.WriteLine();
        output.WriteLine("Options:");
        rows.AddRange(OptionsOf(command).Select(o => (OptionText(o, aliases: true), o.Description ?? string.Empty)));
        rows.Add((HelpRow, "show this help"));
        WriteRows(output, rows);
    }

    private static void WriteRoot(RootCommand root, TextWriter output)
    {
        output.WriteLine($"tapevault: {root.Description}");
        output.WriteLine();
        foreach (var leaf in Leaves(root))
        {
            output.WriteLine($"  tapevault {Usage(leaf)}");
        }

        output.WriteLine();
        output.WriteLine("Run 'tapevault COMMAND --help' (or 'tapevault help COMMAND') for a command's options, units and defaults.");
    }

    private static void WriteRows(TextWriter output, IReadOnlyList<(string Left, string Right)> rows)
    {
        int width = rows.Max(r => r.Left.Length);
        foreach (var (left, right) in rows)
        {
            output.WriteLine($"  {left.PadRight(width)}  {right}".TrimEnd());
        }
    }

    private static string ArgumentName(Argument argument) => argument.HelpName ?? argument.Name;

    /// <summary>An option that takes no value: given or not.</summary>
    public static bool IsFlag(Option option) =>
        (option ?? throw new ArgumentNullException(nameof(option))).ValueType == typeof(bool) || option.Arity.MaximumNumberOfValues == 0;

    /// <summary>"--profile ID", "--head", or with its other names "--out, --image OUT.tvimg".</summary>
    public static string OptionText(Option option, bool aliases)
    {
        ArgumentNullException.ThrowIfNull(option);
        string names = aliases && option.Aliases.Count > 0 ? string.Join(", ", [option.Name, .. option.Aliases]) : option.Name;
        return IsFlag(option) ? names : $"{names} {option.HelpName ?? "VALUE"}";
    }
}
