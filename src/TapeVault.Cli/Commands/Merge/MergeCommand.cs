using System.CommandLine;
using System.Globalization;
using System.Text.Json;
using System.Text.Json.Serialization;
using TapeVault.Core.Decoding;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Text;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault merge CAPTURE1.wav CAPTURE2.wav … --profile ID --out OUT.tvimg: several captures of one tape into one tape image.</summary>
public sealed class MergeCommand : CliCommand
{
    private readonly Argument<string[]> captures = new("CAPTURE.wav") { Description = "the captures of one tape (WAV or FLAC files), each a pass", Arity = ArgumentArity.OneOrMore };
    private readonly Option<string> profile = CommonOptions.Profile();
    private readonly Option<string> image = CommonOptions.Out("OUT.tvimg", "the tape image to write (required)", "--image");
    private readonly Option<string> json = new("--json") { HelpName = "OUT.json", Description = "write the merge report as JSON; default: none" };
    private readonly Option<string> payload = new("--payload") { HelpName = "OUT.bin", Description = "write the merged payload bytes; default: none" };
    private readonly Option<string> channel = CommonOptions.Channel();
    private readonly Option<string> profiles = CommonOptions.ProfilesFolder();

    public MergeCommand()
        : base("merge", "Merge several captures of one tape into a tape image (.tvimg), block by block.")
    {
        image.Required = true;
        Arguments.Add(captures);
        Options.Add(profile);
        Options.Add(image);
        Options.Add(json);
        Options.Add(payload);
        Options.Add(channel);
        Options.Add(profiles);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        var output = run.Output;
        var captures = run.Value(this.captures)!;
        var settings = CliSettings.Load();
        var profile = Catalogs.Profile(run.Value(this.profile)!, run.Value(profiles), settings);
        var channel = DecodeCommand.Channel(run.Value(this.channel) ?? settings.Decode.Channel);
        string imagePath = run.Value(image)!;
        string? jsonPath = run.Value(json);
        string? payloadPath = run.Value(payload);

        if (captures.Distinct(StringComparer.Ordinal).Count() != captures.Length)
        {
            throw new UsageException("A capture is named twice; each pass is merged once.");
        }

        var outputs = new List<Files.Output> { new("out", imagePath) };
        if (jsonPath is not null)
        {
            outputs.Add(new Files.Output("json", jsonPath));
        }

        if (payloadPath is not null)
        {
            outputs.Add(new Files.Output("payload", payloadPath));
        }

        foreach (string capture in captures)
        {
            Files.CheckOutputs(capture, outputs);
        }

        // Every capture is decoded with the default bank; one bar runs over all of them.
        var results = new List<DecodeResult>(captures.Length);
        using var readings = new Disposables(results);
        using (var bar = new ProgressBar($"decoding {captures.Length} captures"))
        {
            for (int i = 0; i < captures.Length; i++)
            {
                int done = i;
                var options = new DecodeOptions
                {
                    Channel = channel,
                    ChunkSamples = settings.Decode.ChunkSamples,
                    Progress = new Progress(bar, done, captures.Length),
                };
                results.Add(CaptureDecoder.Decode(captures[i], profile, options: options));
            }

            bar.Report(1);
        }

        var merged = TapeMerger.Merge(results, [.. captures.Select(Path.GetFileName).Select(n => n ?? string.Empty)]);

        // Outputs are written only after every decode and the merge succeeded: to temporary files, then into place.
        var writers = new List<(string Path, Action<Stream> Write)> { (imagePath, stream => TapeImageContainer.Write(stream, merged)) };
        if (jsonPath is not null)
        {
            writers.Add((jsonPath, stream => WriteJson(stream, merged)));
        }

        if (payloadPath is not null)
        {
            writers.Add((payloadPath, stream =>
            {
                foreach (var block in merged.Blocks)
                {
                    stream.Write(block.Payload.AsSpan());
                }
            }));
        }

        Files.WriteAtomically(writers);
        WriteTable(output, merged);
        return 0;
    }

    public static string Status(RecoveryStatus status) => Vocabulary.Of(status).Name;

    /// <summary>The pass (1-based, in the order the captures were given) that a reading came from.</summary>
    private static int PassOf(TapeImage image, BlockProvenance source)
    {
        for (int i = 0; i < image.Captures.Length; i++)
        {
            if (image.Captures[i].CaptureSha256 == source.CaptureSha256)
            {
                return i + 1;
            }
        }

        return 0;
    }

