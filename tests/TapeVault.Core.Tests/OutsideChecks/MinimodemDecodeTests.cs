using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.OutsideChecks;

/// <summary>
/// minimodem, a general-purpose software FSK modem, writes known text in the Kansas City Standard's tones; TapeVault
/// must read back exactly those bytes. The profile values under test are those of the published standard (BYTE,
/// February 1976): 300 baud, a 0 is four cycles of 1200 Hz and a 1 eight cycles of 2400 Hz, one start bit (0), eight
/// data bits least significant first, two stop bits (1); and its 1200-baud variant with the same tones and framing.
/// </summary>
public sealed class MinimodemDecodeTests : IClassFixture<OutsideTempFolder>
{
    private readonly OutsideTempFolder temp;

    public MinimodemDecodeTests(OutsideTempFolder temp)
    {
        this.temp = temp;
    }

    [Theory]
    [InlineData("kcs-300", 300.0, 4.0, 8.0)]
    [InlineData("kcs-1200", 1200.0, 1.0, 2.0)]
    public void KansasCityProfiles_HaveThePublishedParameters(string id, double baud, double cyclesPerZero, double cyclesPerOne)
    {
        // Values from the published standard (Kansas City Standard, BYTE, February 1976): 300 baud, a 0 is four
        // cycles of 1200 Hz and a 1 eight cycles of 2400 Hz, start bit 0, 8 data bits LSB first, 2 stop bits 1. The
        // 1200-baud variant keeps the tones and the framing at four times the bit rate (one and two cycles).
        var profile = ProfileCatalog.BuiltIn.Get(id);
        Assert.Equal(FormatFamily.Fsk, profile.Family);
        Assert.NotNull(profile.Fsk);
        Assert.Equal(2400.0, profile.Fsk.MarkHz);
        Assert.Equal(1200.0, profile.Fsk.SpaceHz);
        Assert.Equal(baud, profile.Fsk.Baud);
        Assert.Equal(cyclesPerZero, profile.Fsk.SpaceHz / profile.Fsk.Baud);
        Assert.Equal(cyclesPerOne, profile.Fsk.MarkHz / profile.Fsk.Baud);
        Assert.Equal(8, profile.Framing.DataBits);
        Assert.Equal(BitOrder.LsbFirst, profile.Framing.BitOrder);
        Assert.Equal(Parity.None, profile.Framing.Parity);
        Assert.Equal("0", profile.Framing.StartBits);
        Assert.Equal("11", profile.Framing.StopBits);
    }

    [Theory]
    [InlineData(300, 44_100, 1)]
    [InlineData(300, 44_100, 2)]
    [InlineData(300, 48_000, 1)]
    [InlineData(300, 48_000, 2)]
    [InlineData(1200, 44_100, 1)]
    [InlineData(1200, 44_100, 2)]
    [InlineData(1200, 48_000, 1)]
    [InlineData(1200, 48_000, 2)]
    public void Decode_RecoversMinimodemBytesExactly_InTheKansasCityTones(int baud, int sampleRate, int stopBits)
    {
        string capture = KcsCaptures.Write(temp.Root, $"kcs-{baud}-{sampleRate}-{stopBits}", baud, sampleRate, stopBits);
        var profile = ProfileCatalog.BuiltIn.Get($"kcs-{baud}");

        var result = CaptureDecoder.Decode(capture, profile);

        // Outside reference: the bytes minimodem was given to send (and read back itself, see KcsCaptures.Write).
        var best = Assert.Single(result.Best);
        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), best.PayloadHex);

        // A KCS stream has no checksum, so a whole, clean read is Unchecked, and it should be a confident one.
        Assert.Equal(BlockStatus.Unchecked, best.Status);
        Assert.Equal(0, best.FramingErrors);
        Assert.True(best.Confidence >= 0.9, $"A clean minimodem capture was read right but with confidence {best.Confidence:0.000}.");

        // minimodem writes at nominal speed: the speed TapeVault measures from the mark tone must say so.
        Assert.InRange(best.Speed, 0.998, 1.002);

        // SoX's reading of the header is the reference for the capture's description.
        Assert.Equal(OutsideTool.SoxSampleRate(capture), result.Capture.SampleRate);
        Assert.Equal(OutsideTool.SoxDurationSeconds(capture), result.Capture.DurationSeconds, 5);
        Assert.Equal(OutsideTool.Sha256Sum(capture), result.Capture.Sha256);
    }
}
