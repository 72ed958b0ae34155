using System.Globalization;
using System.Text.Json;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Cli;

/// <summary>The profiles and synth commands (README.md): the built-in profiles are listed, and synth writes WAVs that decode.</summary>
public sealed class ProfilesAndSynthCommandTests : IClassFixture<OutsideTempFolder>
{
    private readonly OutsideTempFolder temp;

    public ProfilesAndSynthCommandTests(OutsideTempFolder temp)
    {
        this.temp = temp;
    }

    [Fact]
    public void Profiles_ListsTheFourBuiltInProfileIds()
    {
        var run = CliRun.Run("profiles");

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Equal(string.Empty, run.Error);
        var ids = run.Output.Split('\n', StringSplitOptions.RemoveEmptyEntries).Skip(1).Select(l => l.Split(' ')[0]).ToList();
        Assert.Subset(ids.ToHashSet(), new HashSet<string> { "kcs-300", "kcs-1200", "orrin-80", "biphase-1200" });
        Assert.Equal(ProfileCatalog.BuiltIn.All.Select(p => p.Id).Order(StringComparer.Ordinal), ids.Order(StringComparer.Ordinal));
    }

    [Theory]
    [InlineData]
    [InlineData("transmogrify")]
    [InlineData("decode")]
    [InlineData("profiles", "--colour", "blue")]
    public void Command_ExitsTwoWithOneLineOnStandardError_ForAMissingOrWrongCommand(params string[] args)
    {
        var run = CliRun.Run(args);

        Assert.Equal(2, run.ExitCode);
        Assert.Single(run.ErrorLines);
        Assert.Equal(string.Empty, run.Output);
    }

    [Theory]
    [InlineData("kcs-300", 300)]
    [InlineData("kcs-1200", 1200)]
    public void Synth_WritesAKansasCityWavThatMinimodemAndDecodeBothRead(string profile, int baud)
    {
        string text = temp.File($"text-{profile}.txt");
        File.WriteAllBytes(text, KcsCaptures.Text);
        string wav = temp.File($"synth-{profile}.wav");

        var synth = CliRun.Run("synth", wav, "--profile", profile, "--file", text);

        Assert.True(synth.ExitCode == 0, synth.ToString());

        // Outside references: SoX reads the file as a mono WAV at the default rate (44.1 kHz), and minimodem, an FSK
        // modem that shares no code with TapeVault, reads exactly the text back from TapeVault's Kansas City tones.
        Assert.Equal("wav", OutsideTool.SoxInfo("-t", wav));
        Assert.Equal(44_100, OutsideTool.SoxSampleRate(wav));
        Assert.Equal(1, OutsideTool.SoxChannels(wav));
        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), KcsCaptures.Hex(OutsideTool.MinimodemReceive(wav, baud)));

        string payload = temp.File($"synth-{profile}.bin");
        var decode = CliRun.Run("decode", wav, "--profile", profile, "--payload", payload);
        Assert.True(decode.ExitCode == 0, decode.ToString());
        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), KcsCaptures.Hex(File.ReadAllBytes(payload)));
    }

    [Theory]
    [InlineData("kcs-300", 48_000, "pcm16")]
    [InlineData("kcs-1200", 48_000, "pcm8")]
    [InlineData("kcs-1200", 44_100, "float32")]
    [InlineData("kcs-1200", 22_050, "pcm16")]
    [InlineData("kcs-300", 22_050, "pcm24")]
    public void Synth_WritesTheRateAndEncodingAskedFor_AndDecodeReadsTheText(string profile, int sampleRate, string encoding)
    {
        string text = temp.File($"text-{profile}-{sampleRate}-{encoding}.txt");
        File.WriteAllBytes(text, KcsCaptures.Text);
        string wav = temp.File($"synth-{profile}-{sampleRate}-{encoding}.wav");

        var synth = CliRun.Run("synth", wav, "--profile", profile, "--file", text,
            "--rate", sampleRate.ToString(CultureInfo.InvariantCulture), "--encoding", encoding);

        Assert.True(synth.ExitCode == 0, synth.ToString());

        // Outside reference: SoX's reading of the header.
        Assert.Equal(sampleRate, OutsideTool.SoxSampleRate(wav));
        var (bits, soxEncoding) = encoding switch
        {
            "pcm8" => ("8", "Unsigned Integer PCM"),
            "pcm16" => ("16", "Signed Integer PCM"),
            "pcm24" => ("24", "Signed Integer PCM"),
            _ => ("32", "Floating Point PCM"),
        };
        Assert.Equal(bits, OutsideTool.SoxInfo("-b", wav));
        Assert.Equal(soxEncoding, OutsideTool.SoxInfo("-e", wav));

        // Outside reference: at 22.05 kHz a sample step is longer than a read-back pulse, and the channel model must
        // still write tones that minimodem reads back exactly.
        if (sampleRate == 22_050)
        {
            int baud = profile == "kcs-300" ? 300 : 1200;
            Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), KcsCaptures.Hex(OutsideTool.MinimodemReceive(wav, baud)));
        }

        string payload = temp.File($"synth-{profile}-{sampleRate}-{encoding}.bin");
        var decode = CliRun.Run("decode", wav, "--profile", profile, "--payload", payload);
        Assert.True(decode.ExitCode == 0, decode.ToString());
        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), KcsCaptures.Hex(File.ReadAllBytes(payload)));
    }

    [Fact]
    public void Synth_WritesABiphaseWavWhoseBlocksDecodeClean()
    {
        // A round trip (no outside reference reads this format): synth, then decode, must give clean blocks that
        // hold the file; the CRC in every block is what says they are right.
        string text = temp.File("text-biphase.txt");
        File.WriteAllBytes(text, KcsCaptures.Text);
        string wav = temp.File("synth-biphase.wav");
        string json = temp.File("synth-biphase.json");
        string payload = temp.File("synth-biphase.bin");

        var synth = CliRun.Run("synth", wav, "--profile", "biphase-1200", "--file", text, "--snr", "30");
        var decode = CliRun.Run("decode", wav, "--profile", "biphase-1200", "--json", json, "--payload", payload);

        Assert.True(synth.ExitCode == 0, synth.ToString());
        Assert.True(decode.ExitCode == 0, decode.ToString());
        using var document = JsonDocument.Parse(File.ReadAllBytes(json));
        var best = document.RootElement.GetProperty("best").EnumerateArray().ToList();
        Assert.NotEmpty(best);
        Assert.All(best, b => Assert.Equal("clean", b.GetProperty("status").GetString()));
        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), KcsCaptures.Hex(File.ReadAllBytes(payload)));
    }

    [Fact]
    public void Synth_RefusesAnEmptyFileWhereTheLengthFieldReadsAStoredZeroAsAFullBlock()
    {
        // one-cycle-bits' length field reads 0 as 256 (the format-language issue's description of the family), so no
        // block can say it is empty: a usage error (exit 2, one line) rather than a capture that reads back 256 bytes.
        string empty = temp.File("empty.bin");
        File.WriteAllBytes(empty, []);
        string wav = temp.File("synth-empty.wav");

        var synth = CliRun.Run("synth", wav, "--profile", "one-cycle-bits", "--file", empty);

        Assert.True(synth.ExitCode == 2, synth.ToString());
        Assert.Single(synth.ErrorLines);
        Assert.Contains("cannot write an empty file", synth.Error, StringComparison.Ordinal);
        Assert.False(File.Exists(wav));
    }
}
