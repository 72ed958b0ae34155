using System.Globalization;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Merge;

/// <summary>
/// The stream merge on captures made outside the project: minimodem writes the Kansas City tones of two files (mark
/// 2400 Hz, space 1200 Hz, 8 data bits, two stop bits; BYTE, February 1976), SoX puts a lead-in of mark tone before
/// each, silence between them and, in one capture, a dropout. Two recordings of the same files need not leave the same
/// silence between them, so one straight line per capture cannot put both files of both captures on one timeline:
/// each reading must be placed on the others by its own characters, or its bytes fall between theirs. The outside
/// reference is the text minimodem was given, which its own receiver reads back.
/// </summary>
public sealed class StreamMergeOutsideTests(OutsideTempFolder temp, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    private const int Baud = 1200;
    private const int SampleRate = 48_000;

    [Fact]
    public void Stream_TwoRecordingsWithDifferentSilenceBetweenFiles_MergeToBothFilesExactly_AndTheDropoutIsFilled()
    {
        byte[] first = KcsCaptures.Text[..100];
        byte[] second = KcsCaptures.Text[100..];
        string firstTones = Tones("first", first);
        string secondTones = Tones("second", second);

        // Capture A: 0.7 s of silence between the files and a 30 ms dropout (SoX: the signal cut out, silence put in
        // its place) 0.6 s into the second file; capture B: 1.6 s of silence and no dropout.
        string secondA = temp.File("second-a.wav");
        string before = temp.File("second-a-before.wav");
        string after = temp.File("second-a-after.wav");
        OutsideTool.Sox(secondTones, before, "trim", "0", "0.6");
        OutsideTool.Sox(secondTones, after, "trim", "0.63");
        OutsideTool.Sox(before, Silence("dropout", 0.03), after, secondA);
        var image = Merged(
            Capture("capture-a", firstTones, 0.7, secondA),
            Capture("capture-b", firstTones, 1.6, secondTones));

        // Outside reference: the two files minimodem was given, each whole, in order, nothing missing. Capture A's
        // dropout is filled from capture B, and both captures read the rest alike.
        Assert.Equal([KcsCaptures.Hex(first), KcsCaptures.Hex(second)], image.Blocks.Select(x => KcsCaptures.Hex(x.Payload.AsSpan())));
        Assert.All(image.Blocks, x => Assert.Equal(RecoveryStatus.Voted, x.Status));
        Assert.Equal(2, image.Blocks[0].AgreeingCaptures);
    }

    [Fact]
    public void Stream_AFileOfOneByteRepeated_MergesToItsWrittenLength_WhereTheRecordingsLeaveDifferentSilenceAfterIt()
    {
        // The first file is zero fill: any four of its characters are the same four, so none says where along it a reading
        // lies, and a capture's reading of it can only be placed by where it begins and ends. (Zero frames only one way:
        // nine spaces, then the two stop bits.)
        byte[] first = new byte[60];
        byte[] second = KcsCaptures.Text[..100];
        string firstTones = Tones("fill", first);
        string secondTones = Tones("fill-second", second);

        // Capture A: 0.7 s of silence between the files; capture B: 0.8 s.
        var image = Merged(
            Capture("fill-capture-a", firstTones, 0.7, secondTones),
            Capture("fill-capture-b", firstTones, 0.8, secondTones));

        // Outside reference: the two files minimodem was given, each whole and no longer, read alike by both captures.
        Assert.Equal([KcsCaptures.Hex(first), KcsCaptures.Hex(second)], image.Blocks.Select(x => KcsCaptures.Hex(x.Payload.AsSpan())));
        Assert.All(image.Blocks, x => Assert.Equal(2, x.AgreeingCaptures));
    }

    /// <summary>
    /// A capture of two files made by SoX: a lead-in, the first file's tones, <paramref name="gap"/> seconds of silence,
    /// a lead-in, the second file's tones and 0.3 s of silence.
    /// </summary>
    private string Capture(string name, string firstTones, double gap, string secondTones)
    {
        string path = temp.File($"{name}.wav");
        OutsideTool.Sox(LeadIn(), firstTones, Silence($"{name}-gap", gap), LeadIn(), secondTones, Silence($"{name}-end", 0.3), path);
        return path;
    }

    /// <summary>Two captures decoded with the kcs-1200 profile and merged; the image's positions written to the test output.</summary>
    private TapeImage Merged(string a, string b)
    {
        var profile = ProfileCatalog.BuiltIn.Get("kcs-1200");
        var results = new[] { CaptureDecoder.Decode(a, profile), CaptureDecoder.Decode(b, profile) };
        var image = TapeMerger.Merge(results, [Path.GetFileName(a), Path.GetFileName(b)]);
        output.WriteLine(string.Join("\n", image.Blocks.Select(x => $"{x.Key} {x.Status} {x.Confidence:0.0000} agree {x.AgreeingCaptures}: {KcsCaptures.Hex(x.Payload.AsSpan())}")));
        return image;
    }

    /// <summary>minimodem's Kansas City tones of <paramref name="text"/>, checked by minimodem's own receiver.</summary>
    private string Tones(string name, byte[] text)
    {
        string path = temp.File($"{name}.minimodem.wav");
        OutsideTool.Run(
            OutsideTool.MinimodemPath,
            ["--tx", Baud.ToString(CultureInfo.InvariantCulture), "--mark", "2400", "--space", "1200", "--stopbits", "2", "-R", SampleRate.ToString(CultureInfo.InvariantCulture), "-f", path],
            text);
        Assert.Equal(KcsCaptures.Hex(text), KcsCaptures.Hex(OutsideTool.MinimodemReceive(path, Baud)));
        return path;
    }

    /// <summary>Half a second of mark tone (2400 Hz) made by SoX, as a tape's lead-in would be.</summary>
    private string LeadIn()
    {
        string path = temp.File("lead-in.wav");
        if (!File.Exists(path))
        {
            OutsideTool.Sox("-n", "-r", SampleRate.ToString(CultureInfo.InvariantCulture), "-b", "16", "-c", "1", path, "synth", "0.5", "sine", "2400", "vol", "0.9");
        }

        return path;
    }

    /// <summary>Silence of <paramref name="seconds"/> made by SoX.</summary>
    private string Silence(string name, double seconds)
    {
        string path = temp.File($"{name}.wav");
        OutsideTool.Sox("-n", "-r", SampleRate.ToString(CultureInfo.InvariantCulture), "-b", "16", "-c", "1", path, "trim", "0", seconds.ToString(CultureInfo.InvariantCulture));
        return path;
    }
}
