using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.RoundTrip;

/// <summary>
/// A capture taken off the head amplifier with some azimuth error, then equalised by SoX (a general-purpose audio tool,
/// the outside damage here: a peaking cut of 11.6 dB at 2.5 kHz), moves the edge between a format's long sync pulse
/// and the short pulse after it: the sync reads a fifth short and the first data pulse as much long, so that it reads
/// as the other bit. Their sum is what the move leaves whole, and the pulse-width decoder decides the second pulse on it.
/// Ground truth is what the channel model was given to write (<see cref="BlockWriter"/>).
/// </summary>
public sealed class ShiftedEdgeTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    // Three classes about 1 : 1.66 : 3.6, a sync of one long pulse, bytes with odd parity and an 8-bit sum: the shape
    // of a random pulse-width profile whose blocks all lost their first bit under this damage.
    private const string Profile = """
        {"id":"shifted-edge","name":"Shifted edge","family":"pulse-width",
         "pulseWidth":{"classes":[{"name":"s","microseconds":440},{"name":"l","microseconds":730},{"name":"m","microseconds":1590}],
                       "zero":["s"],"one":["l"],"leadIn":{"class":"s","minimumCount":100},"sync":["m"]},
         "framing":{"dataBits":8,"bitOrder":"msb-first","startBits":"","stopBits":"","parity":"odd"},
         "layout":{"header":[{"name":"file","bytes":1,"role":"file-id"},{"name":"block","bytes":1,"role":"block-number"},
                             {"name":"length","bytes":1,"role":"payload-length"}],
                   "maximumPayloadBytes":128,"checksum":{"algorithm":"sum8","covers":"header-and-payload","endian":"big"},"copies":1},
         "recording":{"leadInSeconds":1.0,"blockGapSeconds":0.2,"trailerSeconds":0.3}}
        """;

    [Theory]
    [InlineData(44)]
    [InlineData(45)]
    public void A_sync_pulse_whose_trailing_edge_moved_costs_no_first_bit(int seed)
    {
        var profile = ProfileLoader.Parse(Profile, "test");
        var files = RandomFormats.Files(new Random(seed), 2, 400);
        var damage = new ChannelDamage
        {
            Chain = ReadChain.HeadAmplifier, Invert = true, AzimuthDegrees = 0.45, Pw50Microseconds = 41, DeckLowPassHz = 13_500,
            SnrDb = 40, Seed = seed,
        };
        string source = folder.NewCapture("shifted-source");
        var written = CaptureSynthesizer.Write(source, profile, files, damage);
        string damaged = folder.NewCapture("shifted-sox");

        // Outside damage: SoX's peaking equaliser (sox(1), "equalizer frequency width gain") and an 8-bit converter.
        OutsideTool.Sox(source, "-b", "8", damaged, "equalizer", "2531", "1.18q", "-11.6");

        var result = CaptureDecoder.Decode(damaged, profile);

        // Without the pair's sum every block of this capture lost its first bit (0 of 8 or 9 read); with it, a block
        // lost here is one the noise took elsewhere.
        var read = RandomFormats.RecoveredBlocks(result, profile, written.Blocks);
        Assert.True(read.Count(r => r) >= written.Blocks.Count - 1, $"read {read.Count(r => r)} of {written.Blocks.Count} written blocks");

        // Nothing wrong is clean: every clean reading is a written block, header and payload.
        int check = BlockLayoutCodec.For(profile.Layout).CheckBytes;
        Assert.DoesNotContain(result.Candidates, c => c.Status == BlockStatus.Clean &&
            !written.Blocks.Any(w => w.AsSpan(0, w.Length - check).SequenceEqual([.. c.Header, .. c.Payload])));
    }
}
