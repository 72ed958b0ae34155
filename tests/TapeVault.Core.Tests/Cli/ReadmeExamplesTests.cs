using System.Diagnostics;
using System.Text;
using System.Text.RegularExpressions;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Cli;

/// <summary>
/// Every command in README.md's "Using the command line" block runs, as written, with the real tapevault program
/// started in a temporary folder: exit 0, or the exit code the README documents beside it. The archive commands find
/// a temporary archive through an appsettings.json in that folder; merge's three passes are synthesised first.
/// </summary>
public sealed partial class ReadmeExamplesTests : IDisposable
{
    private const string Prefix = "tapevault ";

    private readonly OutsideTempFolder temp = new();

    public void Dispose() => temp.Dispose();

    [Fact]
    public void EveryReadmeCommandLineExample_RunsAndExitsAsDocumented()
    {
        var examples = ReadmeExamples();
        Assert.True(examples.Count >= 10, $"Only {examples.Count} examples found in README.md's command-line block.");

        string folder = temp.NewFolder("readme");
        string archive = temp.NewFolder("archive");
        string accession = examples.SelectMany(e => e.Args).SkipWhile(a => a != "--item").Skip(1).FirstOrDefault() ?? "T-0001";
        var (database, store) = CliArchive.Create(Path.Combine(archive, "archive.db"), Path.Combine(archive, "store"), accession);
        File.WriteAllText(Path.Combine(folder, "appsettings.json"), System.Text.Json.JsonSerializer.Serialize(
            new { TapeVault = new { Archive = new { DatabasePath = database, StorePath = store } } }));

        foreach (var example in examples)
        {
            if (example.Args[0] == "merge")
            {
                // Three passes of one tape, differing only in their noise, for merge to work on.
                string profile = example.Args[example.Args.IndexOf("--profile") + 1];
                int seed = 100;
                foreach (string pass in example.Args.Where(a => a.EndsWith(".wav", StringComparison.Ordinal)))
                {
                    seed++;
                    var synth = RunCli(folder, ["synth", pass, "--profile", profile, "--text", "HELLO", "--snr", "25", "--seed", seed.ToString(System.Globalization.CultureInfo.InvariantCulture)]);
                    Assert.True(synth.Exit == 0, $"synth {pass}: {synth}");
                }
            }

            var run = RunCli(folder, example.Args);
            Assert.True(example.AllowedExits.Contains(run.Exit), $"README example '{example.Line}' exited {run.Exit} (allowed: {string.Join(", ", example.AllowedExits)}); {run}");
        }

        // The examples' outputs are where the README says they go.
        foreach (string output in examples.SelectMany(e => e.Args).Where(a => a.EndsWith('/')))
        {
            Assert.True(Directory.Exists(Path.Combine(folder, output)) && Directory.EnumerateFileSystemEntries(Path.Combine(folder, output)).Any(), $"{output} is missing or empty.");
        }

        Assert.True(File.Exists(Path.Combine(folder, "tape.tvimg")), "merge wrote no tape.tvimg.");
    }

