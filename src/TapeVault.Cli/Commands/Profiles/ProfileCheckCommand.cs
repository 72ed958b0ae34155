using System.CommandLine;
using TapeVault.Core.Drafting;
using TapeVault.Core.Formats;

namespace TapeVault.Cli.Commands;

/// <summary>
/// tapevault profile check PROFILE --against CAPTURE.wav: decodes the capture with a profile (a file, or the id of a
/// known profile) and reports what fits and what does not. Exit 0 when it fits, 1 when it does not.
/// </summary>
public sealed class ProfileCheckCommand : CliCommand
{
    private readonly Argument<string> profile = new("PROFILE") { Description = "the profile to check: a .json file, or the id of a known profile" };
    private readonly Option<string> against = new("--against") { HelpName = "CAPTURE.wav", Description = "the capture to decode with it (required)", Required = true };
    private readonly Option<string> profiles = CommonOptions.ProfilesFolder();

    public ProfileCheckCommand()
        : base("check", "Decode a capture with a profile and report what fits and what does not (exit 1 when it does not fit).")
    {
        Arguments.Add(profile);
        Options.Add(against);
        Options.Add(profiles);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        string named = run.Value(profile)!;
        var format = File.Exists(named) ? ProfileLoader.Load(named) : Catalogs.Profile(named, run.Value(profiles), CliSettings.Load());
        var report = ProfileCheck.Run(format, run.Value(against)!);
        foreach (string line in ProfileCheck.Describe(report))
        {
            run.Output.WriteLine(line);
        }

        return report.Fits ? 0 : 1;
    }
}
