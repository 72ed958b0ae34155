using TapeVault.Cli.Commands;
using TapeVault.Core.Image;
using TapeVault.Core.Tests.Image;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Cli;

/// <summary>
/// tapevault image verify: exit 0 and a summary for a whole image, 1 and one line on standard error for a damaged one.
/// tapevault image extract: the named files under safe names, incomplete ones only with --partial and said so.
/// </summary>
public sealed class ImageCommandTests : IDisposable
{
    private readonly OutsideTempFolder temp = new();
    private readonly TapeImage image = ImageSamples.Standard();

    public void Dispose() => temp.Dispose();

    [Fact]
    public void Verify_ExitsZero_AndPrintsVersionCountsAndTheSha256ThatGnuSha256sumGives()
    {
        string path = WriteImage("good");

        var run = CliRun.Run("image", "verify", path);

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Equal(string.Empty, run.Error);
        Assert.Contains("container version 2", run.Output, StringComparison.Ordinal);
        Assert.Contains("9: 6 clean, 1 voted, 1 repaired, 1 missing", run.Output, StringComparison.Ordinal);
        Assert.Contains("4: 3 complete, 1 incomplete", run.Output, StringComparison.Ordinal);

        // Outside reference: GNU coreutils' sha256sum of the image file.
        Assert.Contains(OutsideTool.Sha256Sum(path), run.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Verify_ExitsOne_WithOneLineOnStandardError_ForAFlippedByte()
    {
        string path = WriteImage("flipped");
        byte[] bytes = File.ReadAllBytes(path);
        bytes[bytes.Length / 2] ^= 0x40;
        File.WriteAllBytes(path, bytes);

        var run = CliRun.Run("image", "verify", path);

        Assert.Equal(1, run.ExitCode);
        Assert.Equal(string.Empty, run.Output);
        var line = Assert.Single(run.ErrorLines);
        Assert.Contains("SHA-256", line, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("image", "verify")]
    [InlineData("image", "check", "x")]
    [InlineData("image")]
    [InlineData("image", "verify", "no-such-file.tvimg")]
    [InlineData("image", "extract", "no-such-file.tvimg", "out")]
    [InlineData("image", "verify", "x", "--partial")]
    public void ImageCommand_ExitsTwoWithOneLine_ForBadUsage(params string[] args)
    {
        var run = CliRun.Run([.. args.Select(a => a.Contains("no-such", StringComparison.Ordinal) ? temp.File(a) : a)]);

        Assert.Equal(2, run.ExitCode);
        Assert.Single(run.ErrorLines);
    }

    [Fact]
    public void Extract_WritesCompleteFilesUnderSafeNames_AndSkipsTheIncompleteOne_ExitingThree()
    {
        string path = WriteImage("extract");
        string folder = Path.Combine(temp.NewFolder("extract-root"), "files");

        var run = CliRun.Run("image", "extract", path, folder);

        // A file left out is not success: a script must not take three files for four.
        Assert.True(run.ExitCode == 3, run.ToString());

        // Ground truth: the payloads the sample image was built from, and nothing outside the folder.
        Assert.Equal(["DATA", "HELLO", "______x_"], Directory.GetFiles(folder).Select(f => Path.GetFileName(f)!).Order(StringComparer.Ordinal).ToArray());
        Assert.Equal([.. image.Blocks[0].Payload, .. image.Blocks[1].Payload], File.ReadAllBytes(Path.Combine(folder, "HELLO")));
        Assert.Equal(image.Blocks[2].Payload.ToArray(), File.ReadAllBytes(Path.Combine(folder, "______x_")));
        Assert.Equal(["extract-root"], Directory.GetDirectories(temp.Root).Select(d => Path.GetFileName(d)!).ToArray());
        Assert.Contains("skipped  GAME", run.Output, StringComparison.Ordinal);
        Assert.Contains("position 4 missing at byte 64", run.Output, StringComparison.Ordinal);
        Assert.Contains("--partial", run.Output, StringComparison.Ordinal);
        Assert.Contains("(named \"../../x\\x07\" on tape)", run.Output, StringComparison.Ordinal);
        Assert.Contains("3 of 4 file(s) written", run.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void ExtractPartial_WritesTheIncompleteFileWithItsGapClosedAndSaysSo()
    {
        string path = WriteImage("partial");
        string folder = temp.NewFolder("partial-files");

        var run = CliRun.Run("image", "extract", path, folder, "--partial");

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Equal([.. image.Blocks[3].Payload, .. image.Blocks[5].Payload], File.ReadAllBytes(Path.Combine(folder, "GAME")));
        Assert.Contains("partial  GAME", run.Output, StringComparison.Ordinal);
        Assert.Contains("position 4 missing at byte 64", run.Output, StringComparison.Ordinal);
        Assert.Contains("4 of 4 file(s) written", run.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Extract_ExitsOne_AndWritesNothing_ForADamagedImage()
    {
        string path = WriteImage("damaged");
        File.WriteAllBytes(path, File.ReadAllBytes(path)[..^1]);
        string folder = temp.NewFolder("damaged-files");

        var run = CliRun.Run("image", "extract", path, folder);

        Assert.Equal(1, run.ExitCode);
        Assert.Single(run.ErrorLines);
        Assert.Empty(Directory.GetFileSystemEntries(folder));
    }

    [Fact]
    public void Extract_RefusesToReplaceAFileAlreadyThere_NamingIt_AndWritesNothing_UnlessToldToOverwrite()
    {
        string path = WriteImage("again");
        string folder = temp.NewFolder("again-files");
        File.WriteAllText(Path.Combine(folder, "HELLO"), "a letter kept here before");
        File.WriteAllText(Path.Combine(folder, "notes.txt"), "not on the tape");

        var refused = CliRun.Run("image", "extract", path, folder);

        Assert.True(refused.ExitCode == ImageExtractCommand.WouldOverwrite, refused.ToString());
        var line = Assert.Single(refused.ErrorLines);
        Assert.Contains("'HELLO'", line, StringComparison.Ordinal);
        Assert.Contains("--overwrite", line, StringComparison.Ordinal);
        Assert.Equal("a letter kept here before", File.ReadAllText(Path.Combine(folder, "HELLO")));
        Assert.Equal(["HELLO", "notes.txt"], Directory.GetFileSystemEntries(folder).Select(f => Path.GetFileName(f)!).Order(StringComparer.Ordinal).ToArray());

        var replaced = CliRun.Run("image", "extract", path, folder, "--overwrite");

        Assert.True(replaced.ExitCode == ImageExtractCommand.FilesLeftOut, replaced.ToString());
        Assert.Equal([.. image.Blocks[0].Payload, .. image.Blocks[1].Payload], File.ReadAllBytes(Path.Combine(folder, "HELLO")));
        Assert.Equal("not on the tape", File.ReadAllText(Path.Combine(folder, "notes.txt")));
        Assert.Contains("1 replaced: 'HELLO'", replaced.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Extract_RefusesAFolderWhereAFileWouldGo_EvenWithOverwrite()
    {
        string path = WriteImage("folder-in-way");
        string folder = temp.NewFolder("folder-in-way-files");
        Directory.CreateDirectory(Path.Combine(folder, "DATA"));

        var run = CliRun.Run("image", "extract", path, folder, "--overwrite");

        Assert.True(run.ExitCode == ImageExtractCommand.WouldOverwrite, run.ToString());
        Assert.Contains("'DATA'", Assert.Single(run.ErrorLines), StringComparison.Ordinal);
        Assert.Equal(["DATA"], Directory.GetFileSystemEntries(folder).Select(f => Path.GetFileName(f)!).ToArray());
    }

    private string WriteImage(string name)
    {
        string path = temp.File(name + TapeImageContainer.Extension);
        File.WriteAllBytes(path, ImageSamples.Container(image));
        return path;
    }
}
