using TapeVault.Core.Drafting;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// A one-byte XOR check holds on every byte complemented where its coverage and the check are an even count of bytes
/// (XOR of an even count of 0xFF is zero: common practice), so it cannot tell which pulse class is 0; the draft weighs
/// the other mapping (and its own sync and complemented start and stop bits) by the other evidence the blocks give.
/// Ground truth is the profile the capture was written with and the blocks written (<see cref="DraftTrials"/>); the
/// confirmation replaces only the fields the draft marked as guesses.
/// </summary>
public sealed class ComplementedMappingTests(OutsideTempFolder folder, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    /// <summary>
    /// Seed 166013 of the draft figure: long class 0, short 1, sync long long short, plain bytes and an XOR check.
    /// The search took the first mapping whose check held (short 0, sync long long: every byte complemented and the
    /// bits shifted by one, which the XOR still passes on enough blocks) and marked mapping and sync as measured; the
    /// confirmed draft read none of the truth's 20 blocks. The other mapping's reading holds on more blocks and its
    /// block counter counts up.
    /// </summary>
    [Fact]
    public void A_check_that_holds_on_complemented_bytes_leaves_the_mapping_to_other_evidence()
    {
        var result = DraftTrials.Run("pulse-width", 166013, folder.Root);
        output.WriteLine($"{result.Family} seed {result.Seed}: drafted {result.DraftedFamily}, {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} ({result.Written} written); guessed {string.Join(", ", result.Guessed)}; {result.Damage}; {result.Failure}");
        Assert.True(result.RecoveredByTruth >= 10, $"the truth read {result.RecoveredByTruth}: the damage is beyond the read path, not a test of the draft");

        // The blocks as written are the outside reference (RandomFormats.RecoveredBlocks compares the bytes read with
        // the bytes written): the confirmed draft reads nine tenths of what the truth reads.
        Assert.True(result.RecoveredByBoth >= 0.9 * result.RecoveredByTruth, $"the confirmed draft read {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} blocks");
    }

    /// <summary>
    /// Complementing every bit of a frame turns start 1 stop 0 into start 0 stop 1, and with eight data bits and a
    /// parity bit (nine, an odd count) odd parity into even (common practice: complementing an odd count of bits flips
    /// the parity of their ones).
    /// </summary>
    [Fact]
    public void Complemented_framing_flips_start_stop_and_the_parity_of_an_odd_count_of_bits()
    {
        var framing = new ByteFraming(8, BitOrder.LsbFirst, "1", "0", Parity.Odd);
        Assert.Equal(new ByteFraming(8, BitOrder.LsbFirst, "0", "1", Parity.Even), SyncFormatSearch.Complemented(framing));
        var seven = new ByteFraming(7, BitOrder.MsbFirst, "0", "11", Parity.Odd);
        Assert.Equal(new ByteFraming(7, BitOrder.MsbFirst, "1", "00", Parity.Odd), SyncFormatSearch.Complemented(seven));
    }
}
