using TapeVault.Core.Bytes;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Bytes;

/// <summary>
/// Finding where characters start in a leader of one repeated character, taken up in the middle (after a dropout, or a
/// recording begun late), with no mark tone before it. The soft decision here is an ideal one: +1 for a mark bit, −1
/// for a space bit, changing at the bit boundaries.
/// </summary>
public sealed class LeaderHuntTests
{
    private const double BitSamples = 36.75;

    // 0x55 framed as fsk-sync-1200 frames it: start 0, data 1010 1010 (least significant first), even parity 0, stop 11.
    private static readonly ByteFraming Framing = new(8, BitOrder.LsbFirst, "0", "11", Parity.Even);

    [Theory]
    [InlineData(1)]
    [InlineData(3)]
    [InlineData(5)]
    [InlineData(7)]
    [InlineData(10)]
    public void The_hunt_finds_a_true_start_bit_wherever_the_leader_is_taken_up(int bitsIn)
    {
        var d = Leader(bitsIn);
        var hunt = new LeaderHunt(Framing, new CharacterLeadIn(0x55, 16));
        double found = double.NaN;

        for (int n = 1; n < d.Length && double.IsNaN(found); n++)
        {
            if (d[n] < 0 && d[n - 1] >= 0)
            {
                hunt.Fall(n - 0.5, BitSamples);
            }

            if (hunt.Step(d[n], d[n - 1], n, BitSamples))
            {
                found = hunt.FoundStart;
            }
        }

        // A start bit of the leader lies a whole number of frames after the first whole character's.
        Assert.False(double.IsNaN(found));
        double frames = (found - FirstStart(bitsIn)) / (Framing.BitsPerByte * BitSamples);
        Assert.True(Math.Abs(frames - Math.Round(frames)) < 0.05, $"found a start {frames:0.00} frames after a true one");
    }

    [Fact]
    public void One_framer_at_a_time_locks_onto_a_false_start_for_good()
    {
        // Taken up one bit into a character, the first fall is the one after data bit 1; framed from it, each character
        // ends where the same fall of the next begins, so the same false start comes round in every frame. This is why
        // the hunt frames from every fall at once.
        var d = Leader(1);
        var framer = new AsyncCharacterFramer(Framing);
        var values = new List<int>();
        for (int n = 1; n < d.Length; n++)
        {
            if (!framer.InCharacter)
            {
                if (d[n] < 0 && d[n - 1] >= 0)
                {
                    framer.Begin(n - 0.5, BitSamples);
                }

                continue;
            }

            if (framer.Step(d[n], d[n - 1], n, BitSamples) == CharacterStep.Complete)
            {
                values.Add(framer.FramingOk ? framer.Value : -1);
            }
        }

        Assert.True(values.Count > 20);
        Assert.DoesNotContain(0x55, values);
    }

    /// <summary>A leader of 40 characters 0x55 taken up <paramref name="bitsIn"/> bits into its first character.</summary>
    private static float[] Leader(int bitsIn)
    {
        var frame = BitPatterns.Frame(Framing, 0x55);

        // The test's own framing of 0x55 (start, data least significant first, even parity, two stops) as a check of the frame.
        Assert.Equal([false, true, false, true, false, true, false, true, false, false, true, true], frame);
        var bits = new List<bool>();
        for (int c = 0; c < 40; c++)
        {
            bits.AddRange(frame);
        }

        bits = bits.Skip(bitsIn).ToList();
        var d = new float[(int)(bits.Count * BitSamples)];
        for (int n = 0; n < d.Length; n++)
        {
            d[n] = bits[(int)(n / BitSamples)] ? 1 : -1;
        }

        return d;
    }

    /// <summary>Where the first whole character's start bit begins, in samples.</summary>
    private static double FirstStart(int bitsIn) => (Framing.BitsPerByte - bitsIn) * BitSamples;
}
