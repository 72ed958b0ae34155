using System.CommandLine;
using TapeVault.Cli;
using TapeVault.Cli.Commands;
using Xunit;

namespace TapeVault.Core.Tests.Cli;

/// <summary>
/// Every command answers --help, -h and "help COMMAND" with its own usage and every option it accepts, exit 0;
/// a mistyped command or option is refused with the nearest right spelling (exit 2, one line).
/// </summary>
public sealed class HelpAndSuggestionTests
{
    /// <summary>Every command that runs, by the words that name it ("decode", "image extract").</summary>
    public static TheoryData<string> Commands => new(HelpWriter.Leaves(CommandTree.Build()).Select(HelpWriter.PathOf));

    /// <summary>Every group of commands ("image", "users", "export").</summary>
    public static TheoryData<string> Groups => new(CommandTree.Build().Subcommands.Where(c => c.Subcommands.Count > 0).Select(c => c.Name));

    private static Command Find(string path)
    {
        Command command = CommandTree.Build();
        foreach (string word in path.Split(' '))
        {
            command = command.Subcommands.Single(c => c.Name == word);
        }

        return command;
    }

    [Theory]
    [MemberData(nameof(Commands))]
    public void EveryCommand_PrintsItsOwnHelp_ForHelpDashHAndHelpCommand(string command)
    {
        string[] words = command.Split(' ');
        var options = HelpWriter.OptionsOf(Find(command)).ToList();
        foreach (var run in new[] { CliRun.Run([.. words, "--help"]), CliRun.Run([.. words, "-h"]), CliRun.Run(["help", .. words]) })
        {
            Assert.True(run.ExitCode == 0, run.ToString());
            Assert.Equal(string.Empty, run.Error);
            Assert.StartsWith($"tapevault {command}:", run.Output, StringComparison.Ordinal);
            foreach (var option in options)
            {
                Assert.Contains(option.Name, run.Output, StringComparison.Ordinal);
                Assert.False(string.IsNullOrWhiteSpace(option.Description), $"{command} {option.Name} has no description.");
                Assert.Contains(option.Description!, run.Output, StringComparison.Ordinal);
            }
        }
    }

    [Theory]
    [MemberData(nameof(Commands))]
    public void EveryOptionThatTakesAValue_SaysItsDefaultOrThatItIsRequired(string command)
    {
        // Per-command help with units and defaults: an option with a value either is required or names its default.
        foreach (var option in HelpWriter.OptionsOf(Find(command)).Where(o => !HelpWriter.IsFlag(o)))
        {
            Assert.True(option.Description!.Contains("default", StringComparison.Ordinal) || option.Description.Contains("required", StringComparison.Ordinal)
                || option.Required || command is "export bag" or "users add",
                $"{command} {option.Name}: '{option.Description}' names no default.");
        }
    }

    [Theory]
    [MemberData(nameof(Groups))]
    public void EveryGroup_ListsItsCommands_AndAsksWhichOneWhenRunAlone(string group)
    {
        var help = CliRun.Run(group, "--help");
        Assert.True(help.ExitCode == 0, help.ToString());
        foreach (var sub in Find(group).Subcommands)
        {
            Assert.Contains($"tapevault {group} {sub.Name}", help.Output, StringComparison.Ordinal);
        }

        var alone = CliRun.Run(group);
        Assert.Equal(2, alone.ExitCode);
        Assert.StartsWith("tapevault: Say what to do:", Assert.Single(alone.ErrorLines), StringComparison.Ordinal);
    }

    [Theory]
    [MemberData(nameof(Commands))]
    public void EveryListedOption_IsAcceptedByTheCommandsParser(string command)
    {
        // An option the help lists must not be refused as unknown (the help and the parser are one table). Parsed
        // only, never run: some commands (the worker) run until stopped.
        foreach (var option in HelpWriter.OptionsOf(Find(command)))
        {
            string[] args = HelpWriter.IsFlag(option) ? [.. command.Split(' '), option.Name] : [.. command.Split(' '), option.Name, "x"];
            string? problem = ParseProblems.Describe(CommandTree.Build().Parse(args));
            Assert.DoesNotContain("Unknown option", problem ?? string.Empty, StringComparison.Ordinal);
        }
    }

