using TapeVault.Cli.Commands;

namespace TapeVault.Cli;

/// <summary>One option of a command: its name, the value it takes (null for a flag) and what it means, with unit and default.</summary>
public sealed record OptionHelp(string Name, string? Value, string Description);

/// <summary>
/// One command's help: what it does, its usage lines and every option it accepts. The options listed here are the
/// only ones the command's parser accepts, so that the help and the parser cannot drift apart.
/// </summary>
public sealed record CommandHelp(string Name, string Summary, IReadOnlyList<string> Usage, IReadOnlyList<OptionHelp> Options)
{
    public IReadOnlySet<string> Flags { get; } = Options.Where(o => o.Value is null).Select(o => o.Name).ToHashSet(StringComparer.Ordinal);

    public IReadOnlySet<string> Known { get; } = Options.Select(o => o.Name).ToHashSet(StringComparer.Ordinal);

    private static readonly OptionHelp[] ArchiveOptions =
    [
        new("database", "FILE", "the archive's SQLite database; default: TapeVault:Archive in appsettings.json"),
        new("store", "DIR", "the archive's content store; default: TapeVault:Archive in appsettings.json"),
    ];

    private static readonly OptionHelp ProfilesOption = new("profiles", "DIR", "folder of your own profiles (*.json); default: TapeVault:ProfilesFolder in appsettings.json, else the built-ins only");

    private static readonly OptionHelp ChannelOption = new("channel", "left|right|mix", "which channel of a stereo capture to read; default: TapeVault:Decode:Channel in appsettings.json, else mix");

    public static IReadOnlyList<CommandHelp> All { get; } =
    [
        new("decode", "Decode one capture with every detector setting of a profile and score every block.",
            [DecodeCommand.Usage],
            [
                new("profile", "ID", "the format profile (required); 'tapevault profiles' lists them"),
                ChannelOption,
                new("json", "OUT.json", "write the full report as JSON; default: none"),
                new("payload", "OUT.bin", "write the decoded payload bytes; default: none"),
                ProfilesOption,
            ]),
        new("merge", "Merge several captures of one tape into a tape image (.tvimg), block by block.",
            [MergeCommand.Usage],
            [
                new("profile", "ID", "the format profile (required)"),
                new("image", "OUT.tvimg", "the tape image to write (required)"),
                new("json", "OUT.json", "write the merge report as JSON; default: none"),
                new("payload", "OUT.bin", "write the merged payload bytes; default: none"),
                ChannelOption,
                ProfilesOption,
            ]),
        new("synth", "Synthesise a capture of a tape, with the damage you ask for.",
            [SynthCommand.Usage],
            [
                new("profile", "ID", "the format profile (required)"),
                new("text", "TEXT", "the file's content as text; default: a greeting"),
                new("file", "PATH", "take the file's content from PATH instead of --text"),
                new("name", "NAME", "the name in the file's header; default: HELLO, or the --file name in capitals"),
                new("seed", "N", "random seed, 0 or more; default: 1"),
                new("rate", "HZ", "sample rate in Hz, 8000 to 192000; default: 44100"),
                new("snr", "DB", "signal-to-noise ratio in dB, -20 to 120; default: no noise"),
                new("speed", "FACTOR", "tape speed as a factor of nominal, 0.5 to 1.5; default: 1"),
                new("wow", "PERCENT", "slow speed variation in percent, 0 to 10; default: 0"),
                new("flutter", "PERCENT", "fast speed variation in percent, 0 to 10; default: 0"),
                new("pw50", "US", "head pulse width at half height in microseconds, 1 to 1000; default: 40"),
                new("azimuth", "DEGREES", "head azimuth error in degrees, -10 to 10; default: 0"),
                new("dropouts", "PER_MINUTE", "random dropouts per minute, 0 to 600; default: 0"),
                new("hum", "LEVEL", "mains hum as a fraction of full scale, 0 to 1; default: 0"),
                new("level", "PEAK", "peak level as a fraction of full scale, 0.001 to 1; default: 0.5"),
                new("head", null, "model the raw head amplifier instead of a line output; default: line output"),
                new("invert", null, "invert the polarity; default: not inverted"),
                new("encoding", "pcm8|pcm16|pcm24|float32", "the WAV sample encoding; default: pcm16"),
                ProfilesOption,
            ]),
        new("profiles", "List the format profiles: the built-in ones and your own.",
            ["profiles [--profiles DIR]"],
            [ProfilesOption]),
        new("demo", "Synthesise the demo club's damaged tapes and decode them.",
            ["demo [--out DIR]"],
            [new("out", "DIR", "where the demo captures go; default: tapevault-demo in the temporary folder")]),
        new("users", "Add or list the web app's users.",
            [.. UsersCommand.Usage.Split(" | ")],
            [
                new("role", "curator|viewer", "the new user's role (required for add)"),
                new("password-stdin", null, "read the password from standard input instead of asking; default: ask"),
                .. ArchiveOptions,
            ]),
        new("verify", "Fixity audit of the web app's archive: event chain, stored objects and records. Exit 1 on any problem.",
            [ArchiveCommands.VerifyUsage],
            [
                new("collection", "ID", "audit one collection only; default: the whole archive"),
                new("expect-head", "\"event N sha256:HASH\"", "also check that a head kept from a bag or catalogue is still in the log; default: none"),
                .. ArchiveOptions,
            ]),
        new("export", "Export an item or a collection as a BagIt bag (RFC 8493).",
            [ArchiveCommands.ExportUsage],
            [
                new("item", "ACCESSION", "the item to export, by accession number"),
                new("collection", "ID", "the collection to export, by id"),
                new("out", "PATH", "the new bag folder (or .zip file with --zip) (required)"),
                new("zip", null, "write the bag as one zip file; default: a folder"),
                .. ArchiveOptions,
            ]),
        new("publish", "Publish a collection as a static catalogue (HTML pages with SHA256SUMS) into a new folder.",
            [ArchiveCommands.PublishUsage],
            [.. ArchiveOptions]),
        new("image", "Check a tape image, or extract the files its headers name (exit 3 if a file is left out).",
            [.. ImageCommand.Usage.Split(" | ")],
            [
                new("partial", null, "extract: also write incomplete files, their gaps closed up; default: skip them"),
                new("overwrite", null, "extract: replace files of the same name already in the folder; default: refuse (exit 4) and write nothing"),
            ]),
    ];

