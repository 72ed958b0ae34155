using TapeVault.Cli;
using Xunit;

namespace TapeVault.Core.Tests.Cli;

/// <summary>
/// Every command answers --help, -h and "help COMMAND" with its own usage and every option it accepts, exit 0;
/// a mistyped command or option is refused with the nearest right spelling (exit 2, one line).
/// </summary>
public sealed class HelpAndSuggestionTests
{
    public static TheoryData<string> Commands => new(CommandHelp.All.Select(c => c.Name));

    [Theory]
    [MemberData(nameof(Commands))]
    public void EveryCommand_PrintsItsOwnHelp_ForHelpDashHAndHelpCommand(string command)
    {
        var help = CommandHelp.Find(command)!;
        foreach (var run in new[] { CliRun.Run(command, "--help"), CliRun.Run(command, "-h"), CliRun.Run("help", command) })
        {
            Assert.True(run.ExitCode == 0, run.ToString());
            Assert.Equal(string.Empty, run.Error);
            Assert.StartsWith($"tapevault {command}:", run.Output, StringComparison.Ordinal);
            foreach (var option in help.Options)
            {
                Assert.Contains($"--{option.Name}", run.Output, StringComparison.Ordinal);
                Assert.Contains(option.Description, run.Output, StringComparison.Ordinal);
            }
        }
    }

    [Theory]
    [MemberData(nameof(Commands))]
    public void EveryListedOption_IsAcceptedByTheCommandsParser(string command)
    {
        // An option the help lists must not be refused as unknown (the help and the parser are one table).
        foreach (var option in CommandHelp.Find(command)!.Options)
        {
            string[] args = option.Value is null ? [command, $"--{option.Name}"] : [command, $"--{option.Name}", "x"];
            var run = CliRun.Run(args);
            Assert.DoesNotContain("Unknown option", run.Error, StringComparison.Ordinal);
        }
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
        Assert.Equal(expected, CommandHelp.EditDistance(a, b));
        Assert.Equal(expected, CommandHelp.EditDistance(b, a));
    }
}
