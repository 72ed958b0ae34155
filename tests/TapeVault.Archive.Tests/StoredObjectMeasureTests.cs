using TapeVault.Archive.Storage;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// The fixity audit reads each stored object once for its hash and its length; both must be what an outside tool reads.
/// </summary>
public sealed class StoredObjectMeasureTests
{
    [Fact]
    public async Task A_stored_object_measures_as_GNU_sha256sum_and_its_length_say_and_a_gone_one_measures_as_nothing()
    {
        await using var archive = await JobArchive.CreateAsync();
        var store = new ContentStore(archive.StorePath);

        // Longer than one read of the hash's buffer (1 MiB) and not a multiple of it, so every piece and the last short
        // one count; exactly one buffer; one that fits in it (hashed in one call); and an empty one.
        foreach (int size in new[] { (5 * 1024 * 1024) + 12_345, 1024 * 1024, 68_017, 0 })
        {
            var bytes = new byte[size];
            new Random(20261204 + size).NextBytes(bytes);
            using var staged = await store.StageAsync(s => s.WriteAsync(bytes).AsTask());
            Assert.True(staged.Commit());

            var facts = store.MeasureStored(staged.Sha256);

            // Outside reference: GNU coreutils' sha256sum over the stored file (FIPS 180-4 SHA-256), and the file's length
            // as the file system gives it.
            Assert.NotNull(facts);
            string path = store.PathOf(staged.Sha256);
            Assert.Equal(ArchiveFixture.Sha256Sum(path), facts.Sha256);
            Assert.Equal(new FileInfo(path).Length, facts.Length);
            Assert.Equal(bytes.LongLength, facts.Length);
            Assert.Equal(facts.Sha256, store.HashStored(staged.Sha256));

            // One byte changed behind the store's back (its last, where a short last piece ends) measures as what
            // sha256sum then says, not as the name.
            if (size > 0)
            {
                File.SetAttributes(path, FileAttributes.Normal);
                bytes[^1] ^= 0x01;
                await File.WriteAllBytesAsync(path, bytes);
                var changed = store.MeasureStored(staged.Sha256);
                Assert.NotNull(changed);
                Assert.NotEqual(staged.Sha256, changed.Sha256);
                Assert.Equal(ArchiveFixture.Sha256Sum(path), changed.Sha256);
            }

            File.Delete(path);
            Assert.Null(store.MeasureStored(staged.Sha256));
            Assert.Null(store.HashStored(staged.Sha256));
        }
    }
}
