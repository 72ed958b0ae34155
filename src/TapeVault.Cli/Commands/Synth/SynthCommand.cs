using System.CommandLine;
using System.Text;
using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Synthesis;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault synth OUT.wav --profile ID [damage options]: a capture made by the channel model.</summary>
public sealed class SynthCommand : CliCommand
{
    private readonly Argument<string> target = new("OUT.wav") { Description = "the capture to write (the same as --out)", Arity = ArgumentArity.ZeroOrOne };
    private readonly Option<string> output = CommonOptions.Out("OUT.wav", "the capture to write (a WAV file); required, here or as the first word");
    private readonly Option<string> profile = CommonOptions.Profile("the format profile (required)");
    private readonly Option<string> text = new("--text") { HelpName = "TEXT", Description = "the file's content as text; default: a greeting" };
    private readonly Option<string> file = new("--file") { HelpName = "PATH", Description = "take the file's content from PATH instead of --text; default: none" };
    private readonly Option<string> name = new("--name") { HelpName = "NAME", Description = "the name in the file's header; default: HELLO, or the --file name in capitals" };
    private readonly Option<double> seed = CommonOptions.Number("--seed", "N", "random seed, 0 or more; default: 1", 1, 0, int.MaxValue);
    private readonly Option<double> rate = CommonOptions.Number("--rate", "HZ", "sample rate in Hz, 8000 to 192000; default: 44100", 44_100, 8_000, 192_000);
    private readonly Option<double?> snr = CommonOptions.OptionalNumber("--snr", "DB", "signal-to-noise ratio in dB, -20 to 120; default: no noise", -20, 120);
    private readonly Option<double> speed = CommonOptions.Number("--speed", "FACTOR", "tape speed as a factor of nominal, 0.5 to 1.5; default: 1", 1, 0.5, 1.5);
    private readonly Option<double> wow = CommonOptions.Number("--wow", "PERCENT", "slow speed variation in percent, 0 to 10; default: 0", 0, 0, 10);
    private readonly Option<double> flutter = CommonOptions.Number("--flutter", "PERCENT", "fast speed variation in percent, 0 to 10; default: 0", 0, 0, 10);
    private readonly Option<double> pw50 = CommonOptions.Number("--pw50", "US", "head pulse width at half height in microseconds, 1 to 1000; default: 40", 40, 1, 1000);
    private readonly Option<double> azimuth = CommonOptions.Number("--azimuth", "DEGREES", "head azimuth error in degrees, -10 to 10; default: 0", 0, -10, 10);
    private readonly Option<double> dropouts = CommonOptions.Number("--dropouts", "PER_MINUTE", "random dropouts per minute, 0 to 600; default: 0", 0, 0, 600);
    private readonly Option<double> hum = CommonOptions.Number("--hum", "LEVEL", "mains hum as a fraction of full scale, 0 to 1; default: 0", 0, 0, 1);
    private readonly Option<double> level = CommonOptions.Number("--level", "PEAK", "peak level as a fraction of full scale, 0.001 to 1; default: 0.5", 0.5, 0.001, 1);
    private readonly Option<bool> head = new("--head") { Description = "model the raw head amplifier instead of a line output; default: line output" };
    private readonly Option<bool> invert = new("--invert") { Description = "invert the polarity; default: not inverted" };
    private readonly Option<string> encoding = CommonOptions.OneOf(new Option<string>("--encoding") { HelpName = "pcm8|pcm16|pcm24|float32", Description = "the WAV sample encoding; default: pcm16" }, "pcm8", "pcm16", "pcm24", "float32");
    private readonly Option<string> profiles = CommonOptions.ProfilesFolder();

    public SynthCommand()
        : base("synth", "Synthesise a capture of a tape, with the damage you ask for.")
    {
        Arguments.Add(target);
        foreach (var option in new Option[] { output, profile, text, file, name, seed, rate, snr, speed, wow, flutter, pw50, azimuth, dropouts, hum, level, head, invert, encoding, profiles })
        {
            Options.Add(option);
        }
    }

    public override string Usage => "synth (OUT.wav | --out OUT.wav) --profile ID [--text TEXT | --file PATH] [--name NAME] [--seed N] [--rate HZ] [--snr DB] [--speed FACTOR] [--wow PERCENT] [--flutter PERCENT] [--pw50 US] [--azimuth DEGREES] [--dropouts PER_MINUTE] [--hum LEVEL] [--level PEAK] [--head] [--invert] [--encoding pcm8|pcm16|pcm24|float32] [--profiles DIR]";

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        string outPath = run.OutputPath(output, target);
        var format = Catalogs.Profile(run.Value(profile)!, run.Value(profiles), CliSettings.Load());
        string? content = run.Value(text);
        string? source = run.Value(file);
        if (content is not null && source is not null)
        {
            throw new UsageException("Give --text or --file, not both.");
        }

        if (source is not null && !File.Exists(source))
        {
            throw new UsageException($"The file does not exist: {source}.");
        }

        byte[] bytes = source is not null
            ? File.ReadAllBytes(source)
            : Encoding.ASCII.GetBytes(content ?? "HELLO FROM TAPEVAULT\n");
        string fileName = run.Value(name) ?? (source is not null ? Path.GetFileNameWithoutExtension(source).ToUpperInvariant() : "HELLO");
        var damage = new ChannelDamage
        {
            Seed = (int)run.Value(seed),
            SampleRate = (int)run.Value(rate),
            SnrDb = run.Value(snr),
            Speed = run.Value(speed),
            WowPercent = run.Value(wow),
            FlutterPercent = run.Value(flutter),
            Pw50Microseconds = run.Value(pw50),
            AzimuthDegrees = run.Value(azimuth),
            RandomDropoutsPerMinute = run.Value(dropouts),
            HumLevel = run.Value(hum),
            Level = run.Value(level),
            Chain = run.Value(head) ? ReadChain.HeadAmplifier : ReadChain.LineOutput,
            Invert = run.Value(invert),
        };
        var sampleEncoding = run.Value(encoding) switch
        {
            "pcm8" => CaptureEncoding.Pcm8,
            "pcm24" => CaptureEncoding.Pcm24,
            "float32" => CaptureEncoding.Float32,
            _ => CaptureEncoding.Pcm16,
        };

        string path = Path.GetFullPath(outPath);
        if (!Directory.Exists(Path.GetDirectoryName(path)))
        {
            throw new UsageException($"The folder for {outPath} does not exist.");
        }

        if (bytes.Length == 0 && BlockWriter.LengthWithoutZero(format.Layout) is { } length)
        {
            throw new UsageException($"Profile {format.Id} cannot write an empty file: its field '{length.Name}' reads a stored 0 as {length.ZeroMeans}. Give at least one byte.");
        }

        var result = CaptureSynthesizer.Write(path, format, [new TapeFile(fileName, bytes)], damage, sampleEncoding);
        run.Output.WriteLine($"Wrote {path}: {result.Blocks.Count} blocks, {result.TapeSeconds:0.0} s of tape, profile {format.Id}.");
        return 0;
    }
}
