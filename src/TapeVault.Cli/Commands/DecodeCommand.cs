using TapeVault.Core.Audio;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault decode CAPTURE.wav --profile ID [--channel left|right|mix] [--json OUT.json] [--payload OUT.bin]</summary>
public static class DecodeCommand
{
    public const string Usage = "decode CAPTURE.wav --profile ID [--channel left|right|mix] [--json OUT.json] [--payload OUT.bin] [--profiles DIR]";

    public static int Run(CommandLine args, TextWriter output)
    {
        ArgumentNullException.ThrowIfNull(args);
        if (args.Positional.Count != 1)
        {
            throw new UsageException($"Usage: tapevault {Usage}");
        }

        string capture = args.Positional[0];
        var catalog = Catalogs.Load(args.Value("profiles"));
        string profileId = args.Required("profile");
        if (!catalog.TryGet(profileId, out var profile))
        {
            throw new UsageException($"Unknown profile '{profileId}'; run 'tapevault profiles' to list them.");
        }

        var channel = Channel(args.Value("channel"));
        string? jsonPath = args.Value("json");
        string? payloadPath = args.Value("payload");
        args.RejectUnknown();

        DecodeResult result;
        using (var bar = new ProgressBar("decoding"))
        {
            var options = new DecodeOptions
            {
                Channel = channel,
                Progress = new Progress<DecodeProgress>(p => bar.Report(p.Fraction)),
            };
            result = CaptureDecoder.Decode(capture, profile, options: options);
            bar.Report(1);
        }

        DecodeReport.WriteTable(output, result);

        // Outputs are written only after the decode succeeded, each to a temporary file first.
        if (jsonPath is not null)
        {
            Files.WriteAtomically(jsonPath, stream => DecodeReport.WriteJson(stream, result));
        }

        if (payloadPath is not null)
        {
            Files.WriteAtomically(payloadPath, stream =>
            {
                foreach (var best in result.Best)
                {
                    stream.Write(best.Payload.AsSpan());
                }
            });
        }

        return 0;
    }

    public static ChannelChoice Channel(string? text) => text switch
    {
        null or "mix" => ChannelChoice.Mix,
        "left" => ChannelChoice.Left,
        "right" => ChannelChoice.Right,
        _ => throw new UsageException($"The option --channel must be left, right or mix, not '{text}'."),
    };
}

internal static class Catalogs
{
    public static ProfileCatalog Load(string? folder)
    {
        if (folder is not null && !Directory.Exists(folder))
        {
            throw new UsageException($"The profiles folder does not exist: {folder}.");
        }

        return ProfileCatalog.WithUserFolder(folder);
    }
}

internal static class Files
{
    public static void WriteAtomically(string path, Action<Stream> write)
    {
        string full = Path.GetFullPath(path);
        string? folder = Path.GetDirectoryName(full);
        if (folder is null || !Directory.Exists(folder))
        {
            throw new UsageException($"The folder for {path} does not exist.");
        }

        string temporary = Path.Combine(folder, $".{Path.GetFileName(full)}.{Environment.ProcessId}.tmp");
        try
        {
            using (var stream = new FileStream(temporary, FileMode.CreateNew, FileAccess.Write))
            {
                write(stream);
            }

            File.Move(temporary, full, overwrite: true);
        }
        finally
        {
            if (File.Exists(temporary))
            {
                File.Delete(temporary);
            }
        }
    }
}
