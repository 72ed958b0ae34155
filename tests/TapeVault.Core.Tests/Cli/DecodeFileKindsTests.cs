using System.Text.Json;
using TapeVault.Core.Tests.Audio;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Cli;

/// <summary>
/// tapevault decode takes Broadcast WAV and FLAC captures as it takes WAV: the same bytes come off minimodem's tape,
/// and what the file says about itself (bext) is shown for the curator, in the table and in the JSON.
/// </summary>
public sealed class DecodeFileKindsTests : IClassFixture<CliCaptures>
{
    private readonly CliCaptures captures;

    public DecodeFileKindsTests(CliCaptures captures)
    {
        this.captures = captures;
    }

    [Fact]
    public void Decode_OfABroadcastWav_ShowsWhatTheFileSays_AndReadsTheSameBytes()
    {
        string folder = captures.Temp.NewFolder("bwf");

        // The bext chunk is built from EBU Tech 3285's field table (see BroadcastWavTests.BextBody).
        byte[] bext = BroadcastWavTests.BextBody("Side B, pass 1", "K. Adeyemi", "", "2026-12-01", "10:00:00", 0, 1, new byte[64], null,
            "A=ANALOGUE,M=mono,T=Deck A;\r\n");
        string bwf = Path.Combine(folder, "side-b.bwf");
        File.WriteAllBytes(bwf, BroadcastWavTests.InsertBefore(File.ReadAllBytes(captures.Mono), "data", WavBytes.Chunk("bext", bext)));
        string json = Path.Combine(folder, "out.json");

        var run = CliRun.Run("decode", bwf, "--profile", "kcs-300", "--json", json);

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Contains("File says deck 'Deck A', operator 'K. Adeyemi', captured 2026-12-01", run.Output, StringComparison.Ordinal);
        Assert.Contains("coding history: A=ANALOGUE,M=mono,T=Deck A;", run.Output, StringComparison.Ordinal);
        using var document = JsonDocument.Parse(File.ReadAllBytes(json));
        var says = document.RootElement.GetProperty("capture").GetProperty("fileSays");
        Assert.Equal("Deck A", says.GetProperty("deck").GetString());
        Assert.Equal("Side B, pass 1", says.GetProperty("bext").GetProperty("description").GetString());

        // Outside reference: the text minimodem sent.
        Assert.Contains(KcsCaptures.Hex(KcsCaptures.Text), File.ReadAllText(json), StringComparison.Ordinal);
    }

    [Fact]
    public void Decode_OfAFlac_ReadsTheSameBytesAsTheWav()
    {
        string folder = captures.Temp.NewFolder("flac");
        string flac = Path.Combine(folder, "mono.flac");
        OutsideTool.Run(OutsideTool.FlacPath, ["--silent", "--force", "-8", "-o", flac, captures.Mono]);
        string json = Path.Combine(folder, "out.json");

        var run = CliRun.Run("decode", flac, "--profile", "kcs-300", "--json", json);

        Assert.True(run.ExitCode == 0, run.ToString());
        using var document = JsonDocument.Parse(File.ReadAllBytes(json));
        var capture = document.RootElement.GetProperty("capture");
        Assert.Equal("flac", capture.GetProperty("container").GetString());
        Assert.Equal(OutsideTool.Sha256Sum(flac), capture.GetProperty("sha256").GetString());
        Assert.False(capture.TryGetProperty("fixityFinding", out _));
        Assert.Contains(KcsCaptures.Hex(KcsCaptures.Text), File.ReadAllText(json), StringComparison.Ordinal);
    }
}
