using System.Diagnostics;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Cli;

/// <summary>
/// appsettings.json in the current folder names the folder of the user's own profiles. The command runs as its own
/// process, started in a folder of the test's, so no test changes this process's current folder.
/// </summary>
public sealed class SettingsFileTests(OutsideTempFolder temp) : IClassFixture<OutsideTempFolder>
{
    private const string UserProfile = """
        {
          "id": "club-fsk-600",
          "name": "A club's own 600-baud tones",
          "family": "fsk",
          "fsk": { "markHz": 2400, "spaceHz": 1200, "baud": 600 },
          "framing": { "dataBits": 8, "bitOrder": "lsb-first", "startBits": "0", "stopBits": "11", "parity": "none" },
          "layout": {}
        }
        """;

    [Fact]
    public void Profiles_ListsTheUserProfilesOfTheFolderThatTheSettingsFileNames()
    {
        string folder = Directory.CreateDirectory(temp.File("settings-case")).FullName;
        Directory.CreateDirectory(Path.Combine(folder, "club-profiles"));
        File.WriteAllText(Path.Combine(folder, "club-profiles", "club-fsk-600.json"), UserProfile);
        File.WriteAllText(Path.Combine(folder, "appsettings.json"), """{ "TapeVault": { "ProfilesFolder": "club-profiles" } }""");

        var (exit, output, error) = RunCli(folder, "profiles");

        Assert.True(exit == 0, error);
        Assert.Contains("club-fsk-600", output, StringComparison.Ordinal);
        Assert.Contains("kcs-300", output, StringComparison.Ordinal);
    }

    [Fact]
    public void Decode_RefusesASettingsFileWithAnImpossibleChunkSize_WithOneLineAndExitTwo()
    {
        string folder = Directory.CreateDirectory(temp.File("bad-settings-case")).FullName;
        File.WriteAllText(Path.Combine(folder, "appsettings.json"), """{ "TapeVault": { "Decode": { "ChunkSamples": 3 } } }""");

        var (exit, _, error) = RunCli(folder, "decode", "missing.wav", "--profile", "kcs-300");

        Assert.Equal(2, exit);
        Assert.Single(error.TrimEnd('\n').Split('\n'));
        Assert.Contains("ChunkSamples", error, StringComparison.Ordinal);
    }

    private static (int Exit, string Output, string Error) RunCli(string workingDirectory, params string[] args)
    {
        // The CLI's assembly is copied beside the tests; run it with the same dotnet host that runs them.
        string cli = Path.Combine(AppContext.BaseDirectory, "tapevault.dll");
        var start = new ProcessStartInfo(Environment.ProcessPath!)
        {
            WorkingDirectory = workingDirectory,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add(cli);
        foreach (string arg in args)
        {
            start.ArgumentList.Add(arg);
        }

        using var process = Process.Start(start)!;
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();
        Assert.True(process.WaitForExit(60_000), "tapevault did not finish within 60 s.");
        return (process.ExitCode, output.Result, error.Result);
    }
}
