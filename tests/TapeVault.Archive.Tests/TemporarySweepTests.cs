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
}
