using System.Globalization;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Bytes;

/// <summary>
/// A stream whose first start bit fell into a dropout at the end of its lead-in. minimodem, a general-purpose FSK modem,
/// writes 0x9B over and over in the Kansas City tones (mark 2400 Hz, space 1200 Hz, one start bit, eight data bits, two
/// stop bits; BYTE, February 1976); SoX puts a second of mark tone before it and turns the first character's start bit
/// and first two data bits down by 40 dB (a dropout). Outside a block a loss of carrier does not end the lead-in, so
/// the first fall after the dropout, the first character's third bit, follows a lead-in as a start bit would. Sent back
/// to back, 0x9B is the bits 0 11011001 11 over and over, and read from its third bit on, the same stream is
/// 0 11001110 11: 0x73, well framed. The mark before that fall is not a whole character of unbroken mark, so nothing
/// confirms the fall as the first start bit, and in a run of one byte nothing after it does either.
/// </summary>
public sealed class LeadInBreakOutsideTests(OutsideTempFolder temp, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    private const int SampleRate = 48_000;
    private const byte Written = 0x9B;
    private const int Characters = 60;

    [Theory]
    [InlineData(300)]
    [InlineData(1200)]
    public void A_run_of_one_byte_framed_after_a_dropout_at_the_end_of_the_lead_in_is_not_confident(int baud)
    {
        var profile = ProfileCatalog.BuiltIn.Get($"kcs-{baud}");
        byte[] written = Enumerable.Repeat(Written, Characters).ToArray();
        string rate = SampleRate.ToString(CultureInfo.InvariantCulture);
        string tones = temp.File($"break-{baud}.minimodem.wav");
        // Outside reference: minimodem's own receiver reads the run it was given back from the file it wrote (WriteRun).
        KcsCaptures.WriteRun(tones, baud, SampleRate, written);

        // minimodem sends two bits of mark tone before the first start bit, each bit a whole number of samples. SoX: a
        // second of mark tone first, then those two bits, then the start bit and two data bits 40 dB down, then the rest.
        int bit = SampleRate / baud;
        string leadIn = temp.File($"break-{baud}.lead.wav");
        string head = temp.File($"break-{baud}.head.wav");
        string faded = temp.File($"break-{baud}.faded.wav");
        string rest = temp.File($"break-{baud}.rest.wav");
        string capture = temp.File($"break-{baud}.wav");
        OutsideTool.Sox("-n", "-r", rate, "-b", "16", "-c", "1", leadIn, "synth", "1", "sine", "2400", "vol", "0.9");
        OutsideTool.Sox(tones, head, "trim", "0", $"{2 * bit}s");
        OutsideTool.Sox(tones, faded, "trim", $"{2 * bit}s", $"{3 * bit}s", "vol", "0.01");
        OutsideTool.Sox(tones, rest, "trim", $"{5 * bit}s");
        OutsideTool.Sox(leadIn, head, faded, rest, capture);

        var result = CaptureDecoder.Decode(capture, profile);
        var readings = result.Candidates.Where(c => c.Payload.Length >= 10).ToList();
        output.WriteLine(string.Join("\n", readings.Select(c => $"{c.SettingName} {c.StartSeconds:0.000} {c.Payload.Length} B c={c.Confidence:0.0000} {c.PayloadHex[..Math.Min(24, c.PayloadHex.Length)]}")));
        Assert.NotEmpty(readings);

        // A reading of anything but the byte minimodem was given (the outside reference) is more likely wrong than
        // right: its frame stands on a phase of the run that nothing confirmed. (Before, the fall after the dropout was
        // confirmed by the lead-in before it, and the reading of 0x73 stood at 0.99 or more.)
        Assert.All(readings, c => Assert.True(
            c.Payload.AsSpan().IndexOfAnyExcept(Written) < 0 || c.Confidence < 0.5,
            $"{c.SettingName}: {c.PayloadHex[..Math.Min(24, c.PayloadHex.Length)]}… at {c.Confidence:0.0000}"));
    }
}
