using TapeVault.Core.Blocks;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.RoundTrip;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// A small seeded property test: checked FSK blocks (among them runs of zero bytes and of 0xFF bytes, which frame
/// like lead-in tone and like a checksum's all-zero codeword) through damage drawn from wide ranges. Whatever is lost,
/// no reading of any detector setting may be clean unless it is a block as written. Ground truth is the bytes we
/// wrote; the seeds were chosen before the test was first run and not changed after.
/// </summary>
public sealed class FskRandomDamageTests(RoundTripFolder folder, ITestOutputHelper output) : IClassFixture<RoundTripFolder>
{
    [Theory]
    [InlineData(1001)]
    [InlineData(1002)]
    [InlineData(1003)]
    [InlineData(1004)]
    [InlineData(1005)]
    [InlineData(1006)]
    public void No_reading_is_clean_unless_it_is_a_written_block(int seed)
    {
        var random = new Random(seed);
        byte[][] written =
        [
            FskBlockFormat.Block(0, [.. FskBlockFormat.Text(0, 30), .. new byte[40], .. FskBlockFormat.Text(0, 20)]),
            FskBlockFormat.Block(1, [.. Enumerable.Repeat((byte)0xFF, 40), .. FskBlockFormat.Text(1, 30)]),
            FskBlockFormat.Block(2, new byte[60]),
            FskBlockFormat.Block(3, FskBlockFormat.Text(3, 80)),
        ];

        // Speed ±5 %, wow up to 0.5 %, flutter up to 0.2 %, SNR 12–45 dB, hum, a deck band limit of 4–14 kHz, the head
        // or line output, either polarity, and 20–120 random dropouts a minute (5–60 ms each, our channel model's range).
        var damage = new ChannelDamage
        {
            Seed = seed,
            Speed = 0.95 + (0.1 * random.NextDouble()),
            WowPercent = 0.5 * random.NextDouble(),
            FlutterPercent = 0.2 * random.NextDouble(),
            SnrDb = 12 + (33 * random.NextDouble()),
            HumLevel = 0.02 * random.NextDouble(),
            DeckLowPassHz = 4000 + (10_000 * random.NextDouble()),
            Chain = random.Next(2) == 0 ? ReadChain.LineOutput : ReadChain.HeadAmplifier,
            Invert = random.Next(2) == 0,
            RandomDropoutsPerMinute = 20 + (100 * random.NextDouble()),
        };
        var result = RoundTrips.WriteAndDecode(folder, FskBlockFormat.Profile, written, damage);
        output.WriteLine($"{damage}: {RoundTrips.Describe(result)}");

        foreach (var c in result.Candidates.Where(c => c.Status == BlockStatus.Clean))
        {
            Assert.True(
                FskBlockFormat.IsWritten(c, written),
                $"{c.SettingName} read a clean block {c.Identity} of {c.Payload.Length} bytes at {c.StartSeconds:0.000} s that was never written.");
        }
    }
}
