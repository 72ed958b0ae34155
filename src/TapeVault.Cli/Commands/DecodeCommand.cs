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
        var settings = CliSettings.Load();
        var profile = Catalogs.Profile(args, settings);
        var channel = Channel(args.Value("channel") ?? settings.Decode.Channel);
        string? jsonPath = args.Value("json");
        string? payloadPath = args.Value("payload");
        args.RejectUnknown();

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

        Files.CheckOutputs(capture, outputs);

        DecodeResult result;
        using (var bar = new ProgressBar("decoding"))
        {
            var options = new DecodeOptions
            {
                Channel = channel,
                ChunkSamples = settings.Decode.ChunkSamples,
                Progress = bar.ForDecode(),
            };
            result = CaptureDecoder.Decode(capture, profile, options: options);
            bar.Report(1);
        }

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
        DecodeReport.WriteTable(output, result);
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
    /// <summary>The built-ins plus the folder named by --profiles, else the settings' folder when it exists.</summary>
    public static ProfileCatalog Load(CommandLine args, CliSettings settings)
    {
        string? folder = args.Value("profiles");
        if (folder is not null && !Directory.Exists(folder))
        {
            throw new UsageException($"The profiles folder does not exist: {folder}.");
        }

        return ProfileCatalog.WithUserFolder(folder ?? settings.ProfilesFolder);
    }

    /// <summary>The profile that --profile names.</summary>
    public static FormatProfile Profile(CommandLine args, CliSettings settings)
    {
        var catalog = Load(args, settings);
        string id = args.Required("profile");
        return catalog.TryGet(id, out var profile)
            ? profile
            : throw new UsageException($"Unknown profile '{id}'; run 'tapevault profiles' to list them.");
    }
}

internal static class Files
{
    /// <summary>
    /// The full path of an output folder as the user typed it, without a trailing separator ("files/" is the folder
    /// "files"), so that its parent and its name, and temporary names built beside it, are those of the folder itself.
    /// </summary>
    public static string OutputPath(string path) => Path.TrimEndingDirectorySeparator(Path.GetFullPath(path));

    /// <summary>An output file named by an option.</summary>
    public sealed record Output(string Option, string Path);

    /// <summary>
    /// Refuses outputs that cannot be written or must not be: a missing folder, a path that is a folder, the capture
    /// itself (an original is never written over), or two options naming one file.
    /// </summary>
    public static void CheckOutputs(string capture, IReadOnlyList<Output> outputs)
    {
        string captureFull = Path.GetFullPath(capture);
        var seen = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (var output in outputs)
        {
            string full = Path.GetFullPath(output.Path);
            string? folder = Path.GetDirectoryName(full);
            if (folder is null || !Directory.Exists(folder))
            {
                throw new UsageException($"The folder for {output.Path} (--{output.Option}) does not exist.");
            }

            if (Directory.Exists(full))
            {
                throw new UsageException($"The output {output.Path} (--{output.Option}) is a folder, not a file.");
            }

            if (string.Equals(full, captureFull, StringComparison.Ordinal))
            {
                throw new UsageException($"The output {output.Path} (--{output.Option}) is the capture itself, which is never written over.");
            }

            if (!seen.TryAdd(full, output.Option))
            {
                throw new UsageException($"--{seen[full]} and --{output.Option} name the same file, {output.Path}.");
            }
        }
    }

    /// <summary>Writes every file to a temporary file beside it, and only when all are written moves them into place.</summary>
    public static void WriteAtomically(IReadOnlyList<(string Path, Action<Stream> Write)> files)
    {
        var temporaries = new List<(string Temporary, string Full)>(files.Count);
        try
        {
            foreach (var (path, write) in files)
            {
                string full = Path.GetFullPath(path);
                string? folder = Path.GetDirectoryName(full);
                if (folder is null || !Directory.Exists(folder))
                {
                    throw new UsageException($"The folder for {path} does not exist.");
                }

                string temporary = Path.Combine(folder, $".{Path.GetFileName(full)}.{Environment.ProcessId}.tmp");
                temporaries.Add((temporary, full));
                using var stream = new FileStream(temporary, FileMode.CreateNew, FileAccess.Write);
                write(stream);
            }

            foreach (var (temporary, full) in temporaries)
            {
                File.Move(temporary, full, overwrite: true);
            }
        }
        finally
        {
            foreach (var (temporary, _) in temporaries)
            {
                if (File.Exists(temporary))
                {
                    File.Delete(temporary);
                }
            }
        }
    }
}
