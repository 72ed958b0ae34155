using System.Globalization;

namespace TapeVault.Cli;

/// <summary>Bad input from the user: one clear sentence, exit code 2.</summary>
public sealed class UsageException(string message) : Exception(message);

/// <summary>
/// The parsed words of one command: positional arguments and --options (with a value, or flags). Every option a
/// command reads is declared by reading it; <see cref="RejectUnknown"/> then refuses anything else.
/// </summary>
public sealed class CommandLine
{
    private readonly Dictionary<string, string?> _options = new(StringComparer.Ordinal);
    private readonly HashSet<string> _read = new(StringComparer.Ordinal);

    private readonly IReadOnlySet<string>? _known;

    /// <summary>Parses the words of the command <paramref name="help"/> describes; an option it does not list is refused at once.</summary>
    public CommandLine(IEnumerable<string> args, CommandHelp help)
        : this(args, (help ?? throw new ArgumentNullException(nameof(help))).Flags, help.Known)
    {
    }

    public CommandLine(IEnumerable<string> args, IReadOnlySet<string> flags, IReadOnlySet<string>? known = null)
    {
        _known = known;
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(flags);
        using var e = args.GetEnumerator();
        while (e.MoveNext())
        {
            string arg = e.Current;
            if (arg.StartsWith("--", StringComparison.Ordinal) && arg.Length > 2)
            {
                string name = arg[2..];
                string? value = null;
                int eq = name.IndexOf('=', StringComparison.Ordinal);
                if (eq >= 0)
                {
                    value = name[(eq + 1)..];
                    name = name[..eq];
                }
                if (known is not null && !known.Contains(name))
                {
                    throw new UsageException(Unknown(name, known));
                }

                if (value is null && !flags.Contains(name))
                {
                    value = e.MoveNext() ? e.Current : throw new UsageException($"The option --{name} needs a value.");
                }

                if (!_options.TryAdd(name, value))
                {
                    throw new UsageException($"The option --{name} is given twice.");
                }
            }
            else
            {
                Positional.Add(arg);
            }
        }
    }

    public List<string> Positional { get; } = [];

    public string? Value(string name)
    {
        _read.Add(name);
        return _options.TryGetValue(name, out var value) ? value : null;
    }

    public string Required(string name) =>
        Value(name) ?? throw new UsageException($"The option --{name} is required.");

    public bool Flag(string name)
    {
        _read.Add(name);
        return _options.ContainsKey(name);
    }

    public double Number(string name, double fallback, double minimum, double maximum)
    {
        string? text = Value(name);
        if (text is null)
        {
            return fallback;
        }

        if (!double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out double value) || value < minimum || value > maximum)
        {
            throw new UsageException($"The option --{name} must be a number from {minimum} to {maximum}, not '{text}'.");
        }

        return value;
    }

    /// <summary>"Unknown option --profle; did you mean --profile?", or without the question when nothing is near.</summary>
    private static string Unknown(string name, IEnumerable<string> known) =>
        CommandHelp.Nearest(name, known) is { } near
            ? $"Unknown option --{name}; did you mean --{near}?"
            : $"Unknown option --{name}.";

    public void RejectUnknown()
    {
        foreach (string name in _options.Keys)
        {
            if (!_read.Contains(name))
            {
                throw new UsageException(Unknown(name, _known ?? _read));
            }
        }
    }
}
