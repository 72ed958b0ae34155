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

        // Longer than one read of the hash's buffer, and not a multiple of it, so every piece and the last short one count.
        var bytes = new byte[(5 * 1024 * 1024) + 12_345];
        new Random(20261204).NextBytes(bytes);
        using var staged = await store.StageAsync(s => s.WriteAsync(bytes).AsTask());
        Assert.True(staged.Commit());

        var facts = await store.MeasureStoredAsync(staged.Sha256);

        // Outside reference: GNU coreutils' sha256sum over the stored file (FIPS 180-4 SHA-256), and the file's length as
        // the file system gives it.
        Assert.NotNull(facts);
        Assert.Equal(ArchiveFixture.Sha256Sum(store.PathOf(staged.Sha256)), facts.Sha256);
        Assert.Equal(new FileInfo(store.PathOf(staged.Sha256)).Length, facts.Length);
        Assert.Equal(bytes.LongLength, facts.Length);
        Assert.Equal(facts.Sha256, await store.HashStoredAsync(staged.Sha256));

        File.Delete(store.PathOf(staged.Sha256));
        Assert.Null(await store.MeasureStoredAsync(staged.Sha256));
        Assert.Null(await store.HashStoredAsync(staged.Sha256));
    }
}