    public static CommandHelp? Find(string name) => All.FirstOrDefault(c => c.Name == name);

    public void Write(TextWriter output)
    {
        ArgumentNullException.ThrowIfNull(output);
        output.WriteLine($"tapevault {Name}: {Summary}");
        output.WriteLine();
        output.WriteLine("Usage:");
        foreach (string line in Usage)
        {
            output.WriteLine($"  tapevault {line}");
        }

        output.WriteLine();
        output.WriteLine("Options:");
        int width = Math.Max("--help, -h".Length, Options.Max(o => OptionText(o).Length));
        foreach (var option in Options)
        {
            output.WriteLine($"  {OptionText(option).PadRight(width)}  {option.Description}");
        }

        output.WriteLine($"  {"--help, -h".PadRight(width)}  show this help");
    }

    private static string OptionText(OptionHelp option) => option.Value is null ? $"--{option.Name}" : $"--{option.Name} {option.Value}";

    /// <summary>The candidate nearest to what was typed, when it is near enough to be a slip of the keyboard.</summary>
    public static string? Nearest(string typed, IEnumerable<string> candidates)
    {
        ArgumentNullException.ThrowIfNull(typed);
        ArgumentNullException.ThrowIfNull(candidates);
        string? best = null;
        int bestDistance = int.MaxValue;
        foreach (string candidate in candidates)
        {
            int distance = EditDistance(typed, candidate);
            if (distance < bestDistance)
            {
                (best, bestDistance) = (candidate, distance);
            }
        }

        // Common practice: suggest only within about a third of the longer word's length, and at least two edits (a
        // swapped pair and a dropped letter).
        return best is not null && bestDistance <= Math.Max(2, Math.Max(typed.Length, best.Length) / 3) ? best : null;
    }

    /// <summary>Levenshtein distance with adjacent transpositions counted as one edit (optimal string alignment).</summary>
    public static int EditDistance(string a, string b)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(b);
        var d = new int[a.Length + 1, b.Length + 1];
        for (int i = 0; i <= a.Length; i++)
        {
            d[i, 0] = i;
        }

        for (int j = 0; j <= b.Length; j++)
        {
            d[0, j] = j;
        }

        for (int i = 1; i <= a.Length; i++)
        {
            for (int j = 1; j <= b.Length; j++)
            {
                int cost = a[i - 1] == b[j - 1] ? 0 : 1;
                d[i, j] = Math.Min(Math.Min(d[i - 1, j] + 1, d[i, j - 1] + 1), d[i - 1, j - 1] + cost);
                if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1])
                {
                    d[i, j] = Math.Min(d[i, j], d[i - 2, j - 2] + 1);
                }
            }
        }

        return d[a.Length, b.Length];
    }
}
