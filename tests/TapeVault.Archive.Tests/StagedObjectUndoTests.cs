using Microsoft.EntityFrameworkCore;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Storage;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// A step whose database write failed takes back the object it put in the store, unless a row another worker
/// committed meanwhile names the same bytes: that row must never be left naming a missing file.
/// </summary>
public sealed class StagedObjectUndoTests
{
    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public async Task A_failed_step_takes_back_its_object_only_when_no_committed_row_names_it(bool anotherWorkerStoredTheSameBytes)
    {
        await using var archive = await JobArchive.CreateAsync();
        var store = new ContentStore(archive.StorePath);
        byte[] bytes = "the same export, made twice"u8.ToArray();
        using var staged = await store.StageAsync(s => s.WriteAsync(bytes).AsTask());

        // A step found no row for its bytes, put them in the store and is about to write its row.
        await using var failing = archive.NewContext();
        Assert.False(failing.Objects.Any(o => o.Sha256 == staged.Sha256));
        failing.Objects.Add(new StoredObject { Sha256 = staged.Sha256, Size = staged.Size, Kind = ObjectKind.Export, StoredUtc = DateTimeOffset.UnixEpoch });
        Assert.True(staged.Commit());

        if (anotherWorkerStoredTheSameBytes)
        {
            // Meanwhile another worker made the same bytes (a job taken over and run again, the same upload twice): its
            // Place finds them already there, and it commits its row first. This step's write then fails on the key.
            await using var other = archive.NewContext();
            using var again = await store.StageAsync(s => s.WriteAsync(bytes).AsTask());
            Assert.False(again.Commit());
            other.Objects.Add(new StoredObject { Sha256 = again.Sha256, Size = again.Size, Kind = ObjectKind.Export, StoredUtc = DateTimeOffset.UnixEpoch });
            await other.SaveChangesAsync();
            await Assert.ThrowsAsync<DbUpdateException>(() => failing.SaveChangesAsync());
        }

        await StagedObjectUndo.WithdrawUnlessNamedAsync(failing, null, staged);

        Assert.Equal(anotherWorkerStoredTheSameBytes, store.Exists(staged.Sha256));
    }
}
