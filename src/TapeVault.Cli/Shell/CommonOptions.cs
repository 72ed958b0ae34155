using System.CommandLine;
using System.CommandLine.Parsing;
using System.Globalization;
using TapeVault.Archive;
using TapeVault.Core.Formats;

namespace TapeVault.Cli;

/// <summary>The options several commands share, made once here so that their names, units and defaults agree.</summary>
public static class CommonOptions
{
    /// <summary>--profile ID: the format profile (required), completed from the built-in profiles.</summary>
    public static Option<string> Profile(string description = "the format profile (required); 'tapevault profiles' lists them")
    {
        var option = new Option<string>("--profile") { HelpName = "ID", Description = description, Required = true };
        option.CompletionSources.Add(_ => ProfileCatalog.BuiltIn.All.Select(p => p.Id));
        return option;
    }

    public static Option<string> ProfilesFolder() => new("--profiles")
    {
        HelpName = "DIR",
        Description = "folder of your own profiles (*.json); default: TapeVault:ProfilesFolder in appsettings.json, else the built-ins only",
    };

    public static Option<string> Channel()
    {
        var option = new Option<string>("--channel")
        {
            HelpName = "left|right|mix",
            Description = "which channel of a stereo capture to read; default: TapeVault:Decode:Channel in appsettings.json, else mix",
        };
        return OneOf(option, "left", "right", "mix");
    }

    /// <summary>An output named by --out.</summary>
    public static Option<string> Out(string helpName, string description, params string[] aliases) =>
        new("--out", aliases) { HelpName = helpName, Description = description };

    /// <summary>A word that only the listed values may take; refused with the list, and completed from it.</summary>
    public static Option<string> OneOf(Option<string> option, params string[] values)
    {
        ArgumentNullException.ThrowIfNull(option);
        option.CompletionSources.Add(values);
        option.Validators.Add(result =>
        {
            string? value = result.GetValueOrDefault<string>();
            if (value is not null && !values.Contains(value, StringComparer.Ordinal))
            {
                result.AddError($"The option {option.Name} must be {List(values)}, not '{value}'.");
            }
        });
        return option;
    }

    /// <summary>A number in invariant notation (a point for decimals) from <paramref name="minimum"/> to <paramref name="maximum"/>.</summary>
    public static Option<double> Number(string name, string helpName, string description, double fallback, double minimum, double maximum) =>
        new(name)
        {
            HelpName = helpName,
            Description = description,
            DefaultValueFactory = _ => fallback,
            CustomParser = result => Parse(result, name, minimum, maximum) ?? fallback,
        };

    /// <summary>A number with no default: null when not given.</summary>
    public static Option<double?> OptionalNumber(string name, string helpName, string description, double minimum, double maximum) =>
        new(name)
        {
            HelpName = helpName,
            Description = description,
            CustomParser = result => Parse(result, name, minimum, maximum),
        };

    private static double? Parse(ArgumentResult result, string name, double minimum, double maximum)
    {
        if (result.Tokens.Count == 0)
        {
            return null;
        }

        string text = result.Tokens[^1].Value;
        if (!double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out double value) || value < minimum || value > maximum)
        {
            result.AddError($"The option {name} must be a number from {minimum.ToString(CultureInfo.InvariantCulture)} to {maximum.ToString(CultureInfo.InvariantCulture)}, not '{text}'.");
            return null;
        }

        return value;
    }

    private static string List(string[] values) =>
        values.Length == 1 ? values[0] : $"{string.Join(", ", values[..^1])} or {values[^1]}";
}

/// <summary>
/// --database FILE (an SQLite archive) or --connection STRING (a PostgreSQL one), and --store DIR: where the web app's
/// archive lives, for the commands that open it.
/// </summary>
public sealed class ArchiveLocation
{
    public Option<string> Database { get; } = new("--database")
    {
        HelpName = "FILE",
        Description = "the archive's SQLite database; default: TapeVault:Archive in appsettings.json",
    };

    public Option<string> Connection { get; } = new("--connection")
    {
        HelpName = "STRING",
        Description = "a PostgreSQL archive's connection string (Host=…;Database=…;Username=…), in place of --database; default: TapeVault:Archive in appsettings.json",
    };

    public Option<string> Store { get; } = new("--store")
    {
        HelpName = "DIR",
        Description = "the archive's content store; default: TapeVault:Archive in appsettings.json",
    };

    public void AddTo(Command command)
    {
        ArgumentNullException.ThrowIfNull(command);
        command.Options.Add(Database);
        command.Options.Add(Connection);
        command.Options.Add(Store);
    }

    public ArchiveSession Open(Invocation run, CliSettings settings)
    {
        ArgumentNullException.ThrowIfNull(run);
        return ArchiveSession.Open(run.Value(Database), run.Value(Store), settings, run.Value(Connection));
    }

    /// <summary>Points <paramref name="options"/> at the archive the command line names, where it names one.</summary>
    public void ApplyTo(Invocation run, ArchiveOptions options)
    {
        ArgumentNullException.ThrowIfNull(run);
        Apply(options, run.Value(Database), run.Value(Connection), run.Value(Store));
    }

    /// <summary>
    /// --database names an SQLite file and --connection a PostgreSQL database, each choosing its provider whatever the
    /// settings say; naming both is refused.
    /// </summary>
    public static void Apply(ArchiveOptions options, string? database, string? connection, string? store)
    {
        ArgumentNullException.ThrowIfNull(options);
        if (database is not null && connection is not null)
        {
            throw new UsageException("The options --database and --connection each name an archive; give one of them.");
        }

        if (database is not null)
        {
            options.Provider = DatabaseProvider.Sqlite;
            options.DatabasePath = Path.GetFullPath(database);
        }

        if (connection is not null)
        {
            options.Provider = DatabaseProvider.PostgreSql;
            options.ConnectionString = connection;
        }

        if (store is not null)
        {
            options.StorePath = Path.GetFullPath(store);
        }
    }
}
