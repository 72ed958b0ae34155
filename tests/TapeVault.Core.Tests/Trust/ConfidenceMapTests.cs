using System.Text.RegularExpressions;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>The calibration map from the scorer's model confidence to the rate at which such readings were right.</summary>
public sealed partial class ConfidenceMapTests
{
    private const string Map = """
        { "provenance": "test", "curves": { "biphase/Clean": { "readings": 400, "x": [0.2, 0.6, 0.9], "y": [0.1, 0.5, 0.99] } } }
        """;

    [Theory]
    [InlineData(0.0, 0.1)]
    [InlineData(0.2, 0.1)]
    [InlineData(0.4, 0.3)]
    [InlineData(0.75, 0.745)]
    [InlineData(1.0, 0.99)]
    public void A_curve_is_a_step_function_joined_by_straight_lines_and_flat_beyond_its_ends(double model, double expected) =>
        Assert.Equal(expected, ConfidenceMap.Parse(Map).Map(FormatFamily.Biphase, ConfidenceGroup.Clean, model), 9);

    [Fact]
    public void A_family_or_group_the_map_does_not_hold_keeps_the_model_confidence() =>
        Assert.Equal(0.42, ConfidenceMap.Parse(Map).Map(FormatFamily.Fsk, ConfidenceGroup.Clean, 0.42), 9);

    [Fact]
    public void A_family_without_its_own_curve_for_a_group_takes_the_curve_pooled_over_every_family()
    {
        var map = ConfidenceMap.Parse("""
            { "curves": { "all/HoldsUnproven": { "readings": 700, "x": [0.1, 0.9], "y": [0.7, 0.95] },
                          "fsk/HoldsUnproven": { "readings": 300, "x": [0.5], "y": [0.2] } } }
            """);

        Assert.Equal(0.2, map.Map(FormatFamily.Fsk, ConfidenceGroup.HoldsUnproven, 0.9), 9);
        Assert.Equal(0.95, map.Map(FormatFamily.Biphase, ConfidenceGroup.HoldsUnproven, 0.999), 9);
        Assert.Equal(0.31, map.Map(FormatFamily.Biphase, ConfidenceGroup.Unchecked, 0.31), 9);
    }

    [Fact]
    public void A_profile_with_a_curve_of_its_own_takes_it_and_other_profiles_of_its_family_take_the_familys()
    {
        // Formats of one family differ: a three-class pair format's failed readings are not a one-cycle format's.
        var map = ConfidenceMap.Parse("""
            { "curves": { "pulse-width/Broken": { "readings": 900, "x": [0.1], "y": [0.09] },
                          "profile:three-class-pairs/Broken": { "readings": 500, "x": [0.1], "y": [0.01] } } }
            """);

        Assert.Equal(0.01, map.Map("three-class-pairs", FormatFamily.PulseWidth, ConfidenceGroup.Broken, 0.1), 9);
        Assert.Equal(0.09, map.Map("one-cycle-bits", FormatFamily.PulseWidth, ConfidenceGroup.Broken, 0.1), 9);
        Assert.Equal(0.09, map.Map(null, FormatFamily.PulseWidth, ConfidenceGroup.Broken, 0.1), 9);
        Assert.Equal("profile:three-class-pairs/Broken", ConfidenceMap.ProfileKey("three-class-pairs", ConfidenceGroup.Broken));
    }

    [Theory]
    [InlineData("""{ "curves": { "fsk/Clean": { "readings": 400, "x": [0.5, 0.4], "y": [0.1, 0.2] } } }""")]
    [InlineData("""{ "curves": { "fsk/Clean": { "readings": 400, "x": [0.4, 0.5], "y": [0.3, 0.2] } } }""")]
    [InlineData("""{ "curves": { "fsk/Clean": { "readings": 400, "x": [0.4], "y": [1.2] } } }""")]
    [InlineData("""{ "curves": { "fsk/Clean": { "readings": 400, "x": [0.4, 0.5], "y": [0.2] } } }""")]
    [InlineData("""{ "curves": { "fsk/Clean": { "readings": 199, "x": [0.4], "y": [0.5] } } }""")]
    [InlineData("""{ "curves": { "fsk/Clean": { "x": [0.4], "y": [0.5] } } }""")]
    public void A_curve_that_falls_leaves_0_to_1_is_uneven_or_rests_on_too_few_readings_cannot_be_loaded(string json) =>
        Assert.Throws<FormatException>(() => ConfidenceMap.Parse(json));

    [Theory]
    [InlineData(BlockStatus.Clean, BlockDoubts.None, ConfidenceGroup.Clean)]
    [InlineData(BlockStatus.Failed, BlockDoubts.Uncorroborated, ConfidenceGroup.HoldsUnproven)]
    [InlineData(BlockStatus.Failed, BlockDoubts.AllAlikeCheck | BlockDoubts.FramingErrors, ConfidenceGroup.HoldsUnproven)]
    [InlineData(BlockStatus.Failed, BlockDoubts.ChecksumMismatch, ConfidenceGroup.Broken)]
    [InlineData(BlockStatus.Failed, BlockDoubts.CutShort | BlockDoubts.NoStartEvidence, ConfidenceGroup.Broken)]
    [InlineData(BlockStatus.Unchecked, BlockDoubts.None, ConfidenceGroup.Unchecked)]
    public void Readings_are_calibrated_by_what_their_check_said(BlockStatus status, BlockDoubts doubts, ConfidenceGroup group) =>
        Assert.Equal(group, ConfidenceMap.GroupOf(status, doubts));

    [Fact]
    public void The_product_map_was_fitted_on_tuning_seeds_only_and_says_how_to_refit_it()
    {
        var map = ConfidenceMap.Default;

        // Held-out seeds (20000 and above) are where the trust benchmark reports; none may have shaped the map.
        var seeds = SeedRange().Match(map.Provenance);
        Assert.True(seeds.Success, map.Provenance);
        Assert.True(int.Parse(seeds.Groups[2].Value, System.Globalization.CultureInfo.InvariantCulture) < 20_000, map.Provenance);
        Assert.Contains("trust-fit", map.Provenance, StringComparison.Ordinal);

        // Never falling: a reading the model trusts more is never shown as less likely right.
        foreach (var family in Enum.GetValues<FormatFamily>())
        {
            foreach (var group in Enum.GetValues<ConfidenceGroup>())
            {
                double last = 0;
                for (int i = 0; i <= 100; i++)
                {
                    double c = map.Map(family, group, i / 100.0);
                    Assert.InRange(c, last, 1);
                    last = c;
                }
            }
        }
    }

    [GeneratedRegex(@"seeds (\d+)–(\d+)")]
    private static partial Regex SeedRange();
}
