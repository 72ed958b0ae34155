using TapeVault.Archive.Storage;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>What a crash leaves in the store's temporary folder is swept at the next start, whatever kind of work left it.</summary>
public sealed class TemporarySweepTests
{
    [Fact]
    public async Task Sweep_RemovesStagedFiles_AndHalfWrittenCatalogueAndDemoFolders_ButNoObject()
    {
        var root = Directory.CreateTempSubdirectory("tapevault-sweep-test-").FullName;
        try
        {
            var store = new ContentStore(root);
            using var staged = await store.StageAsync(new MemoryStream([1, 2, 3]), 1024);
            Assert.True(staged.Commit());
            string stored = staged.Sha256;
            File.WriteAllText(Path.Combine(store.TempFolder, "0123.part"), "staged upload");
            File.WriteAllText(Path.Combine(store.TempFolder, "4567.overview.part"), "plot cache");
            var catalogue = Directory.CreateDirectory(Path.Combine(store.TempFolder, "catalogue-89ab", "items")).FullName;
            File.WriteAllText(Path.Combine(catalogue, "T-1.html"), "<p>half written</p>");
            Directory.CreateDirectory(Path.Combine(store.TempFolder, "demo-cdef"));

            Assert.Equal(4, store.SweepTemporaryFiles());

            Assert.Empty(Directory.EnumerateFileSystemEntries(store.TempFolder));
            Assert.Contains(stored, store.EnumerateHashes());
        }
        finally
        {
            foreach (var file in Directory.EnumerateFiles(root, "*", SearchOption.AllDirectories))
            {
                File.SetAttributes(file, FileAttributes.Normal);
            }

            Directory.Delete(root, recursive: true);
        }
    }

    [Fact]
    public void Sweep_OfAStoreOtherNodesWriteTo_LeavesTheirWorkInProgress_AndRemovesOnlyOldLeftovers()
    {
        var root = Directory.CreateTempSubdirectory("tapevault-sweep-test-").FullName;
        try
        {
            var store = new ContentStore(root);
            string fresh = Path.Combine(store.TempFolder, "another-node.part");
            string old = Path.Combine(store.TempFolder, "left-by-a-crash.part");
            File.WriteAllText(fresh, "a worker's merge being staged");
            File.WriteAllText(old, "an upload a crash cut off");
            File.SetLastWriteTimeUtc(old, DateTime.UtcNow.AddDays(-2));
            var oldFolder = Directory.CreateDirectory(Path.Combine(store.TempFolder, "catalogue-old")).FullName;
            Directory.SetLastWriteTimeUtc(oldFolder, DateTime.UtcNow.AddDays(-2));

            Assert.Equal(2, store.SweepTemporaryFiles(TimeSpan.FromDays(1)));

            Assert.True(File.Exists(fresh));
            Assert.False(File.Exists(old));
            Assert.False(Directory.Exists(oldFolder));
        }
        finally
        {
            Directory.Delete(root, recursive: true);
        }
    }
}
