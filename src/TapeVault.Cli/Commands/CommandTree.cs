using System.CommandLine;

namespace TapeVault.Cli.Commands;

/// <summary>Every tapevault command, in the order the help lists them. A new command is one class and one line here.</summary>
public static class CommandTree
{
    public static RootCommand Build() => new("decode, score and archive captures of data cassettes.")
    {
        new DecodeCommand(),
        new MergeCommand(),
        new SynthCommand(),
        new ProfilesCommand(),
        new CommandGroup("profile", "Draft a format profile from a capture, or check one against a capture.")
        {
            new ProfileDraftCommand(),
            new ProfileCheckCommand(),
        },
        new DemoCommand(),
        new CommandGroup("users", "Add, list, reset, disable or enable the web app's accounts.")
        {
            new UsersAddCommand(),
            new UsersListCommand(),
            new UsersResetCommand(),
            UsersAccessCommand.Disable(),
            UsersAccessCommand.Enable(),
        },
        new VerifyCommand(),
        new CommandGroup("export", "Export from the web app's archive.")
        {
            new ExportBagCommand(),
        },
        new PublishCommand(),
        new WorkerCommand(),
        new CommandGroup("image", "Check a tape image, or extract the files its headers name.")
        {
            new ImageVerifyCommand(),
            new ImageExtractCommand(),
        },
        new HelpCommand(),
    };
}
