using System.CommandLine;

namespace TapeVault.Cli;

/// <summary>
/// One tapevault command: its arguments and options are declared in its constructor (each with its unit and default
/// in its description), its work in <see cref="Run"/>. Adding a command is one such class and one line in
/// <see cref="Commands.CommandTree"/>.
/// </summary>
public abstract class CliCommand : Command
{
    protected CliCommand(string name, string description)
        : base(name, description)
    {
        SetAction(parse => Run(new Invocation(parse)));
    }

    /// <summary>The usage line after "tapevault", when the one made from the arguments and options would mislead.</summary>
    public virtual string? Usage => null;

    protected abstract int Run(Invocation run);
}

/// <summary>A group of commands under one word ("tapevault image verify"); run alone it asks which one.</summary>
public sealed class CommandGroup(string name, string description) : Command(name, description);

/// <summary>One run of a command: the parsed words and the two output streams.</summary>
public sealed class Invocation(ParseResult parse)
{
    public ParseResult Parse { get; } = parse ?? throw new ArgumentNullException(nameof(parse));

    public TextWriter Output => Parse.InvocationConfiguration.Output;

    public TextWriter Error => Parse.InvocationConfiguration.Error;

    public T? Value<T>(Option<T> option) => Parse.GetValue(option);

    public T? Value<T>(Argument<T> argument) => Parse.GetValue(argument);

    public bool Given(Option option) => Parse.GetResult(option) is { Implicit: false };

    /// <summary>
    /// An output named by --out or, where the command has always taken it so, by a word in its place; the two may not
    /// disagree, and one of them is needed.
    /// </summary>
    public string OutputPath(Option<string> option, Argument<string> positional)
    {
        ArgumentNullException.ThrowIfNull(option);
        ArgumentNullException.ThrowIfNull(positional);
        string? named = Value(option);
        string? placed = Value(positional);
        if (named is not null && placed is not null && named != placed)
        {
            throw new UsageException($"The output is named twice, as {placed} and as {option.Name} {named}; give it once.");
        }

        return named ?? placed ?? throw new UsageException($"Say where the output goes: {option.Name} {option.HelpName}.");
    }
}
