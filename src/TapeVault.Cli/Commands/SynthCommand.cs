using System.Text;
using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Synthesis;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault synth OUT.wav --profile ID [damage options]: a capture made by the channel model.</summary>
public static class SynthCommand
{
    public const string Usage = "synth OUT.wav --profile ID [--text TEXT | --file PATH] [--name NAME] [--seed N] [--rate HZ] [--snr DB] [--speed F] [--wow PERCENT] [--flutter PERCENT] [--pw50 US] [--azimuth DEGREES] [--dropouts PER_MINUTE] [--hum LEVEL] [--level PEAK] [--head] [--invert] [--encoding pcm8|pcm16|pcm24|float32]";


    public static int Run(CommandLine args, TextWriter output)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(output);
        if (args.Positional.Count != 1)
        {
            throw new UsageException($"Usage: tapevault {Usage}");
        }

        var profile = Catalogs.Profile(args, CliSettings.Load());

        string? text = args.Value("text");
        string? file = args.Value("file");
        if (text is not null && file is not null)
        {
            throw new UsageException("Give --text or --file, not both.");
        }

        if (file is not null && !File.Exists(file))
        {
            throw new UsageException($"The file does not exist: {file}.");
        }

        byte[] content = file is not null
            ? File.ReadAllBytes(file)
            : Encoding.ASCII.GetBytes(text ?? "HELLO FROM THE BRACKENFIELD HOME COMPUTER CLUB\n");
        string name = args.Value("name") ?? (file is not null ? Path.GetFileNameWithoutExtension(file).ToUpperInvariant() : "HELLO");
        double? snr = args.Value("snr") is null ? null : args.Number("snr", 0, -20, 120);
        var damage = new ChannelDamage
        {
            Seed = (int)args.Number("seed", 1, 0, int.MaxValue),
            SampleRate = (int)args.Number("rate", 44_100, 8_000, 192_000),
            SnrDb = snr,
            Speed = args.Number("speed", 1, 0.5, 1.5),
            WowPercent = args.Number("wow", 0, 0, 10),
            FlutterPercent = args.Number("flutter", 0, 0, 10),
            Pw50Microseconds = args.Number("pw50", 40, 1, 1000),
            AzimuthDegrees = args.Number("azimuth", 0, -10, 10),
            RandomDropoutsPerMinute = args.Number("dropouts", 0, 0, 600),
            HumLevel = args.Number("hum", 0, 0, 1),
            Level = args.Number("level", 0.5, 0.001, 1),
            Chain = args.Flag("head") ? ReadChain.HeadAmplifier : ReadChain.LineOutput,
            Invert = args.Flag("invert"),
        };
        var encoding = args.Value("encoding") switch
        {
            null or "pcm16" => CaptureEncoding.Pcm16,
            "pcm8" => CaptureEncoding.Pcm8,
            "pcm24" => CaptureEncoding.Pcm24,
            "float32" => CaptureEncoding.Float32,
            var other => throw new UsageException($"The option --encoding must be pcm8, pcm16, pcm24 or float32, not '{other}'."),
        };
        args.RejectUnknown();

        string path = Path.GetFullPath(args.Positional[0]);
        if (!Directory.Exists(Path.GetDirectoryName(path)))
        {
            throw new UsageException($"The folder for {args.Positional[0]} does not exist.");
        }

        var result = CaptureSynthesizer.Write(path, profile, [new TapeFile(name, content)], damage, encoding);
        output.WriteLine($"Wrote {path}: {result.Blocks.Count} blocks, {result.TapeSeconds:0.0} s of tape, profile {profile.Id}.");
        return 0;
    }
}
