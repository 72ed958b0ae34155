using System.Globalization;
using TapeVault.Core.Bytes;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// The confidence of a Kansas City stream (BYTE, February 1976: no blocks, no checksum) where its signal breaks off.
/// minimodem, a general-purpose software FSK modem, writes known text; SoX puts silence in place of the tape for a
/// while (a full dropout). What a capture read up to the break and after it is right or not by the text minimodem was
/// given, which its own receiver reads back from the same file. A character at the edge of what was read is doubted
/// by the evidence the decoder has there (its decisions, the baud), not by one constant for every rate.
/// </summary>
public sealed class StreamEdgeConfidenceTests(OutsideTempFolder temp, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    [Theory]
    [InlineData(300, 2.2, 0.030)]
    [InlineData(1200, 1.8, 0.030)]
    [InlineData(1200, 2.3, 0.012)]
    public void Segments_one_capture_read_cleanly_on_both_sides_of_a_dropout_are_as_sure_as_their_edge_decisions(int baud, double cut, double silence)
    {
        var profile = ProfileCatalog.BuiltIn.Get($"kcs-{baud}");
        string source = KcsCaptures.Write(temp.Root, $"edge-{baud}", baud, 48_000, stopBits: 2, amplitude: 0.5);
        string damaged = WithSilence(source, $"edge-{baud}-{cut.ToString("0.0", CultureInfo.InvariantCulture)}", cut, silence);
        string text = KcsCaptures.Hex(KcsCaptures.Text);

        var result = CaptureDecoder.Decode(damaged, profile);
        var image = TapeMerger.Merge([result], [Path.GetFileName(damaged)]);
        output.WriteLine(string.Join("; ", image.Blocks.Select(b => $"{b.Key} {b.Status} {b.Payload.Length} B c={b.Confidence:0.0000}")));

        // The silence took some characters: the rest is two segments around a missing stretch.
        var read = image.Blocks.Where(b => b.Status != RecoveryStatus.Missing).ToList();
        Assert.Equal(2, read.Count);
        Assert.Contains(image.Blocks, b => b.Status == RecoveryStatus.Missing);

        // Outside reference: the text minimodem was given. Each segment is a stretch of it where it lies on the tape.
        Assert.StartsWith(KcsCaptures.Hex(read[0].Payload.AsSpan()), text, StringComparison.Ordinal);
        Assert.EndsWith(KcsCaptures.Hex(read[1].Payload.AsSpan()), text, StringComparison.Ordinal);

        foreach (var segment in read)
        {
            // One capture alone carried each segment, and its characters at the break were decided cleanly: the
            // segment is as sure as those decisions make it. A constant doubt of 0.15 on each edge character held
            // every such segment to at most 0.85² = 0.72, however cleanly the edges were read, at either baud.
            var reading = result.Candidates.Where(c => !c.Payload.IsEmpty).MinBy(c => Math.Abs(c.ByteSeconds[0] - segment.Sources[0].StartSeconds))!;
            float edge = Math.Min(reading.ByteMargins[0], reading.ByteMargins[^1]);
            double edgeDoubt = CharacterEdge.Error(edge, baud);
            output.WriteLine($"{segment.Key}: edge margins {reading.ByteMargins[0]:0.000} / {reading.ByteMargins[^1]:0.000}, edge doubt {edgeDoubt:0.0000}");
            Assert.True(segment.Confidence >= Math.Pow(1 - edgeDoubt, 2) * 0.97, $"{segment.Key}: confidence {segment.Confidence:0.0000} below its edges' {Math.Pow(1 - edgeDoubt, 2):0.0000}");
            Assert.True(segment.Confidence > 0.9, $"{segment.Key}: confidence {segment.Confidence:0.0000}");
        }
    }

    [Fact]
    public void The_doubt_of_an_edge_character_follows_the_baud_and_its_decisions()
    {
        // A transient of fixed length on tape fills four times as much of a bit at 1200 baud as at 300: at equal
        // decisions the odds of an invented edge character are four times as high.
        double odds300 = CharacterEdge.Error(0.3, 300) / (1 - CharacterEdge.Error(0.3, 300));
        double odds1200 = CharacterEdge.Error(0.3, 1200) / (1 - CharacterEdge.Error(0.3, 1200));
        Assert.Equal(4.0, odds1200 / odds300, 6);

        // A cleanly decided edge character is near certain; one with a weak decision is not.
        Assert.True(CharacterEdge.Error(1.0, 1200) < 0.001);
        Assert.True(CharacterEdge.Error(0.1, 1200) > 0.5);
    }

    /// <summary>SoX cuts the capture at <paramref name="cut"/> seconds and puts <paramref name="seconds"/> of silence in place of what followed.</summary>
    private string WithSilence(string source, string name, double cut, double seconds)
    {
        string before = temp.File($"{name}.before.wav");
        string after = temp.File($"{name}.after.wav");
        string gap = temp.File($"{name}.gap.wav");
        string output = temp.File($"{name}.wav");
        OutsideTool.Sox(source, before, "trim", "0", cut.ToString(CultureInfo.InvariantCulture));
        OutsideTool.Sox(source, after, "trim", (cut + seconds).ToString(CultureInfo.InvariantCulture));
        OutsideTool.Sox("-n", "-r", "48000", "-b", "16", "-c", "1", gap, "trim", "0", seconds.ToString(CultureInfo.InvariantCulture));
        OutsideTool.Sox(before, gap, after, output);
        return output;
    }
}
