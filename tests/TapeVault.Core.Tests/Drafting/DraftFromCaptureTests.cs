using System.Globalization;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// The drafter on one capture of each family, the format drawn at random over wide ranges (<see cref="RandomFormats"/>)
/// and written through a deck a curator would pick for a draft (2.5 % fast, wow and flutter, 32 dB SNR, a deck
/// low-pass), with a SoX effect chain on top for every other family (SoX is a general-purpose audio tool that shares
/// no code with TapeVault). Ground truth is the profile the capture was written with and the blocks written. The
/// claims: the draft is made (a refusal fails); it proposes the family written; its timing (pulse classes, tones
/// and baud, or cell) is the truth's as the tape plays, within 6 %; and once the fields it marked as guesses are
/// confirmed (taken from the truth), it reads back at least 90 % of the blocks the truth itself reads back. Seeds
/// were fixed before the test first ran; the figure over many seeds and harsher damage is the bench's
/// (docs/performance.md).
/// </summary>
public sealed class DraftFromCaptureTests(OutsideTempFolder folder, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    private static readonly ChannelDamage CuratorsDeck = new()
    {
        Speed = 1.025,
        WowPercent = 0.15,
        FlutterPercent = 0.05,
        SnrDb = 32,
        DeckLowPassHz = 10_000,
        SampleRate = 44_100,
    };

    [Theory]
    [InlineData("pulse-width", 601, false)]
    [InlineData("fsk", 602, true)]
    [InlineData("biphase", 603, false)]
    [InlineData("three-class-pairs", 604, true)]
    [InlineData("one-cycle-bits", 605, false)]
    [InlineData("fsk-sync", 606, true)]
    [InlineData("biphase-alternating", 607, false)]
    public void A_draft_names_the_family_and_its_timing_and_once_confirmed_reads_the_blocks(string family, int seed, bool sox)
    {
        var result = DraftTrials.Run(family, seed, folder.Root, sox ? DraftFromCaptureSox.Chain : null, CuratorsDeck);
        output.WriteLine($"{family} seed {seed}: drafted {result.DraftedFamily}, {result.RecoveredByConfirmedDraft}/{result.Written} blocks by the confirmed draft, {result.RecoveredByTruth}/{result.Written} by the truth; guessed {result.Guessed.Count} of {result.Fields}: {string.Join(", ", result.Guessed)}; confidence {result.Confidence:0.00}; {result.Damage}; {result.Failure}");
        output.WriteLine(result.TruthJson);
        output.WriteLine(result.DraftJson ?? string.Empty);
        Assert.True(result.RecoveredByTruth >= 0.8 * result.Written, "the truth itself reads too little back: the damage is beyond the read path, not a test of the draft");

        // A refusal is a failure here: these captures are what a draft is for.
        Assert.Null(result.Failure);
        Assert.NotNull(result.DraftProfileJson);
        Assert.Equal(RandomFormats.ProfileFamily(family), result.DraftedFamily);

        var truth = ProfileLoader.Parse(result.TruthJson, "truth");
        var draft = ProfileLoader.Parse(result.DraftProfileJson!, "draft");
        double speed = result.Speed;
        switch (truth.Family)
        {
            case FormatFamily.PulseWidth:
                // Every class the truth names has a drafted class of its length as the tape plays.
                foreach (var c in truth.PulseWidth!.Classes)
                {
                    Assert.Contains(draft.PulseWidth!.Classes, d => Near(d.Seconds, c.Seconds / speed));
                }

                break;
            case FormatFamily.Fsk:
                Assert.True(Near(draft.Fsk!.Baud, truth.Fsk!.Baud * speed), $"baud {draft.Fsk.Baud} against {truth.Fsk.Baud * speed}");
                Assert.True(Near(draft.Fsk.MarkHz, truth.Fsk.MarkHz * speed), $"mark {draft.Fsk.MarkHz} against {truth.Fsk.MarkHz * speed}");
                Assert.True(Near(draft.Fsk.SpaceHz, truth.Fsk.SpaceHz * speed), $"space {draft.Fsk.SpaceHz} against {truth.Fsk.SpaceHz * speed}");
                break;
            default:
                Assert.True(Near(draft.Biphase!.CellSeconds, truth.Biphase!.CellSeconds / speed), $"cell {draft.Biphase.CellSeconds} against {truth.Biphase.CellSeconds / speed}");
                break;
        }

        Assert.True(result.RecoveredByConfirmedDraft >= 0.9 * result.RecoveredByTruth, $"the confirmed draft read {result.RecoveredByConfirmedDraft} blocks, the truth {result.RecoveredByTruth}");
    }

    private static bool Near(double measured, double expected) => Math.Abs(Math.Log(measured / expected)) < 0.06;
}

/// <summary>A SoX chain drawn from the seed: a band-pass, a speed change, a gain, and a new sample rate (sox(1)).</summary>
internal static class DraftFromCaptureSox
{
    public static (string Path, string Description) Chain(string path, Random rng)
    {
        string f(double x) => x.ToString("0.###", CultureInfo.InvariantCulture);
        var effects = new List<string> { "sinc", $"{f(30 + (rng.NextDouble() * 200))}-{f(6000 + (rng.NextDouble() * 5000))}" };
        effects.AddRange(["gain", f(-12 + (rng.NextDouble() * 9))]);
        effects.AddRange(["rate", new[] { "32000", "44100", "48000" }[rng.Next(3)]]);
        string output = Path.ChangeExtension(path, ".sox.wav");
        OutsideTool.Sox([path, "-b", "16", output, .. effects]);
        return (output, "sox " + string.Join(' ', effects));
    }

    /// <summary>A fixed chain (a seed's chain as the draft figure printed it), written at 16 bits as the figure writes it.</summary>
    public static Func<string, Random, (string Path, string Description)> Printed(params string[] effects) => PrintedAt(16, effects);

    /// <summary>A fixed chain as the draft figure printed it, written at the bits it printed after the chain (`-> 24-bit`).</summary>
    public static Func<string, Random, (string Path, string Description)> PrintedAt(int bits, params string[] effects) => (path, _) =>
    {
        string output = Path.ChangeExtension(path, ".sox.wav");
        OutsideTool.Sox(["-V1", path, "-b", bits.ToString(CultureInfo.InvariantCulture), output, .. effects]);
        return (output, "sox " + string.Join(' ', effects));
    };
}
