using System.CommandLine;
using System.Globalization;
using TapeVault.Core.Drafting;

namespace TapeVault.Cli.Commands;

/// <summary>
/// tapevault profile draft CAPTURE.wav [--out FILE]: a format profile drafted from the first minutes of a capture,
/// every field with how it was found and the guesses marked; the profile to FILE and its side list of findings
/// beside it (FILE with .findings.json), or the profile to standard output.
/// </summary>
public sealed class ProfileDraftCommand : CliCommand
{
    private readonly Argument<string> capture = new("CAPTURE.wav") { Description = "the capture to draft from: a WAV or FLAC file" };
    private readonly Option<string> output = CommonOptions.Out("FILE.json", "write the drafted profile here, and its findings beside it (FILE.findings.json); default: the profile to standard output");
    private readonly Option<double> seconds = CommonOptions.Number("--seconds", "S", $"how much of the capture to read, from its start, in seconds (1 to 3600); default: {CaptureStretch.DefaultSeconds:0}", CaptureStretch.DefaultSeconds, 1, 3600);
    private readonly Option<string> channel = CommonOptions.Channel();

    public ProfileDraftCommand()
        : base("draft", "Draft a format profile from a capture, with every guess marked and a confidence.")
    {
        Arguments.Add(capture);
        Options.Add(output);
        Options.Add(seconds);
        Options.Add(channel);
    }

    /// <summary>The side list's file beside a profile file.</summary>
    public static string FindingsPath(string profilePath) => Path.ChangeExtension(profilePath, ".findings.json");

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        string capturePath = run.Value(capture)!;
        string? outPath = run.Value(output);
        if (outPath is not null)
        {
            Files.CheckOutputs(capturePath, [new Files.Output("out", outPath), new Files.Output("out", FindingsPath(outPath))]);
        }

        var side = DecodeCommand.Channel(run.Value(channel) ?? CliSettings.Load().Decode.Channel);
        ProfileDraft draft;
        try
        {
            draft = ProfileDrafter.Draft(CaptureStretch.Read(capturePath, run.Value(seconds), side));
        }
        catch (ProfileDraftException e)
        {
            run.Error.WriteLine($"tapevault: {e.Message}");
            return 1;
        }

        var text = outPath is null ? run.Error : run.Output;
        text.WriteLine(string.Create(CultureInfo.InvariantCulture, $"Drafted from the first {draft.SecondsRead:0.#} s: confidence {draft.Confidence:0.00}; {draft.Guesses.Count()} of {draft.Findings.Count} fields are guesses (marked GUESS): confirm or correct them, then run 'tapevault profile check'."));
        foreach (var f in draft.Findings)
        {
            text.WriteLine(string.Create(CultureInfo.InvariantCulture, $"  {(f.Guessed ? "GUESS " : "      ")} {f.Path,-32} {f.Value}  ({f.Confidence:0.00}: {f.Evidence})"));
        }

        foreach (string note in draft.Notes)
        {
            text.WriteLine($"  {note}");
        }

        if (outPath is null)
        {
            run.Output.WriteLine(draft.Json);
            return 0;
        }

        File.WriteAllText(outPath, draft.Json + Environment.NewLine);
        File.WriteAllText(FindingsPath(outPath), draft.SideListJson() + Environment.NewLine);
        run.Output.WriteLine($"Wrote {outPath} and {FindingsPath(outPath)}.");
        return 0;
    }
}
