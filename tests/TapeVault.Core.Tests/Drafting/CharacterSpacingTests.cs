using TapeVault.Core.Drafting;
using Xunit;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// Stop bits from the spacing of characters written back to back. An asynchronous frame is a start bit, the data
/// bits, the parity bit if any and the stop bits, and the next character's start bit follows the last stop bit
/// (common practice for serial lines): with eight data bits and a parity bit, characters begin 11 bit times apart
/// with one stop bit and 12 with two.
/// </summary>
public sealed class CharacterSpacingTests
{
    private const double Baud = 1200;

    /// <summary>Character times of blocks of characters back to back, <paramref name="frameBits"/> bit times apart, a little jitter on each.</summary>
    private static List<IReadOnlyList<double>> Blocks(int frameBits, int blocks, int characters, int seed, double gapEvery = 0)
    {
        var rng = new Random(seed);
        var result = new List<IReadOnlyList<double>>();
        double t = 0;
        for (int b = 0; b < blocks; b++)
        {
            var times = new List<double>();
            for (int c = 0; c < characters; c++)
            {
                times.Add(t + ((rng.NextDouble() - 0.5) * 0.2 / Baud));
                t += frameBits / Baud;
                if (gapEvery > 0 && rng.NextDouble() < gapEvery)
                {
                    t += (2 + (rng.NextDouble() * 6)) / Baud;
                }
            }

            result.Add(times);
            t += 0.5;
        }

        return result;
    }

    [Theory]
    [InlineData(11, 1, "1")]
    [InlineData(12, 2, "11")]
    public void Characters_back_to_back_after_nine_bits_tell_their_stop_bits_by_their_spacing(int frameBits, int seed, string stopBits)
    {
        var spacing = CharacterSpacing.Measure(Blocks(frameBits, 3, 40, seed), Baud, 10);

        Assert.True(spacing.Told);
        Assert.Equal(stopBits, spacing.StopBits);
        // Every pair of neighbours in each block (39 of 40 characters) counted for the stop bits they show.
        Assert.Equal(3 * 39, stopBits == "1" ? spacing.OneStop : spacing.TwoStops);
    }

    [Fact]
    public void Gaps_and_lost_characters_between_some_characters_do_not_change_what_the_rest_tell()
    {
        var spacing = CharacterSpacing.Measure(Blocks(12, 4, 50, 3, gapEvery: 0.15), Baud, 10);

        Assert.True(spacing.Told);
        Assert.Equal("11", spacing.StopBits);
    }

    [Fact]
    public void Characters_that_never_come_back_to_back_tell_nothing_and_one_stop_bit_is_drafted()
    {
        // Every character followed by idle line of two bit times or more: a receiver reads them with one stop bit.
        var spacing = CharacterSpacing.Measure(Blocks(11, 3, 40, 4, gapEvery: 1), Baud, 10);

        Assert.False(spacing.Told);
        Assert.Equal("1", spacing.StopBits);
    }

    [Fact]
    public void Spacing_is_measured_in_bit_times_of_the_baud_given()
    {
        // The same times at half the baud are 5.5 and 6 bit times: frames of neither length.
        var spacing = CharacterSpacing.Measure(Blocks(12, 3, 40, 5), Baud / 2, 10);

        Assert.False(spacing.Told);
    }
}