    [Fact]
    public void TheScriptTheReadmePutsOnThePath_RunsTheCommandLine_AndPassesItsExitCode()
    {
        string root = RepositoryRoot();
        string readme = File.ReadAllText(Path.Combine(root, "README.md"));
        Assert.Contains("export PATH=\"$PWD/scripts:$PATH\"", readme, StringComparison.Ordinal);
        Assert.Contains("about a minute and a half", readme, StringComparison.Ordinal);
        if (!OperatingSystem.IsWindows())
        {
            Assert.True((File.GetUnixFileMode(Path.Combine(root, "scripts", "tapevault")) & UnixFileMode.UserExecute) != 0, "scripts/tapevault is not executable.");
        }

        var help = RunScript(root, "tapevault help");
        Assert.True(help.Exit == 0, help.ToString());
        Assert.Contains("tapevault decode CAPTURE.wav", help.Output, StringComparison.Ordinal);

        var wrong = RunScript(root, "tapevault decod");
        Assert.True(wrong.Exit == 2, wrong.ToString());
        Assert.Contains("did you mean 'decode'?", wrong.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void TheBashCompletionTheReadmeLoads_CompletesCommandsAndProfiles()
    {
        string root = RepositoryRoot();
        Assert.Contains("source scripts/tapevault-completion.bash", File.ReadAllText(Path.Combine(root, "README.md")), StringComparison.Ordinal);

        // bash itself runs the completion function as it would on Tab, with the line typed so far.
        string Complete(string line) => RunScript(root, $$"""
            source scripts/tapevault-completion.bash
            COMP_LINE='{{line}}'; COMP_POINT=${#COMP_LINE}
            read -r -a COMP_WORDS <<< "$COMP_LINE"; [ "${COMP_LINE: -1}" = " " ] && COMP_WORDS+=("")
            COMP_CWORD=$(( ${#COMP_WORDS[@]} - 1 ))
            _tapevault_complete
            printf '%s\n' "${COMPREPLY[@]}"
            """).Output;

        Assert.Equal(["decode", "demo"], Complete("tapevault de").Split('\n', StringSplitOptions.RemoveEmptyEntries).Order(StringComparer.Ordinal));
        Assert.Equal(["extract"], Complete("tapevault image ex").Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Contains("orrin-80", Complete("tapevault decode x.wav --profile ").Split('\n'));
    }

    /// <summary>
    /// Runs a bash script in the repository with scripts/ on the PATH, as the README sets it up; the tapevault script
    /// runs the build the tests were made with (its configuration is the folder above the tests' own).
    /// </summary>
    private static Run RunScript(string root, string script)
    {
        var start = new ProcessStartInfo("bash")
        {
            WorkingDirectory = root,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            RedirectStandardInput = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add("-c");
        start.ArgumentList.Add(script);
        start.Environment["PATH"] = $"{Path.Combine(root, "scripts")}:{Path.GetDirectoryName(Environment.ProcessPath)}:{Environment.GetEnvironmentVariable("PATH")}";
        start.Environment["TAPEVAULT_CONFIGURATION"] = new DirectoryInfo(AppContext.BaseDirectory).Parent!.Name;
        using var process = Process.Start(start)!;
        process.StandardInput.Close();
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();
        Assert.True(process.WaitForExit(300_000), "the script did not finish within 300 s.");
        return new Run(process.ExitCode, output.Result, error.Result);
    }

    private sealed record Example(string Line, List<string> Args, int[] AllowedExits);

    private static List<Example> ReadmeExamples()
    {
        string readme = File.ReadAllText(Path.Combine(RepositoryRoot(), "README.md"));
        int section = readme.IndexOf("## Using the command line", StringComparison.Ordinal);
        Assert.True(section >= 0, "README.md has no 'Using the command line' section.");
        int start = readme.IndexOf("```sh", section, StringComparison.Ordinal);
        int end = readme.IndexOf("```", start + 5, StringComparison.Ordinal);
        var examples = new List<Example>();
        foreach (string raw in readme[(start + 5)..end].Split('\n'))
        {
            string line = raw.Trim();
            if (line.Length == 0)
            {
                continue;
            }

            Assert.StartsWith(Prefix, line, StringComparison.Ordinal);
            int hash = line.IndexOf(" #", StringComparison.Ordinal);
            string comment = hash >= 0 ? line[hash..] : string.Empty;
            string command = hash >= 0 ? line[Prefix.Length..hash] : line[Prefix.Length..];

            // A comment such as "(exit 3 if one is incomplete)" documents a further exit code.
            int[] allowed = [0, .. ExitNote().Matches(comment).Select(m => int.Parse(m.Groups[1].Value, System.Globalization.CultureInfo.InvariantCulture))];
            examples.Add(new Example(line, Words(command), allowed));
        }

        return examples;
    }

    /// <summary>Splits a command as a POSIX shell would for these simple lines: spaces, and double quotes around a word.</summary>
    private static List<string> Words(string command)
    {
        var words = new List<string>();
        var word = new StringBuilder();
        bool quoted = false, any = false;
        foreach (char c in command)
        {
            if (c == '"')
            {
                quoted = !quoted;
                any = true;
            }
            else if (c == ' ' && !quoted)
            {
                if (any)
                {
                    words.Add(word.ToString());
                    word.Clear();
                    any = false;
                }
            }
            else
            {
                word.Append(c);
                any = true;
            }
        }

        if (any)
        {
            words.Add(word.ToString());
        }

        return words;
    }

    private static string RepositoryRoot()
    {
        for (var dir = new DirectoryInfo(AppContext.BaseDirectory); dir is not null; dir = dir.Parent)
        {
            if (File.Exists(Path.Combine(dir.FullName, "README.md")) && Directory.Exists(Path.Combine(dir.FullName, "src", "TapeVault.Cli")))
            {
                return dir.FullName;
            }
        }

        throw new InvalidOperationException("The repository root (README.md beside src/TapeVault.Cli) was not found above the test folder.");
    }

    private sealed record Run(int Exit, string Output, string Error)
    {
        public override string ToString() => $"stdout: {Output}; stderr: {Error}";
    }

    private static Run RunCli(string workingDirectory, IEnumerable<string> args)
    {
        // The CLI's assembly is copied beside the tests; run it with the same dotnet host that runs them, in the
        // example's folder, with the temporary folder (where demo writes by default) inside the test's own.
        string cli = Path.Combine(AppContext.BaseDirectory, "tapevault.dll");
        var start = new ProcessStartInfo(Environment.ProcessPath!)
        {
            WorkingDirectory = workingDirectory,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.Environment["TMPDIR"] = Directory.CreateDirectory(Path.Combine(workingDirectory, "tmp")).FullName;
        start.ArgumentList.Add(cli);
        foreach (string arg in args)
        {
            start.ArgumentList.Add(arg);
        }

        using var process = Process.Start(start)!;
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();
        Assert.True(process.WaitForExit(120_000), "tapevault did not finish within 120 s.");
        return new Run(process.ExitCode, output.Result, error.Result);
    }

    [GeneratedRegex(@"exit (\d+)")]
    private static partial Regex ExitNote();
}
