using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// A sync pulse comes once a block, after a lead-in of a second and a block of some 150 bytes: about one cycle in
/// 4000. Ground truth is the profile the capture was written with and the blocks written (<see cref="DraftTrials"/>);
/// the outside damage is SoX (sox(1), a general-purpose audio tool that shares no code with TapeVault), and the
/// confirmation replaces only the fields the draft marked as guesses.
/// </summary>
public sealed class RareSyncClassTests(OutsideTempFolder folder, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    /// <summary>
    /// Tuning seed 11004 of the draft figure's pulse-width family (classes 397.8, 809.9 and a 1376 µs sync pulse,
    /// start bit 1, stop bit 0, even parity, CRC-16/XMODEM), a head-amplifier capture at 0.95 of nominal speed, through
    /// the SoX chain the figure drew for it: a one-pole low-pass at 7.8 kHz and a high-pass at 474 Hz. The settings
    /// that time whole cycles from the format's edges read the two bit classes alone, the sync cycles (0.04 % of all)
    /// under the share a class needed; the one setting that kept a third class read in-between lengths (half a short
    /// and half a long cycle, 595 µs) from the other edge. The draft read no block (0 of the truth's 12) before.
    /// </summary>
    [Fact]
    public void A_sync_pulse_once_a_long_block_is_drafted_as_a_class()
    {
        var result = DraftTrials.Run("pulse-width", 11004, folder.Root, FigureChain);
        output.WriteLine($"{result.Family} seed {result.Seed}: drafted {result.DraftedFamily}, {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} ({result.Written} written); guessed {string.Join(", ", result.Guessed)}; {result.Damage}; {result.Failure}");
        Assert.True(result.RecoveredByTruth >= 10, $"the truth read {result.RecoveredByTruth}: the damage is beyond the read path, not a test of the draft");
        Assert.Equal("pulse-width", result.DraftedFamily);
        Assert.DoesNotContain("layout", result.Guessed);
        Assert.True(result.RecoveredByBoth >= 0.95 * result.RecoveredByTruth, $"the confirmed draft read {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} blocks");
    }

    /// <summary>The SoX effects the draft figure drew for this seed (its chain's arguments, as the benchmark printed them).</summary>
    private static (string Path, string Description) FigureChain(string path, Random rng)
    {
        string[] effects = ["lowpass", "-1", "7810.4248", "highpass", "473.6372", "speed", "1.0665", "vol", "-1", "gain", "-15.0687", "rate", "22050", "dither"];
        string damaged = Path.ChangeExtension(path, ".sox.wav");
        OutsideTool.Sox(["-V1", path, "-b", "16", damaged, .. effects]);
        return (damaged, "sox " + string.Join(' ', effects) + " -> 16-bit");
    }
}
