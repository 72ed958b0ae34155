using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// minimodem, a general-purpose software FSK modem, writes a stream with almost no lead-in (a couple of bits of mark
/// tone before the first start bit). A Kansas City stream (BYTE, February 1976: no blocks, no checksum) must be read
/// from its first well-framed characters, not from the first place a tenth of a second of mark tone was heard; a
/// missing lead-in lowers the confidence of the first characters only. minimodem is the outside reference: the text
/// it was given, which its own receiver reads back from the same file.
/// </summary>
public sealed class StreamWithoutLeadInTests(OutsideTempFolder temp, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    [Theory]
    [InlineData(300, 48_000)]
    [InlineData(300, 44_100)]
    [InlineData(1200, 48_000)]
    [InlineData(1200, 44_100)]
    public void A_stream_written_by_minimodem_with_no_lead_in_decodes_to_exactly_its_text(int baud, int sampleRate)
    {
        // minimodem with the Kansas City tones (mark 2400 Hz, space 1200 Hz) and framing (8 data bits, two stop bits),
        // nothing in front: its own receiver reads the text back from the file.
        string capture = KcsCaptures.WriteTones(temp.Root, $"no-lead-in-{baud}-{sampleRate}", baud, sampleRate, stopBits: 2);

        var result = CaptureDecoder.Decode(capture, ProfileCatalog.BuiltIn.Get($"kcs-{baud}"));
        output.WriteLine(string.Join("; ", result.Candidates.Select(c => $"{c.SettingName} {c.StartSeconds:0.000}-{c.EndSeconds:0.000} s {c.Payload.Length} B c={c.Confidence:0.000}")));

        // Outside reference: the text minimodem was given, every byte of it.
        var best = Assert.Single(result.Best);
        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), best.PayloadHex);
        Assert.Equal(BlockStatus.Unchecked, best.Status);

        // The first character stands on a start bit no lead-in confirmed: it carries a framing doubt. Once the
        // characters have ruled out every other framing (the text opens with capitals and spaces, which no frame a
        // few bits off survives), the rest carry none beyond their decisions.
        Assert.True(best.ByteErrorOdds[0] >= 0.05f, $"first character's error odds {best.ByteErrorOdds[0]}");
        float worstLater = best.ByteErrorOdds.Skip(20).Max();
        Assert.True(worstLater < 0.01f, $"a character after the twentieth has error odds {worstLater}");
        // Calibrated (kcs-300 unchecked readings of this model confidence were right 99 % of the time on tuning
        // seeds), it shows the doubt of its unproven start: short of certainty.
        Assert.InRange(best.Confidence, 0.5, 0.995);
    }
}
