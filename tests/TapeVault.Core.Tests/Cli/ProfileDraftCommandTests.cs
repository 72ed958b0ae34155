using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Cli;

/// <summary>
/// tapevault profile draft and profile check on a capture in the Kansas City Standard's 1200-baud tones and framing
/// (BYTE, February 1976: a 0 is 1200 Hz, a 1 is 2400 Hz, one start bit, eight data bits least significant first,
/// two stop bits), written 4 % fast: the draft names the family, the tones as the tape plays them and the framing.
/// </summary>
public sealed class ProfileDraftCommandTests(OutsideTempFolder folder) : IClassFixture<OutsideTempFolder>
{
    [Fact]
    public void Draft_then_check_reads_the_capture_it_came_from()
    {
        string capture = folder.File("kcs.wav");
        var text = "TEN LINES OF CLUB NEWS, WRITTEN FOR THE DRAFT COMMAND TO READ BACK.\n"u8.ToArray();
        CaptureSynthesizer.Write(capture, ProfileCatalog.BuiltIn.Get("kcs-1200"), [new TapeFile("NEWS", [.. Enumerable.Repeat(text, 4).SelectMany(t => t)])], new ChannelDamage { Speed = 1.04, SnrDb = 30, Seed = 3 });
        string draftPath = folder.File("drafted.json");
        var drafted = CliRun.Run("profile", "draft", capture, "--out", draftPath);
        Assert.True(drafted.ExitCode == 0, drafted.ToString());
        Assert.Contains("GUESS", drafted.Output, StringComparison.Ordinal);
        var profile = ProfileLoader.Load(draftPath);
        Assert.True(File.Exists(Path.ChangeExtension(draftPath, ".findings.json")));

        // BYTE, February 1976: space 1200 Hz, mark 2400 Hz, 1200 baud here; played 4 % fast they read 4 % high.
        Assert.Equal(FormatFamily.Fsk, profile.Family);
        Assert.InRange(profile.Fsk!.MarkHz, 2400 * 1.02, 2400 * 1.06);
        Assert.InRange(profile.Fsk.SpaceHz, 1200 * 1.02, 1200 * 1.06);
        Assert.InRange(profile.Fsk.Baud, 1200 * 1.02, 1200 * 1.06);
        Assert.Equal("0", profile.Framing.StartBits);
        Assert.Equal(Parity.None, profile.Framing.Parity);
        Assert.Equal(BitOrder.LsbFirst, profile.Framing.BitOrder);

        var check = CliRun.Run("profile", "check", draftPath, "--against", capture);
        Assert.True(check.ExitCode == 0, check.ToString());
        Assert.Contains("1 block position(s)", check.Output, StringComparison.Ordinal);

        // The demo's pulse-width profile does not read FSK: the check says so and exits 1.
        var wrong = CliRun.Run("profile", "check", "orrin-80", "--against", capture);
        Assert.Equal(1, wrong.ExitCode);
        Assert.Contains("No block found", wrong.Output, StringComparison.Ordinal);
    }
}
