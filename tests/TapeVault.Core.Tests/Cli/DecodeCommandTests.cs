using System.Globalization;
using System.Text.Json;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Cli;

/// <summary>Captures for the command-line tests, made once per class by minimodem and SoX.</summary>
public sealed class CliCaptures : IDisposable
{
    public CliCaptures()
    {
        // minimodem (an outside FSK modem) writes the text in the Kansas City Standard's tones, 300 baud, two stop bits.
        Mono = KcsCaptures.Write(Temp.Root, "mono", 300, 44_100, stopBits: 2);

        // SoX merges it with a silent channel, either side, into stereo captures.
        string silent = Temp.File("silent.wav");
        OutsideTool.Sox(Mono, silent, "vol", "0");
        SignalLeft = Temp.File("signal-left.wav");
        OutsideTool.Sox("-M", Mono, silent, SignalLeft);
        SignalRight = Temp.File("signal-right.wav");
        OutsideTool.Sox("-M", silent, Mono, SignalRight);
    }

    public OutsideTempFolder Temp { get; } = new();

    public string Mono { get; }

    public string SignalLeft { get; }

    public string SignalRight { get; }

    public void Dispose() => Temp.Dispose();
}

/// <summary>
/// The decode command's contract (README.md): exit 0 on a real decode; the JSON describes the capture and every
/// block; --payload holds the best payloads in order; --channel picks what is read.
/// </summary>
public sealed class DecodeCommandTests : IClassFixture<CliCaptures>
{
    private static readonly string[] Statuses = ["clean", "failed", "unchecked"];
    private readonly CliCaptures captures;

    public DecodeCommandTests(CliCaptures captures)
    {
        this.captures = captures;
    }

    [Fact]
    public void Decode_ExitsZero_AndTheJsonDescribesTheCaptureAsSha256sumAndSoxSeeIt()
    {
        string folder = captures.Temp.NewFolder("describe");
        string json = Path.Combine(folder, "out.json");

        var run = CliRun.Run("decode", captures.Mono, "--profile", "kcs-300", "--json", json);

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Equal(string.Empty, run.Error);
        using var document = JsonDocument.Parse(File.ReadAllBytes(json));
        var capture = document.RootElement.GetProperty("capture");

        // Outside references: GNU sha256sum for the hash, SoX's header reading for rate, channels and duration.
        Assert.Equal(OutsideTool.Sha256Sum(captures.Mono), capture.GetProperty("sha256").GetString());
        Assert.Equal(OutsideTool.SoxSampleRate(captures.Mono), capture.GetProperty("sampleRate").GetInt32());
        Assert.Equal(OutsideTool.SoxChannels(captures.Mono), capture.GetProperty("channels").GetInt32());
        Assert.Equal(OutsideTool.SoxDurationSeconds(captures.Mono), capture.GetProperty("durationSeconds").GetDouble(), 5);
    }

    [Fact]
    public void Decode_JsonListsBlocksAndBest_EachWithPositionSettingStatusConfidenceAndPayloadHex()
    {
        string folder = captures.Temp.NewFolder("blocks");
        string json = Path.Combine(folder, "out.json");

        var run = CliRun.Run("decode", captures.Mono, "--profile", "kcs-300", "--json", json);

        Assert.True(run.ExitCode == 0, run.ToString());
        using var document = JsonDocument.Parse(File.ReadAllBytes(json));
        var root = document.RootElement;
        var settingNames = root.GetProperty("settings").EnumerateArray().Select(s => s.GetString()!.Split(':')[0]).ToHashSet();
        var blocks = root.GetProperty("blocks").EnumerateArray().ToList();
        var best = root.GetProperty("best").EnumerateArray().ToList();
        Assert.NotEmpty(blocks);
        Assert.NotEmpty(best);
        foreach (var block in blocks.Concat(best))
        {
            Assert.True(block.GetProperty("position").GetInt32() >= 0);
            Assert.Contains(block.GetProperty("setting").GetString() ?? string.Empty, settingNames);
            Assert.Contains(block.GetProperty("status").GetString(), Statuses);
            Assert.InRange(block.GetProperty("confidence").GetDouble(), 0, 1);
            Assert.Matches("^([0-9a-f]{2})*$", block.GetProperty("payloadHex").GetString());

            // The reasons a reading is doubted, in the block stage's own words; a failed reading always has one.
            var doubts = block.GetProperty("doubts").EnumerateArray().Select(d => d.GetString()!).ToList();
            Assert.All(doubts, d => Assert.Matches("^[a-z]+(-[a-z]+)*$", d));
            if (block.GetProperty("status").GetString() == "failed")
            {
                Assert.NotEmpty(doubts);
            }
        }

        // One best block per position, each of them one of the blocks.
        var positions = best.Select(b => b.GetProperty("position").GetInt32()).ToList();
        Assert.Equal(positions.Distinct().Count(), positions.Count);
        foreach (var b in best)
        {
            Assert.Contains(blocks, c => c.GetProperty("position").GetInt32() == b.GetProperty("position").GetInt32()
                && c.GetProperty("setting").GetString() == b.GetProperty("setting").GetString()
                && c.GetProperty("payloadHex").GetString() == b.GetProperty("payloadHex").GetString());
        }
    }

