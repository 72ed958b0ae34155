using TapeVault.Core.Blocks;
using TapeVault.Core.Image;
using TapeVault.Core.Text;
using Xunit;

namespace TapeVault.Core.Tests.Text;

/// <summary>The one table of status names that the web app, the command line, the JSON, the archive and the image container share.</summary>
public sealed class VocabularyTests
{
    [Fact]
    public void EveryReadingAndPositionStatus_HasOneTerm_WithDistinctNamesAndSymbols()
    {
        var terms = Enum.GetValues<BlockStatus>().Select(Vocabulary.Of)
            .Concat(Enum.GetValues<RecoveryStatus>().Select(Vocabulary.Of))
            .Append(Vocabulary.None)
            .Distinct()
            .ToList();

        Assert.Equal(Vocabulary.All.Count, terms.Count);
        Assert.Equal(terms.Count, terms.Select(t => t.Name).Distinct().Count());
        Assert.Equal(terms.Count, terms.Select(t => t.Symbol).Distinct().Count());
        Assert.All(terms, t => Assert.Same(t, Vocabulary.Of(t.Name)));
        Assert.All(terms, t => Assert.EndsWith(".", t.Meaning, StringComparison.Ordinal));
    }

    [Fact]
    public void UnknownName_ReadsAsItself_WithAQuestionMark()
    {
        var term = Vocabulary.Of("smudged");
        Assert.Equal(("?", "smudged"), (term.Symbol, term.Word));
    }

    [Theory]
    [InlineData(1.0312, "+3.12 %")]
    [InlineData(0.93, "-7.00 %")]
    [InlineData(1.0, "0.00 %")]
    public void Speed_ReadsAsASignedPercentage(double speed, string expected) =>
        Assert.Equal(expected, Vocabulary.SpeedPercent(speed));
}
