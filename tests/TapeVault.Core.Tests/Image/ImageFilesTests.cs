using TapeVault.Core.Image;
using Xunit;

namespace TapeVault.Core.Tests.Image;

/// <summary>Each named file is its positions' payloads in order; a missing position is reported, never filled.</summary>
public sealed class ImageFilesTests
{
    [Fact]
    public void CompleteFile_IsItsPayloadsInOrder()
    {
        var image = ImageSamples.Standard();

        var files = ImageFiles.Extract(image);

        // Ground truth: the payloads the sample image was built from.
        var data = files[3];
        Assert.True(data.Complete, data.DescribeGaps());
        Assert.Equal([.. image.Blocks[6].Payload, .. image.Blocks[7].Payload, .. image.Blocks[8].Payload], data.Bytes.ToArray());
        Assert.Equal(data.File.Length, data.Bytes.Length);
        Assert.True(files[0].Complete);
        Assert.Equal([.. image.Blocks[0].Payload, .. image.Blocks[1].Payload], files[0].Bytes.ToArray());
    }

    [Fact]
    public void FileWithAMissingPosition_IsIncomplete_AndItsGapIsReportedNotFilled()
    {
        var image = ImageSamples.Standard();

        var game = ImageFiles.Extract(image)[2];

        Assert.False(game.Complete);
        var stretch = Assert.Single(game.Missing);
        Assert.Equal(new MissingStretch(4, 4, image.Blocks[3].Payload.Length), stretch);
        Assert.Equal([.. image.Blocks[3].Payload, .. image.Blocks[5].Payload], game.Bytes.ToArray());
        Assert.Equal("position 4 missing at byte 64", game.DescribeGaps());
    }

    [Fact]
    public void RunOfMissingPositionsAtTheEnd_IsOneStretch()
    {
        var image = ImageSamples.Standard();
        var blocks = image.Blocks;
        foreach (int p in new[] { 7, 8 })
        {
            blocks = blocks.SetItem(p, blocks[p] with { Status = RecoveryStatus.Missing, Payload = [], Confidence = 0 });
        }

        var data = ImageFiles.Extract(image with { Blocks = blocks })[3];

        Assert.Equal([new MissingStretch(7, 8, 64)], data.Missing.ToArray());
        Assert.Equal(image.Blocks[6].Payload.ToArray(), data.Bytes.ToArray());
    }

    [Fact]
    public void FileWhoseLengthDisagreesWithItsBlocks_IsIncomplete()
    {
        var image = ImageSamples.Standard();
        var files = image.Files.SetItem(0, image.Files[0] with { Length = image.Files[0].Length + 10 });

        var hello = ImageFiles.Extract(image with { Files = files })[0];

        Assert.False(hello.Complete);
        Assert.Empty(hello.Missing);
        Assert.Contains("not the", hello.DescribeGaps(), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("HELLO\0\0\0", "HELLO")]
    [InlineData("GAME    ", "GAME")]
    [InlineData("../../x\a", "______x_")]
    [InlineData("..", "__")]
    [InlineData(".", "_")]
    [InlineData(".profile", "_profile")]
    [InlineData("a..b", "a__b")]
    [InlineData("a.b", "a.b")]
    [InlineData("C:\\TAPE\\ONE", "C__TAPE_ONE")]
    [InlineData("\u001b[31mRED", "_[31mRED")]
    [InlineData("\0\0\0\0", "unnamed")]
    [InlineData("", "unnamed")]
    public void Sanitise_LeavesNoSeparatorNoDotDotNoControlCharacter(string fromTape, string expected)
    {
        string name = SafeFileNames.Sanitise(fromTape);

        Assert.Equal(expected, name);
        Assert.DoesNotContain('/', name);
        Assert.DoesNotContain('\\', name);
        Assert.DoesNotContain("..", name, StringComparison.Ordinal);
        Assert.DoesNotContain(name, c => char.IsControl(c));
        Assert.Equal(name, Path.GetFileName(name));
    }

    [Fact]
    public void Assign_GivesNamesAlikeOnTapeDistinctNames()
    {
        var names = SafeFileNames.Assign(["GAME.BAS", "game.bas", "GAME.BAS", "OTHER"]);

        Assert.Equal(["GAME.BAS", "game~2.bas", "GAME~3.BAS", "OTHER"], names.ToArray());
    }
}
