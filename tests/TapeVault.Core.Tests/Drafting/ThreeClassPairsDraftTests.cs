using System.Text.Json.Nodes;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// Three-class pulse pairs with byte markers drafted from a whole capture: the fields the draft measures must be what
/// the family's description gives the capture (the truth profile the capture was written with: which pair is 0, the
/// bit order, a countdown sync that differs between the first and the second copy, each block recorded twice), and the
/// draft, its guesses confirmed, reads what the truth reads.
/// </summary>
public sealed class ThreeClassPairsDraftTests(OutsideTempFolder folder, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    /// <summary>
    /// Seed 176004 of the draft figure: medium+short is 0, bits most significant first, even parity, big-endian start
    /// and exclusive end; a head capture at 88.2 kHz, 8 bits, then the figure's SoX chain for that seed (a 224 Hz–5 kHz
    /// band-pass, a 10 dB dip at 4.7 kHz, inversion, a gain of 11.5 dB that clips, 24 bits: sox(1), a general-purpose
    /// audio tool that shares no code with TapeVault). An XOR over an even count of bytes holds all four ways round
    /// (complemented, bits reversed), the header's name is too few bytes among the data's to tell by its text, and the
    /// pair reading took short+medium as 0 with the least significant bit first: the start and end addresses then give
    /// no block's length, a length matched to within a few bytes inside an 899-byte "header" was drafted, whose field
    /// of 833 bytes no profile may hold, and an FSK stream was drafted instead (0 of the truth's blocks). Damage had
    /// also left most blocks without their twin, so one copy with the first copy's sync alone was drafted.
    /// </summary>
    [Fact]
    public void The_bit_pairs_and_order_that_give_the_next_blocks_length_and_the_copies_their_syncs_tell_are_drafted()
    {
        var result = DraftTrials.Run("three-class-pairs", 176004, folder.Root,
            DraftFromCaptureSox.PrintedAt(24, "sinc", "224.4125-5041.7751", "equalizer", "4729.9579", "1.5517q", "-10.367", "vol", "-1", "gain", "11.5275"));
        output.WriteLine($"drafted {result.DraftedFamily}, {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} ({result.Written} written); guessed {string.Join(", ", result.Guessed)}; {result.Damage}; {result.Failure}");
        output.WriteLine(result.DraftProfileJson);
        Assert.True(result.RecoveredByTruth >= 3, $"the truth read {result.RecoveredByTruth}: the damage is beyond the read path, not a test of the draft");
        Assert.Equal("pulse-width", result.DraftedFamily);

        // Source: the family's description, as the truth profile the capture was written with (RandomFormats).
        var truth = JsonNode.Parse(result.TruthJson)!;
        var draft = JsonNode.Parse(result.DraftProfileJson!)!;
        foreach (string field in new[] { "zero", "one" })
        {
            Assert.Equal(truth["pulseWidth"]![field]!.ToJsonString(), draft["pulseWidth"]![field]!.ToJsonString());
            Assert.DoesNotContain($"pulseWidth.{field}", result.Guessed);
        }

        Assert.Equal(truth["framing"]!["bitOrder"]!.GetValue<string>(), draft["framing"]!["bitOrder"]!.GetValue<string>());
        Assert.Equal(2, draft["layout"]!["copies"]!.GetValue<int>());
        Assert.DoesNotContain("layout.copies", result.Guessed);
        var truthSync = truth["layout"]!["kinds"]![0]!["header"]![0]!["expect"]!.ToJsonString();
        Assert.Equal(truthSync, draft["layout"]!["kinds"]![0]!["header"]![0]!["expect"]!.ToJsonString());
        Assert.True(result.RecoveredByBoth >= 0.9 * result.RecoveredByTruth, $"the confirmed draft read {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth} blocks");
    }
}