    [Fact]
    public void Decode_PayloadFileIsTheBestPayloadsInOrder_AndForAMinimodemCaptureTheText()
    {
        string folder = captures.Temp.NewFolder("payload");
        string json = Path.Combine(folder, "out.json");
        string payload = Path.Combine(folder, "out.bin");

        var run = CliRun.Run("decode", captures.Mono, "--profile", "kcs-300", "--json", json, "--payload", payload);

        Assert.True(run.ExitCode == 0, run.ToString());
        using var document = JsonDocument.Parse(File.ReadAllBytes(json));
        string joined = string.Concat(document.RootElement.GetProperty("best").EnumerateArray()
            .OrderBy(b => b.GetProperty("position").GetInt32())
            .Select(b => b.GetProperty("payloadHex").GetString()));
        byte[] written = File.ReadAllBytes(payload);
        Assert.Equal(joined, KcsCaptures.Hex(written));

        // Outside reference: the bytes minimodem was given to send.
        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), KcsCaptures.Hex(written));
    }

    [Theory]
    [InlineData("left", "left", true)]
    [InlineData("left", "right", false)]
    [InlineData("left", "mix", true)]
    [InlineData("right", "right", true)]
    [InlineData("right", "left", false)]
    [InlineData("right", "mix", true)]
    public void Decode_ReadsTheChannelAskedFor(string signalSide, string channel, bool expectText)
    {
        string capture = signalSide == "left" ? captures.SignalLeft : captures.SignalRight;
        string folder = captures.Temp.NewFolder($"channel-{signalSide}-{channel}");
        string json = Path.Combine(folder, "out.json");
        string payload = Path.Combine(folder, "out.bin");

        var run = CliRun.Run("decode", capture, "--profile", "kcs-300", "--channel", channel, "--json", json, "--payload", payload);

        // A decode that finds nothing on a silent channel is still a decode: exit 0, an empty payload.
        Assert.True(run.ExitCode == 0, run.ToString());
        using var document = JsonDocument.Parse(File.ReadAllBytes(json));
        Assert.Equal(2, OutsideTool.SoxChannels(capture));
        Assert.Equal(2, document.RootElement.GetProperty("capture").GetProperty("channels").GetInt32());
        byte[] expected = expectText ? KcsCaptures.Text : [];
        Assert.Equal(KcsCaptures.Hex(expected), KcsCaptures.Hex(File.ReadAllBytes(payload)));
    }

    [Fact]
    public void Decode_PrintsOneRowPerBestPosition()
    {
        var run = CliRun.Run("decode", captures.Mono, "--profile", "kcs-300");

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Contains(string.Create(CultureInfo.InvariantCulture, $"{OutsideTool.SoxSampleRate(captures.Mono)} Hz, 1 ch"), run.Output);
        Assert.Contains("1 positions: 0 clean, 0 failed, 1 unchecked.", run.Output);
    }
}
