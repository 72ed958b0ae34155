using System.Globalization;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Merge;

/// <summary>
/// Passes made entirely by outside tools: minimodem (a general-purpose software FSK modem) writes known text in the
/// Kansas City Standard's tones at 1200 baud (BYTE, February 1976: 1200 and 2400 Hz, one start bit, eight data bits
/// least significant first, two stop bits), and SoX damages three copies of it, each with 0.1 s of silence in place
/// of the tape at a different point, one also played 2 % fast. The outside reference is the text minimodem was
/// given (and read back itself, see <see cref="KcsCaptures.Write"/>).
/// </summary>
public sealed class OutsideCaptureMergeTests : IClassFixture<OutsideTempFolder>
{
    private readonly OutsideTempFolder temp;

    public OutsideCaptureMergeTests(OutsideTempFolder temp)
    {
        this.temp = temp;
    }

    [Fact]
    public void Merge_OfSoxDamagedCopiesOfAMinimodemCapture_GivesBackTheTextMinimodemSent()
    {
        string source = KcsCaptures.Write(temp.Root, "merge-source", 1200, 44_100, stopBits: 2, amplitude: 0.5);
        var profile = ProfileCatalog.BuiltIn.Get("kcs-1200");
        string text = KcsCaptures.Hex(KcsCaptures.Text);

        var passes = new List<DecodeResult>();
        var names = new List<string>();
        foreach (var (cut, speed) in new[] { (1.6, 1.0), (2.4, 1.0), (3.2, 1.02) })
        {
            string damaged = WithSilence(source, cut);
            if (speed != 1.0)
            {
                // SoX's speed effect plays the capture faster, pitch and tempo together, as a fast deck would.
                string fast = temp.File($"{Path.GetFileNameWithoutExtension(damaged)}-fast.wav");
                OutsideTool.Sox(damaged, fast, "speed", speed.ToString(CultureInfo.InvariantCulture));
                damaged = fast;
            }

            var result = CaptureDecoder.Decode(damaged, profile);

            // Each pass alone lacks the characters under its silence.
            Assert.DoesNotContain(result.Best, b => b.PayloadHex == text);
            passes.Add(result);
            names.Add(Path.GetFileName(damaged));
        }

        var image = TapeMerger.Merge(passes, names);

        var block = Assert.Single(image.Blocks);
        Assert.Equal(text, block.PayloadHex);
        Assert.NotEqual(RecoveryStatus.Missing, block.Status);
        Assert.Equal(3, image.Captures.Length);

        // GNU sha256sum is the reference for the captures' identities in the image.
        Assert.Equal(names.Select(n => OutsideTool.Sha256Sum(temp.File(n))).Order(), image.Captures.Select(c => c.CaptureSha256).Order());
    }

    /// <summary>SoX cuts the capture at <paramref name="cut"/> seconds and puts 0.1 s of silence in place of the next 0.1 s.</summary>
    private string WithSilence(string source, double cut)
    {
        string output = temp.File($"silence-{cut.ToString("0.0", CultureInfo.InvariantCulture)}.wav");
        OutsideTool.SoxSilence(source, output, cut, 0.1);
        return output;
    }
}
