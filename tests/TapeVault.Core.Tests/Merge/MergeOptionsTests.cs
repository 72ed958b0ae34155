using TapeVault.Core.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Merge;

/// <summary>
/// The merge's bounds are validated when the options are built (and when one is changed with <c>with</c>): a bound
/// the repair search or the stream merge cannot work with is refused at once, and the error names the field.
/// </summary>
public sealed class MergeOptionsTests
{
    [Fact]
    public void The_defaults_are_valid()
    {
        var options = new MergeOptions();
        Assert.Equal(12, options.RepairBits);
        Assert.Equal(4096, options.TrialsAfterHit);
    }

    [Theory]
    [InlineData(nameof(MergeOptions.RepairBits), -1)]
    [InlineData(nameof(MergeOptions.RepairBits), 31)]
    [InlineData(nameof(MergeOptions.MaximumTrials), 0)]
    [InlineData(nameof(MergeOptions.MaximumTrials), -5)]
    [InlineData(nameof(MergeOptions.TrialsAfterHit), -1)]
    [InlineData(nameof(MergeOptions.TrialsAfterHit), int.MinValue)]
    public void A_bound_out_of_range_is_refused_and_named(string field, int value)
    {
        var error = Assert.Throws<ArgumentOutOfRangeException>(() => field switch
        {
            nameof(MergeOptions.RepairBits) => new MergeOptions { RepairBits = value },
            nameof(MergeOptions.MaximumTrials) => new MergeOptions { MaximumTrials = value },
            _ => new MergeOptions() with { TrialsAfterHit = value },
        });
        Assert.Equal(field, error.ParamName);
        Assert.Contains(field, error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(nameof(MergeOptions.StreamByteErrorFloor), -1e-9)]
    [InlineData(nameof(MergeOptions.StreamByteErrorFloor), 1.0)]
    [InlineData(nameof(MergeOptions.StreamByteErrorFloor), double.NaN)]
    [InlineData(nameof(MergeOptions.StreamAfterGapFactor), 0.0)]
    [InlineData(nameof(MergeOptions.StreamAfterGapFactor), 1.5)]
    [InlineData(nameof(MergeOptions.StreamAfterGapFactor), double.NaN)]
    public void A_chance_or_factor_out_of_range_is_refused_and_named(string field, double value)
    {
        var error = Assert.Throws<ArgumentOutOfRangeException>(() => field == nameof(MergeOptions.StreamByteErrorFloor)
            ? new MergeOptions { StreamByteErrorFloor = value }
            : new MergeOptions { StreamAfterGapFactor = value });
        Assert.Equal(field, error.ParamName);
    }

    [Fact]
    public void The_edges_of_each_range_are_taken()
    {
        var options = new MergeOptions { RepairBits = 0, MaximumTrials = 1, TrialsAfterHit = 0, StreamByteErrorFloor = 0, StreamAfterGapFactor = 1 };
        Assert.Equal(0, options.TrialsAfterHit);
        Assert.Equal(30, (options with { RepairBits = 30 }).RepairBits);
    }

    [Fact]
    public void A_missing_clock_is_refused_and_named()
    {
        var error = Assert.Throws<ArgumentNullException>(() => new MergeOptions { Clock = null! });
        Assert.Equal(nameof(MergeOptions.Clock), error.ParamName);
    }
}
