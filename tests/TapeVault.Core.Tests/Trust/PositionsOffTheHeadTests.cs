using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using TapeVault.Core.Tests.RoundTrip;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// Captures taken off the head, inverted, with azimuth loss, hum and flutter and no dropouts: settings that do not suit
/// them garble headers, and each misread must join the place it was read at rather than become a position. The count
/// to check is the synthesiser's own: the number of blocks written (each written twice, and copies share a position).
/// </summary>
public sealed class PositionsOffTheHeadTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    /// <summary>Named blocks written twice, whole cycles for bits: a format of our own for these checks.</summary>
    private static readonly FormatProfile Profile = ProfileLoader.Parse(
        """
        {
          "id": "test-named-blocks",
          "name": "Named blocks written twice",
          "description": "Invented for the position tests.",
          "family": "pulse-width",
          "pulseWidth": {
            "classes": [
              { "name": "short", "microseconds": 330 },
              { "name": "long", "microseconds": 620 },
              { "name": "mark", "microseconds": 1250 }
            ],
            "zero": [ "short" ],
            "one": [ "long" ],
            "leadIn": { "class": "short", "minimumCount": 128 },
            "sync": [ "mark" ]
          },
          "framing": { "dataBits": 8, "bitOrder": "msb-first", "startBits": "", "stopBits": "", "parity": "odd" },
          "layout": {
            "header": [
              { "name": "file", "bytes": 8, "role": "file-name" },
              { "name": "block", "bytes": 2, "role": "block-number", "endian": "little" },
              { "name": "length", "bytes": 1, "role": "payload-length" }
            ],
            "maximumPayloadBytes": 255,
            "checksum": { "algorithm": "crc16-ccitt-false", "covers": "header-and-payload", "endian": "big" },
            "copies": 2
          },
          "recording": { "leadInSeconds": 1.5, "blockGapSeconds": 0.2, "trailerSeconds": 0.3 }
        }
        """,
        "test-named-blocks");

    /// <summary>Three files of seeded random bytes: 17 blocks of up to 128 bytes, about 28 s of tape.</summary>
    private static List<TapeFile> Files(int seed)
    {
        var random = new Random(seed);
        var a = new byte[900];
        var b = new byte[640];
        var c = new byte[500];
        random.NextBytes(a);
        random.NextBytes(b);
        random.NextBytes(c);
        return [new("MUSEUM", a), new("LEDGER", b), new("NOTES", c)];
    }

    private static void AssertOnePositionPerBlockAndNoWrongClean(IReadOnlyList<byte[]> written, DecodeResult result)
    {
        var truth = RoundTrips.Truth(Profile, written);
        string got = RoundTrips.Describe(result);
        Assert.True(written.Count == result.Best.Count, $"{written.Count} blocks written, {result.Best.Count} positions: {got}");
        foreach (var clean in result.Candidates.Where(c => c.Status == BlockStatus.Clean))
        {
            Assert.True(truth.Any(t => t.Matches(clean)), $"a clean reading by {clean.SettingName} at {clean.StartSeconds:0.000} s is no block that was written");
        }
    }

    [Theory]
    [InlineData(1, 0.3, 0.05)]
    [InlineData(2, 0.5, 0.1)]
    [InlineData(3, 0.4, 0.08)]
    [InlineData(4, 0.35, 0.06)]
    [InlineData(5, 0.45, 0.04)]
    public void A_capture_off_the_head_has_one_position_per_block_written(int seed, double azimuthDegrees, double hum)
    {
        var damage = new ChannelDamage
        {
            Chain = ReadChain.HeadAmplifier,
            Invert = true,
            AzimuthDegrees = azimuthDegrees,
            HumLevel = hum,
            FlutterPercent = 0.3,
            SnrDb = 30,
            Seed = seed,
        };
        var (capture, result) = RoundTrips.SynthAndDecode(folder, Profile, Files(seed), damage);

        Assert.Equal(17, capture.Blocks.Count);
        AssertOnePositionPerBlockAndNoWrongClean(capture.Blocks, result);
    }

    [Fact]
    public void A_capture_inverted_and_band_limited_by_sox_has_one_position_per_block_written()
    {
        string source = folder.NewCapture("positions-source");
        var capture = CaptureSynthesizer.Write(source, Profile, Files(6), new ChannelDamage { Chain = ReadChain.HeadAmplifier, FlutterPercent = 0.3, SnrDb = 30, Seed = 6 });
        string damaged = folder.NewCapture("positions-sox");

        // Outside reference: SoX inverts the capture (vol -1) and band-limits it to 200 Hz – 5 kHz, as a transfer through
        // a narrow, reversed-polarity chain does.
        OutsideTool.Sox(source, damaged, "vol", "-1", "highpass", "200", "lowpass", "5000");
        var result = CaptureDecoder.Decode(damaged, Profile);

        AssertOnePositionPerBlockAndNoWrongClean(capture.Blocks, result);
    }
}
