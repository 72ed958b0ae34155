using System.Globalization;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Bytes;

/// <summary>
/// A stream taken up inside a run of one byte repeated, where another phase of the bit stream frames as well. minimodem,
/// a general-purpose FSK modem, writes 0xE3 over and over in the Kansas City tones (mark 2400 Hz, space 1200 Hz, one
/// start bit, eight data bits, two stop bits; BYTE, February 1976); SoX cuts the recording a bit and a half into a
/// character, so that the first fall to space the decoder sees is not a start bit, and puts one bit of space tone where
/// a later stop bit was (a noise hit). Sent back to back, 0xE3 is the bits 0 11000111 11 over and over, and read from
/// its third bit on, the same stream is 0 00111110 11 over and over: 0x7C, well framed, its start and stop bits where
/// they must be. Nothing in the run tells the two apart, so the characters of a reading framed there are doubtful,
/// whether or not a hit broke the true framing once.
/// </summary>
public sealed class FrameAlignmentOutsideTests(OutsideTempFolder temp, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    private const int SampleRate = 48_000;
    private const byte Written = 0xE3;
    private const int Characters = 120;

    [Theory]
    [InlineData(1200)]
    [InlineData(300)]
    public void A_run_of_one_byte_framed_at_another_phase_is_not_confident_where_a_hit_broke_the_true_phase(int baud)
    {
        var profile = ProfileCatalog.BuiltIn.Get($"kcs-{baud}");
        byte[] written = Enumerable.Repeat(Written, Characters).ToArray();
        string tones = temp.File($"run-{baud}.minimodem.wav");
        // Outside reference: minimodem's own receiver reads the run it was given back from the file it wrote (WriteRun).
        KcsCaptures.WriteRun(tones, baud, SampleRate, written);

        // minimodem sends two bits of mark tone before the first start bit, then eleven bits a character, each bit a whole
        // number of samples. SoX cuts the first 15 bits (the second character's first two bits: its start bit and a data
        // 1), and puts one bit of space tone where the fourth character's first stop bit was.
        int bit = SampleRate / baud;
        const int cutBits = 15;
        int hitBit = 2 + (11 * 3) + 9 - cutBits;
        string cut = temp.File($"run-{baud}.cut.wav");
        OutsideTool.Sox(tones, cut, "trim", $"{cutBits * bit}s");
        string before = temp.File($"run-{baud}.before.wav");
        string hit = temp.File($"run-{baud}.hit.wav");
        string after = temp.File($"run-{baud}.after.wav");
        string capture = temp.File($"run-{baud}.wav");
        OutsideTool.Sox(cut, before, "trim", "0", $"{hitBit * bit}s");
        OutsideTool.Sox("-n", "-r", SampleRate.ToString(CultureInfo.InvariantCulture), "-b", "16", "-c", "1", hit, "synth", $"{bit}s", "sine", "1200", "vol", "0.9");
        OutsideTool.Sox(cut, after, "trim", $"{(hitBit + 1) * bit}s");
        OutsideTool.Sox(before, hit, after, capture);

        var result = CaptureDecoder.Decode(capture, profile);
        var readings = result.Candidates.Where(c => c.Payload.Length >= 10).ToList();
        output.WriteLine(string.Join("\n", readings.Select(c => $"{c.SettingName} {c.Payload.Length} B c={c.Confidence:0.0000} {c.PayloadHex[..Math.Min(24, c.PayloadHex.Length)]}")));
        Assert.NotEmpty(readings);

        // A reading of anything but the byte minimodem was given (the outside reference) is more likely wrong than
        // right: its frame stands on a phase that the run frames as well as the true one. (Before, the hit ruled the
        // true phase out and the reading of 0x7C and the hit's 0x5C stood at 0.94 at 1200 baud and 0.98 at 300.)
        Assert.All(readings, c => Assert.True(
            c.Payload.AsSpan().IndexOfAnyExcept(Written) < 0 || c.Confidence < 0.5,
            $"{c.SettingName}: {c.PayloadHex[..Math.Min(24, c.PayloadHex.Length)]}… at {c.Confidence:0.0000}"));
    }
}
