using System.CommandLine;
using TapeVault.Core.Formats;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault profiles [--profiles DIR]: the format profiles this installation knows.</summary>
public sealed class ProfilesCommand : CliCommand
{
    private readonly Option<string> profiles = CommonOptions.ProfilesFolder();

    public ProfilesCommand()
        : base("profiles", "List the format profiles: the built-in ones and your own.")
    {
        Options.Add(profiles);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        var catalog = Catalogs.Load(run.Value(profiles), CliSettings.Load());
        run.Output.WriteLine($"{"id",-14} {"family",-12} name");
        foreach (var profile in catalog.All)
        {
            string family = profile.Family switch
            {
                FormatFamily.PulseWidth => "pulse-width",
                FormatFamily.Fsk => "fsk",
                _ => "biphase",
            };
            run.Output.WriteLine($"{profile.Id,-14} {family,-12} {profile.Name}");
        }

        return 0;
    }
}
