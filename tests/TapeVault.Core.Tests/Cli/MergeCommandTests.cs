using System.Globalization;
using System.Text.Json;
using TapeVault.Core.Image;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Cli;

/// <summary>
/// Two passes for the merge command, made by outside tools: minimodem writes text in the Kansas City Standard's
/// tones (300 baud, two stop bits) and SoX puts 0.2 s of silence into each of two copies at different points.
/// </summary>
public sealed class MergeCaptures : IDisposable
{
    public MergeCaptures()
    {
        string source = KcsCaptures.Write(Temp.Root, "merge-cli", 300, 44_100, stopBits: 2, amplitude: 0.5);
        First = WithSilence(source, 3.0);
        Second = WithSilence(source, 6.0);
    }

    public OutsideTempFolder Temp { get; } = new();

    public string First { get; }

    public string Second { get; }

    private string WithSilence(string source, double cut)
    {
        string output = Temp.File($"silence-{cut.ToString("0.0", CultureInfo.InvariantCulture)}.wav");
        OutsideTool.SoxSilence(source, output, cut, 0.2);
        return output;
    }

    public void Dispose() => Temp.Dispose();
}

/// <summary>The merge command's contract: exit 0 with the image, the JSON and the payload written; bad input refused before anything is written.</summary>
public sealed class MergeCommandTests : IClassFixture<MergeCaptures>
{
    private readonly MergeCaptures captures;

    public MergeCommandTests(MergeCaptures captures)
    {
        this.captures = captures;
    }

    [Fact]
    public void Merge_WritesTheImageJsonAndPayload_AndThePayloadIsTheTextMinimodemSent()
    {
        string folder = captures.Temp.NewFolder("merge-out");
        string image = Path.Combine(folder, "tape.tvimg");
        string json = Path.Combine(folder, "tape.json");
        string payload = Path.Combine(folder, "tape.bin");

        var run = CliRun.Run("merge", captures.First, captures.Second, "--profile", "kcs-300", "--image", image, "--json", json, "--payload", payload);

        Assert.True(run.ExitCode == 0, run.ToString());

        // Outside reference: the bytes minimodem was given; each pass alone lost some of them to SoX's silence.
        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), KcsCaptures.Hex(File.ReadAllBytes(payload)));
        // Each position names the pass that won it (which one depends on where each pass lost bytes).
        Assert.Matches(@"pass [12] ", run.Output);
        Assert.Contains("positions:", run.Output, StringComparison.Ordinal);

        using var document = JsonDocument.Parse(File.ReadAllBytes(json));
        var positions = document.RootElement.GetProperty("positions");
        Assert.True(positions.GetArrayLength() >= 1);
        foreach (var position in positions.EnumerateArray())
        {
            Assert.Contains(position.GetProperty("status").GetString(), new[] { "clean", "voted", "repaired", "missing" });
            Assert.InRange(position.GetProperty("confidence").GetDouble(), 0, 1);
            Assert.Matches("^[0-9a-f]*$", position.GetProperty("payloadHex").GetString());
            foreach (var source in position.GetProperty("provenance").EnumerateArray())
            {
                // GNU sha256sum names the captures the provenance points to.
                Assert.Contains(source.GetProperty("captureSha256").GetString(), new[] { OutsideTool.Sha256Sum(captures.First), OutsideTool.Sha256Sum(captures.Second) });
                Assert.False(string.IsNullOrEmpty(source.GetProperty("setting").GetString()));
            }
        }

        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), string.Concat(positions.EnumerateArray().Select(p => p.GetProperty("payloadHex").GetString())));

        // The image container reads back to the same positions.
        using var stream = File.OpenRead(image);
        var read = TapeImageContainer.Read(stream);
        Assert.Equal(positions.GetArrayLength(), read.Blocks.Length);
        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), string.Concat(read.Blocks.Select(b => b.PayloadHex)));
        Assert.Equal("kcs-300", read.ProfileId);
    }

    [Fact]
    public void Merge_WithoutAnImagePath_IsRefused()
    {
        var run = CliRun.Run("merge", captures.First, captures.Second, "--profile", "kcs-300");

        Assert.Equal(2, run.ExitCode);
        Assert.Contains("--image", Assert.Single(run.ErrorLines), StringComparison.Ordinal);
    }

    [Fact]
    public void Merge_ThatWouldWriteOverACapture_IsRefused_AndTouchesNothing()
    {
        string folder = captures.Temp.NewFolder("merge-refused");
        string json = Path.Combine(folder, "tape.json");
        string before = OutsideTool.Sha256Sum(captures.Second);

        var run = CliRun.Run("merge", captures.First, captures.Second, "--profile", "kcs-300", "--image", captures.Second, "--json", json);

        Assert.Equal(2, run.ExitCode);
        Assert.False(File.Exists(json));
        Assert.Equal(before, OutsideTool.Sha256Sum(captures.Second));
    }
}
