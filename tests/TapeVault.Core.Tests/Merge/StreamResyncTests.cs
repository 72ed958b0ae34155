using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.RoundTrip;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Merge;

/// <summary>
/// A Kansas City Standard stream (BYTE, February 1976: a start bit, eight data bits LSB first, two stop bits) of
/// lower-case text, read by three passes that each lose a different stretch to a dropout. Lower-case letters have
/// bits 5 and 6 set and bit 7 clear, so a frame that starts three bits early (on bit 7) finds mark where its stop bits
/// should be, character after character: a decoder that resumes on any fall to space after a dropout can stay on
/// that false frame. Ground truth is our own channel model's input: the bytes we synthesised.
/// </summary>
public sealed class StreamResyncTests(RoundTripFolder folder, ITestOutputHelper output) : IClassFixture<RoundTripFolder>
{
    private static readonly byte[] Text = Encoding.ASCII.GetBytes(string.Concat(Enumerable.Repeat(
        "the club keeps every cassette in the long room above the moor road where the reels are wound ", 3)));

    [Fact]
    public void Stream_ReadsAfterEachDropoutAreFramedOnTheTrueCharacters_AndTheMergeIsTheWrittenText()
    {
        var profile = RoundTrips.Profile("kcs-1200");
        TapeFile[] files = [new("NOTES", Text)];
        var (_, clean) = RoundTrips.SynthAndDecode(folder, profile, files, new ChannelDamage());
        var reading = clean.Best.MaxBy(c => c.Payload.Length)!;
        Assert.Equal(Convert.ToHexString(Text), Convert.ToHexString(reading.Payload.AsSpan()));

        // Pass p loses 40 ms (about five characters) from character 60 + 70 p on: every character is read by two passes.
        var passes = new List<DecodeResult>();
        for (int p = 0; p < 3; p++)
        {
            double start = reading.ByteSeconds[60 + (70 * p)];
            var damage = new ChannelDamage { Seed = 70 + p, SnrDb = 30, Speed = 1 + (0.01 * (p - 1)), Dropouts = [new Dropout(start, 0.04, 1.0)] };
            var result = RoundTrips.SynthAndDecode(folder, profile, files, damage).Result;
            output.WriteLine(RoundTrips.Describe(result));

            // Each reading, the one that resumes after the dropout too, is a stretch of the written text: none is
            // framed off the true characters.
            foreach (var c in result.Candidates.Where(c => c.Payload.Length >= 4))
            {
                Assert.True(Text.AsSpan().IndexOf(c.Payload.AsSpan()) >= 0, $"pass {p}, setting {c.SettingName}: {c.Payload.Length} bytes from {c.StartSeconds:0.000} s are not a stretch of the text: {Encoding.ASCII.GetString(c.Payload.AsSpan())}");
            }

            passes.Add(result);
        }

        var image = TapeMerger.Merge(passes, ["a.wav", "b.wav", "c.wav"]);
        output.WriteLine(string.Join("; ", image.Blocks.Select(b => $"{b.Key} {b.Status} {b.Confidence:0.###} {b.Payload.Length} B")));

        // Every character was read by some pass, so nothing is missing and the merge is the text, byte for byte.
        Assert.DoesNotContain(image.Blocks, b => b.Status == RecoveryStatus.Missing);
        Assert.Equal(Convert.ToHexString(Text), Convert.ToHexString([.. image.Blocks.SelectMany(b => b.Payload)]));
        Assert.All(image.Blocks, b => Assert.Equal(RecoveryStatus.Voted, b.Status));
    }

    [Theory]
    [InlineData(0.04, false)]
    [InlineData(0.15, true)]
    public void A_reading_that_resumes_too_far_from_its_grid_declares_a_framing_doubt(double dropoutSeconds, bool doubtful)
    {
        // At 1200 baud the grid kept over a loss of signal holds for about 100 bits (83 ms): 40 ms is within it,
        // 150 ms is not, and the character the decoder then takes up could be framed whole bits off, reading cleanly.
        var profile = RoundTrips.Profile("kcs-1200");
        TapeFile[] files = [new("NOTES", Text)];
        var reading = RoundTrips.SynthAndDecode(folder, profile, files, new ChannelDamage()).Result.Best.MaxBy(c => c.Payload.Length)!;
        double start = reading.ByteSeconds[60];
        var damage = new ChannelDamage { Seed = 5, SnrDb = 30, Dropouts = [new Dropout(start, dropoutSeconds, 1.0)] };
        var result = RoundTrips.SynthAndDecode(folder, profile, files, damage).Result;

        var after = result.Candidates.Where(c => c.StartSeconds > start && c.Payload.Length >= 20).ToList();
        Assert.NotEmpty(after);
        foreach (var c in after)
        {
            // Every character of such a reading carries the doubt (they all hang on its first start bit); a reading
            // resumed on the grid carries none beyond what its decisions show.
            float least = c.ByteErrorOdds.Skip(1).Min();
            Assert.True(doubtful ? least >= 0.05f : least < 0.01f, $"{c.SettingName} from {c.StartSeconds:0.000} s: least error odds {least}");
        }
    }
}
