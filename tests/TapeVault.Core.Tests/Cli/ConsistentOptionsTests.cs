using TapeVault.Archive;
using TapeVault.Archive.Curation;
using TapeVault.Cli;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Tests.Image;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Cli;

/// <summary>
/// One way to name things across the commands: outputs by --out (the older positional forms still work and may not
/// disagree with it), collections by id or by exact name in any case (a shared name is refused with the choices).
/// </summary>
public sealed class ConsistentOptionsTests : IDisposable
{
    private readonly OutsideTempFolder temp = new();

    public void Dispose() => temp.Dispose();

    [Theory]
    [InlineData("Test shelf")]
    [InlineData("TEST SHELF")]
    [InlineData("1")]
    public void Publish_FindsTheCollectionByIdOrByNameInAnyCase(string collection)
    {
        var (database, store) = Archive("publish-" + collection.Replace(' ', '-'));
        string site = Path.Combine(temp.NewFolder("site-root"), "site");

        var run = CliRun.Run("publish", collection, "--out", site, "--database", database, "--store", store);

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.True(File.Exists(Path.Combine(site, "index.html")), run.ToString());
        Assert.Contains("Test shelf", File.ReadAllText(Path.Combine(site, "index.html")), StringComparison.Ordinal);
    }

    [Fact]
    public void ExportAndVerify_FindTheCollectionByName_Too()
    {
        var (database, store) = Archive("by-name");
        string bag = Path.Combine(temp.NewFolder("bag-root"), "bag");

        var export = CliRun.Run("export", "bag", "--collection", "test shelf", "--out", bag, "--database", database, "--store", store);
        var verify = CliRun.Run("verify", "--collection", "Test Shelf", "--database", database, "--store", store);

        Assert.True(export.ExitCode == 0, export.ToString());
        Assert.True(File.Exists(Path.Combine(bag, "bagit.txt")), export.ToString());
        Assert.True(verify.ExitCode == 0, verify.ToString());
    }

    [Fact]
    public void ANameSeveralCollectionsShare_IsRefused_WithTheirIds()
    {
        var (database, store) = Archive("twins", "Twin", "twin");
        string root = temp.NewFolder("twins-root");

        var run = CliRun.Run("publish", "TWIN", "--out", Path.Combine(root, "site"), "--database", database, "--store", store);

        Assert.Equal(2, run.ExitCode);
        var line = Assert.Single(run.ErrorLines);
        Assert.Contains("2 \"Twin\"", line, StringComparison.Ordinal);
        Assert.Contains("3 \"twin\"", line, StringComparison.Ordinal);
        Assert.Contains("give the id", line, StringComparison.Ordinal);
        Assert.Empty(Directory.GetFileSystemEntries(root));
    }

    [Fact]
    public void AnUnknownName_IsRefused_WithTheCollectionsThereAre()
    {
        var (database, store) = Archive("unknown");

        var run = CliRun.Run("verify", "--collection", "Shelf Z", "--database", database, "--store", store);

        Assert.Equal(2, run.ExitCode);
        Assert.Contains("1 \"Test shelf\"", Assert.Single(run.ErrorLines), StringComparison.Ordinal);
    }

    [Fact]
    public void ImageExtract_TakesItsFolderByOut_AsByTheWordAfterTheImage_AndRefusesTwoDifferentOnes()
    {
        string image = temp.File("tape" + TapeImageContainer.Extension);
        File.WriteAllBytes(image, ImageSamples.Container(ImageSamples.Standard()));
        string root = temp.NewFolder("extract");

        var byOut = CliRun.Run("image", "extract", image, "--out", Path.Combine(root, "a"), "--partial");
        var byWord = CliRun.Run("image", "extract", image, Path.Combine(root, "b"), "--partial");
        var both = CliRun.Run("image", "extract", image, Path.Combine(root, "c"), "--out", Path.Combine(root, "d"));
        var neither = CliRun.Run("image", "extract", image);

        Assert.True(byOut.ExitCode == 0, byOut.ToString());
        Assert.True(byWord.ExitCode == 0, byWord.ToString());
        Assert.Equal(
            Directory.GetFiles(Path.Combine(root, "a")).Select(Path.GetFileName).Order(StringComparer.Ordinal),
            Directory.GetFiles(Path.Combine(root, "b")).Select(Path.GetFileName).Order(StringComparer.Ordinal));
        foreach (var refused in new[] { both, neither })
        {
            Assert.Equal(2, refused.ExitCode);
            Assert.Contains("--out", Assert.Single(refused.ErrorLines), StringComparison.Ordinal);
        }

        Assert.Equal(["a", "b"], Directory.GetFileSystemEntries(root).Select(Path.GetFileName).Order(StringComparer.Ordinal));
    }

    [Fact]
    public void Synth_WritesTheCaptureNamedByOut_AsByTheFirstWord()
    {
        string root = temp.NewFolder("synth");
        string byOut = Path.Combine(root, "by-out.wav");
        string byWord = Path.Combine(root, "by-word.wav");

        var first = CliRun.Run("synth", "--out", byOut, "--profile", "kcs-300", "--text", "HI", "--seed", "4");
        var second = CliRun.Run("synth", byWord, "--profile", "kcs-300", "--text", "HI", "--seed", "4");

        Assert.True(first.ExitCode == 0, first.ToString());
        Assert.True(second.ExitCode == 0, second.ToString());

        // GNU sha256sum, an outside tool, judges the two captures the same bytes.
        Assert.Equal(OutsideTool.Sha256Sum(byWord), OutsideTool.Sha256Sum(byOut));
    }

    [Fact]
    public void NegativeNumbersAreValues_AndAWordStartingWithAnAtSignIsAFileName()
    {
        string root = temp.NewFolder("words");
        string capture = Path.Combine(root, "@tape.wav");

        var run = CliRun.Run("synth", "--out", capture, "--profile", "kcs-300", "--text", "HI", "--azimuth", "-2", "--snr", "-5");
        var decode = CliRun.Run("decode", capture, "--profile", "kcs-300");

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.True(File.Exists(capture), run.ToString());
        Assert.True(decode.ExitCode == 0, decode.ToString());
    }

    /// <summary>A new archive: collection 1 "Test shelf" with one item, then further collections by the names given.</summary>
    private (string Database, string Store) Archive(string name, params string[] more)
    {
        string folder = temp.NewFolder(name + "-archive");
        var (database, store) = CliArchive.Create(Path.Combine(folder, "archive.db"), Path.Combine(folder, "store"));
        using (var session = ArchiveSession.Open(database, store, new CliSettings()))
        {
            var curator = new CuratorActions(session.Get<ArchiveDbContext>(), ProfileCatalog.BuiltIn);
            foreach (string collection in more)
            {
                curator.CreateCollectionAsync(collection, null, "test").GetAwaiter().GetResult();
            }
        }

        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        return (database, store);
    }
}