    [Theory]
    [InlineData("decode")]
    [InlineData("merge")]
    [InlineData("synth")]
    [InlineData("image extract")]
    [InlineData("export bag")]
    public void AnOptionGivenWithoutItsValue_IsRefusedAsSuch_NotAsHelp(string command)
    {
        // "tapevault X --help" once answered "The option --help needs a value."; an option at the end of the line
        // without its value is the case that message is for.
        var option = HelpWriter.OptionsOf(Find(command)).First(o => !HelpWriter.IsFlag(o));
        var run = CliRun.Run([.. command.Split(' '), option.Name]);

        Assert.Equal(2, run.ExitCode);
        Assert.Equal($"tapevault: The option {option.Name} needs a value.", Assert.Single(run.ErrorLines));
    }

    [Fact]
    public void TabCompletion_OffersCommandsOptionsAndProfiles_ThroughTheSuggestDirective()
    {
        // The [suggest:POSITION] directive, as the bash completion script in scripts/ calls it.
        var commands = CliRun.Run("[suggest:12]", "tapevault de");
        Assert.True(commands.ExitCode == 0, commands.ToString());
        Assert.Contains("decode", commands.Output.Split('\n'));
        Assert.Contains("demo", commands.Output.Split('\n'));

        var profiles = CliRun.Run("[suggest:29]", "tapevault decode --profile kc");
        Assert.Contains("kcs-300", profiles.Output.Split('\n'));

        var choices = CliRun.Run("[suggest:33]", "tapevault decode x.wav --channel ");
        Assert.Equal(["left", "mix", "right"], choices.Output.Split('\n', StringSplitOptions.RemoveEmptyEntries).Order(StringComparer.Ordinal));
    }

    [Fact]
    public void HelpAfterOtherWords_StillPrintsHelp_AndRunsNothing()
    {
        var run = CliRun.Run("decode", "no-such-capture.wav", "--profile", "kcs-300", "--help");

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Contains("tapevault decode CAPTURE.wav", run.Output, StringComparison.Ordinal);
        Assert.Contains("--channel left|right|mix", run.Output, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(new[] { "decode", "x.wav", "--profle", "kcs-300" }, "Unknown option --profle; did you mean --profile?")]
    [InlineData(new[] { "image", "extract", "a", "b", "--partail" }, "Unknown option --partail; did you mean --partial?")]
    [InlineData(new[] { "image", "extrcat", "a", "b" }, "Unknown command 'image extrcat'; did you mean 'image extract'?")]
    [InlineData(new[] { "export", "bga", "--out", "b" }, "Unknown command 'export bga'; did you mean 'export bag'?")]
    [InlineData(new[] { "publish", "1", "site", "--ot", "b" }, "Unknown option --ot; did you mean --out?")]
    [InlineData(new[] { "synth", "x.wav", "--profile", "kcs-300", "--flutetr", "1" }, "Unknown option --flutetr; did you mean --flutter?")]
    [InlineData(new[] { "decod" }, "Unknown command 'decod'; did you mean 'decode'?")]
    [InlineData(new[] { "pubilsh", "1", "site" }, "Unknown command 'pubilsh'; did you mean 'publish'?")]
    [InlineData(new[] { "help", "mreg" }, "Unknown command 'mreg'; did you mean 'merge'?")]
    public void AMistypedWord_IsRefusedWithTheNearestRightSpelling(string[] args, string expected)
    {
        var run = CliRun.Run(args);

        Assert.Equal(2, run.ExitCode);
        var line = Assert.Single(run.ErrorLines);
        Assert.Contains(expected, line, StringComparison.Ordinal);
    }

    [Fact]
    public void AWordFarFromEveryOption_IsRefusedWithoutAGuess()
    {
        var run = CliRun.Run("decode", "x.wav", "--zzzzzzzz", "1");

        Assert.Equal(2, run.ExitCode);
        Assert.Equal("tapevault: Unknown option --zzzzzzzz.", Assert.Single(run.ErrorLines));
    }

    [Theory]
    // Textbook values of the Levenshtein distance (e.g. kitten → sitting is 3, the standard example), and one
    // adjacent transposition counted as one edit (optimal string alignment; common practice for typo suggestions).
    [InlineData("kitten", "sitting", 3)]
    [InlineData("flaw", "lawn", 2)]
    [InlineData("", "abc", 3)]
    [InlineData("profile", "profile", 0)]
    [InlineData("partail", "partial", 1)]
    public void EditDistance_MatchesTheTextbookValues(string a, string b, int expected)
    {
        Assert.Equal(expected, Spelling.EditDistance(a, b));
        Assert.Equal(expected, Spelling.EditDistance(b, a));
    }
}
