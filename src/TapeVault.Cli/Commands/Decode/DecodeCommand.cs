using System.CommandLine;
using TapeVault.Core.Audio;
using TapeVault.Core.Decoding;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault decode CAPTURE.wav --profile ID: every detector setting of the profile over one capture, every block scored.</summary>
public sealed class DecodeCommand : CliCommand
{
    private readonly Argument<string> capture = new("CAPTURE.wav") { Description = "the capture to decode: a WAV file (8, 16, 24 or 32-bit PCM, or 32-bit float; Broadcast WAV, RF64 and BW64 too) or a FLAC file" };
    private readonly Option<string> profile = CommonOptions.Profile();
    private readonly Option<string> channel = CommonOptions.Channel();
    private readonly Option<string> json = new("--json") { HelpName = "OUT.json", Description = "write the full report as JSON; default: none" };
    private readonly Option<string> payload = new("--payload") { HelpName = "OUT.bin", Description = "write the decoded payload bytes; default: none" };
    private readonly Option<string> profiles = CommonOptions.ProfilesFolder();

    public DecodeCommand()
        : base("decode", "Decode one capture with every detector setting of a profile and score every block.")
    {
        Arguments.Add(capture);
        Options.Add(profile);
        Options.Add(channel);
        Options.Add(json);
        Options.Add(payload);
        Options.Add(profiles);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        string capturePath = run.Value(capture)!;
        var settings = CliSettings.Load();
        var format = Catalogs.Profile(run.Value(profile)!, run.Value(profiles), settings);
        var side = Channel(run.Value(channel) ?? settings.Decode.Channel);
        string? jsonPath = run.Value(json);
        string? payloadPath = run.Value(payload);

        // Bad output paths are bad input too: refuse them before the decode, so that nothing is printed or written.
        var outputs = new List<Files.Output>(2);
        if (jsonPath is not null)
        {
            outputs.Add(new Files.Output("json", jsonPath));
        }

        if (payloadPath is not null)
        {
            outputs.Add(new Files.Output("payload", payloadPath));
        }

        Files.CheckOutputs(capturePath, outputs);

        DecodeResult result;
        using (var bar = new ProgressBar("decoding"))
        {
            var options = new DecodeOptions
            {
                Channel = side,
                ChunkSamples = settings.Decode.ChunkSamples,
                Progress = bar.ForDecode(),
            };
            result = CaptureDecoder.Decode(capturePath, format, options: options);
            bar.Report(1);
        }

        using var readings = result;

        // Outputs are written only after the decode succeeded: all to temporary files first, then moved into place.
        var writers = new List<(string Path, Action<Stream> Write)>(2);
        if (jsonPath is not null)
        {
            writers.Add((jsonPath, stream => DecodeReport.WriteJson(stream, result)));
        }

        if (payloadPath is not null)
        {
            writers.Add((payloadPath, stream =>
            {
                foreach (var best in result.Best)
                {
                    stream.Write(best.Payload.AsSpan());
                }
            }));
        }

        Files.WriteAtomically(writers);
        DecodeReport.WriteTable(run.Output, result);
        return 0;
    }

    /// <summary>The channel a word names (the settings file's word is checked here, the command line's by the parser).</summary>
    public static ChannelChoice Channel(string? text) => text switch
    {
        null or "mix" => ChannelChoice.Mix,
        "left" => ChannelChoice.Left,
        "right" => ChannelChoice.Right,
        _ => throw new UsageException($"The option --channel must be left, right or mix, not '{text}'."),
    };
}
