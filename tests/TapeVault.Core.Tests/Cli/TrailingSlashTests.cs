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
/// Output folders typed with a trailing slash, as the README writes them ("files/", "bag/", "site/"), are the same
/// folders as without it; a refused export or publish leaves nothing behind.
/// </summary>
public sealed class TrailingSlashTests : IDisposable
{
    private readonly OutsideTempFolder temp = new();

    public void Dispose() => temp.Dispose();

    [Fact]
    public void ImageExtract_WritesIntoTheFolderNamedWithATrailingSlash()
    {
        string image = temp.File("tape" + TapeImageContainer.Extension);
        File.WriteAllBytes(image, ImageSamples.Container(ImageSamples.Standard()));
        string root = temp.NewFolder("extract-root");

        var run = CliRun.Run("image", "extract", image, Path.Combine(root, "files") + Path.DirectorySeparatorChar, "--partial");

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Equal(["files"], Directory.GetFileSystemEntries(root).Select(e => Path.GetFileName(e)!).ToArray());
        Assert.Equal(4, Directory.GetFiles(Path.Combine(root, "files")).Length);
    }

    [Fact]
    public void ExportBag_WritesTheBagIntoTheFolderNamedWithATrailingSlash_AndNothingElse()
    {
        var (database, store) = Archive("export");
        string root = temp.NewFolder("export-root");

        var run = CliRun.Run("export", "bag", "--item", "T-0001", "--out", Path.Combine(root, "bag") + "/", "--database", database, "--store", store);

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Equal(["bag"], Directory.GetFileSystemEntries(root).Select(e => Path.GetFileName(e)!).ToArray());

        // RFC 8493 §2.1.1: a bag's top folder holds bagit.txt and the payload folder data/.
        Assert.True(File.Exists(Path.Combine(root, "bag", "bagit.txt")), run.ToString());
        Assert.True(Directory.Exists(Path.Combine(root, "bag", "data")), run.ToString());
    }

    [Fact]
    public void ExportBag_RefusedForAnUnknownCollection_LeavesNothingBehind()
    {
        var (database, store) = Archive("export-refused");
        string root = temp.NewFolder("export-refused-root");

        var run = CliRun.Run("export", "bag", "--collection", "99", "--out", Path.Combine(root, "bag") + "/", "--database", database, "--store", store);

        Assert.Equal(2, run.ExitCode);
        Assert.Single(run.ErrorLines);
        Assert.Empty(Directory.GetFileSystemEntries(root));
    }

    [Fact]
    public void Publish_WritesTheCatalogueIntoTheFolderNamedWithATrailingSlash_AndNothingElse()
    {
        var (database, store) = Archive("publish");
        string root = temp.NewFolder("publish-root");

        var run = CliRun.Run("publish", "1", Path.Combine(root, "site") + "/", "--database", database, "--store", store);

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Equal(["site"], Directory.GetFileSystemEntries(root).Select(e => Path.GetFileName(e)!).ToArray());
        Assert.True(File.Exists(Path.Combine(root, "site", "index.html")), run.ToString());
    }

    [Fact]
    public void Publish_RefusedForAnUnknownCollection_LeavesNothingBehind()
    {
        var (database, store) = Archive("publish-refused");
        string root = temp.NewFolder("publish-refused-root");

        var run = CliRun.Run("publish", "99", Path.Combine(root, "site") + "/", "--database", database, "--store", store);

        Assert.Equal(2, run.ExitCode);
        Assert.Single(run.ErrorLines);
        Assert.Empty(Directory.GetFileSystemEntries(root));
    }

    /// <summary>A new archive with collection 1 holding one item, T-0001, with no captures.</summary>
    private (string Database, string Store) Archive(string name)
    {
        string folder = temp.NewFolder(name + "-archive");
        string database = Path.Combine(folder, "archive.db");
        string store = Path.Combine(folder, "store");
        return CliArchive.Create(database, store);
    }
}

/// <summary>A temporary archive for the archive commands: collection 1 holding one item (T-0001 unless told).</summary>
internal static class CliArchive
{
    public static (string Database, string Store) Create(string database, string store, string accession = "T-0001")
    {
        using (var session = ArchiveSession.Open(database, store, new CliSettings()))
        {
            var curator = new CuratorActions(session.Get<ArchiveDbContext>(), ProfileCatalog.BuiltIn);
            var collection = curator.CreateCollectionAsync("Test shelf", null, "test").GetAwaiter().GetResult();
            curator.CreateItemAsync(collection.Id, accession, "Test tape", null, null, null, "test").GetAwaiter().GetResult();
        }

        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        return (database, store);
    }
}
