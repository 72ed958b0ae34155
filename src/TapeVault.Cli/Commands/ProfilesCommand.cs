using TapeVault.Core.Formats;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault profiles [--profiles DIR]: the format profiles this installation knows.</summary>
public static class ProfilesCommand
{
    public static int Run(CommandLine args, TextWriter output)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(output);
        var catalog = Catalogs.Load(args, CliSettings.Load());
        args.RejectUnknown();
        output.WriteLine($"{"id",-14} {"family",-12} name");
        foreach (var profile in catalog.All)
        {
            string family = profile.Family switch
            {
                FormatFamily.PulseWidth => "pulse-width",
                FormatFamily.Fsk => "fsk",
                _ => "biphase",
            };
            output.WriteLine($"{profile.Id,-14} {family,-12} {profile.Name}");
        }

        return 0;
    }
}