    public static void WriteTable(TextWriter output, TapeImage image)
    {
        ArgumentNullException.ThrowIfNull(output);
        ArgumentNullException.ThrowIfNull(image);
        for (int i = 0; i < image.Captures.Length; i++)
        {
            var c = image.Captures[i];
            output.WriteLine($"Pass {i + 1}  {c.CaptureSha256[..16]}…  {c.FileName}, {c.SampleRate} Hz, {c.DurationSeconds:0.0} s");
        }

        output.WriteLine($"Profile {image.ProfileId}");
        output.WriteLine();
        output.WriteLine($"{"pos",4}  {"block",-16} {"status",-9} {"confidence",10}  {"bytes",5}  {"won by",-18} {"agree",5}  conflict");
        foreach (var block in image.Blocks)
        {
            string winner = block.Sources.IsDefaultOrEmpty || block.Status == RecoveryStatus.Missing
                ? "-"
                : $"pass {PassOf(image, block.Sources[0])} {block.Sources[0].SettingName}";
            output.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{block.Position,4}  {Truncate(block.Key, 16),-16} {Status(block.Status),-9} {block.Confidence,10:0.0000}  {block.Payload.Length,5}  {Truncate(winner, 18),-18} {block.AgreeingCaptures,5}  {(block.Conflict ? "yes" : "no")}"));
        }

        output.WriteLine();
        output.WriteLine($"{image.Blocks.Length} positions: {image.Count(RecoveryStatus.Clean)} clean, {image.Count(RecoveryStatus.Voted)} voted, {image.Count(RecoveryStatus.Repaired)} repaired, {image.Count(RecoveryStatus.Missing)} missing; {image.Blocks.Count(b => b.Conflict)} with conflicting readings.");
        foreach (var file in image.Files)
        {
            output.WriteLine($"File {file.Name}: {file.Length} bytes in {file.BlockCount} blocks from position {file.FirstPosition}, {(file.Complete ? "complete" : "incomplete")}.");
        }

        output.WriteLine("confidence: the estimated chance that the position's payload is right (0 for missing). won by: the pass and");
        output.WriteLine("detector setting of the chosen reading. agree: captures whose valid readings hold the same bytes.");
    }

    /// <summary>The merge report as JSON (the shape `--json` has always written; records below, camelCase).</summary>
    public static void WriteJson(Stream stream, TapeImage image)
    {
        ArgumentNullException.ThrowIfNull(image);
        ReportSource Source(BlockProvenance s) =>
            new(PassOf(image, s), s.CaptureSha256, s.SettingName, s.CodeVersion, s.StartSeconds, s.Confidence);

        var report = new MergeReport(
            image.ProfileId,
            image.CodeVersion,
            image.CreatedUtc,
            [.. image.Captures.Select(c => new ReportCapture(c.FileName, c.CaptureSha256, c.SampleRate, c.Channels, c.DurationSeconds))],
            [.. image.Blocks.Select(block => new ReportPosition(
                block.Position,
                block.Key,
                Status(block.Status),
                block.Confidence,
                Convert.ToHexStringLower(block.Header.AsSpan()),
                block.PayloadHex,
                block.AgreeingCaptures,
                block.Conflict,
                [.. block.Sources.Select(Source)],
                [.. block.ConflictingPayloads.Select(loser => new ReportConflict(
                    Convert.ToHexStringLower(loser.Payload.AsSpan()), loser.AgreeingCaptures, Source(loser.Source)))]))],
            [.. image.Files.Select(f => new ReportFile(f.Name, f.Length, f.FirstPosition, f.BlockCount, f.Complete))]);
        JsonSerializer.Serialize(stream, report, MergeReportJson.Default.MergeReport);
    }

    private static string Truncate(string text, int length) => text.Length <= length ? text : string.Concat(text.AsSpan(0, length - 1), "…");

    /// <summary>One capture's decode progress as its share of the whole bar.</summary>
    private sealed class Progress(ProgressBar bar, int index, int count) : IProgress<DecodeProgress>
    {
        public void Report(DecodeProgress value) => bar.Report((index + value.Fraction) / count);
    }
}

internal sealed record MergeReport(
    string Profile,
    string CodeVersion,
    DateTimeOffset CreatedUtc,
    IReadOnlyList<ReportCapture> Captures,
    IReadOnlyList<ReportPosition> Positions,
    IReadOnlyList<ReportFile> Files);

internal sealed record ReportCapture(string File, string Sha256, int SampleRate, int Channels, double DurationSeconds);

internal sealed record ReportPosition(
    int Position,
    string Key,
    string Status,
    double Confidence,
    string HeaderHex,
    string PayloadHex,
    int AgreeingCaptures,
    bool Conflict,
    IReadOnlyList<ReportSource> Provenance,
    IReadOnlyList<ReportConflict> ConflictingReadings);

internal sealed record ReportSource(int Pass, string CaptureSha256, string Setting, string CodeVersion, double StartSeconds, double Confidence);

internal sealed record ReportConflict(string PayloadHex, int AgreeingCaptures, ReportSource Source);

internal sealed record ReportFile(string Name, long Length, int FirstPosition, int BlockCount, bool Complete);

[JsonSourceGenerationOptions(PropertyNamingPolicy = JsonKnownNamingPolicy.CamelCase, WriteIndented = true)]
[JsonSerializable(typeof(MergeReport))]
internal sealed partial class MergeReportJson : JsonSerializerContext;

/// <summary>Disposes every decode result of a list (each owns the spool its readings are read back from).</summary>
internal sealed class Disposables(List<DecodeResult> results) : IDisposable
{
    public void Dispose()
    {
        foreach (var result in results)
        {
            result.Dispose();
        }
    }
}
