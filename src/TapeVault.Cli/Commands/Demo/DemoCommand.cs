using System.CommandLine;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;

namespace TapeVault.Cli.Commands;

/// <summary>
/// tapevault demo [--out DIR]: synthesises the demo club's tapes with their damaged passes and decodes every pass
/// with the default bank, so a new user sees the whole read path on embedded defaults.
/// </summary>
public sealed class DemoCommand : CliCommand
{
    private readonly Option<string> folderOption = CommonOptions.Out("DIR", "where the demo captures go; default: tapevault-demo in the temporary folder");

    public DemoCommand()
        : base("demo", "Synthesise the demo club's damaged tapes and decode them.")
    {
        Options.Add(folderOption);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        var output = run.Output;
        string folder = run.Value(folderOption) ?? Path.Combine(Path.GetTempPath(), "tapevault-demo");
        Directory.CreateDirectory(folder);

        output.WriteLine($"TapeVault demo: the {DemoTapes.Club} (a fictional club) digitises its tapes.");
        output.WriteLine("Handle real tapes with care: see docs/capturing.md before playing old or mouldy cassettes.");
        output.WriteLine();
        foreach (var tape in DemoTapes.All)
        {
            var profile = ProfileCatalog.BuiltIn.Get(tape.ProfileId);
            output.WriteLine($"== {tape.Accession}  {tape.Title}  [{profile.Id}]");
            output.WriteLine($"   label: {tape.LabelText}");
            for (int p = 0; p < tape.Passes.Count; p++)
            {
                var pass = tape.Passes[p];
                string path = Path.Combine(folder, $"{tape.Accession.ToLowerInvariant()}-pass{p + 1}.wav");
                CaptureSynthesizer.Write(path, profile, tape.Files, pass.Damage);
                output.WriteLine();
                output.WriteLine($"-- pass {p + 1}: {pass.Deck}. {pass.Description}");
                output.WriteLine($"   {path}");
                DecodeResult result;
                using (var bar = new ProgressBar("decoding"))
                {
                    result = CaptureDecoder.Decode(path, profile, options: new DecodeOptions
                    {
                        Progress = bar.ForDecode(),
                    });
                }

                using (result)
                {
                    DecodeReport.WriteTable(output, result);
                }
            }

            output.WriteLine();
        }

        output.WriteLine($"Captures are in {folder}. Decode one yourself with:");
        output.WriteLine($"  tapevault decode {Path.Combine(folder, "bhcc-0017-pass1.wav")} --profile orrin-80 --json out.json");
        return 0;
    }
}
