using System.Data.Common;
using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Storage;

namespace TapeVault.Archive.Storage;

/// <summary>
/// What a step does with the object it put in the store when its database write then failed. The object is taken back
/// only when no committed row names those bytes: another worker may have stored the same bytes (a job taken over and
/// run again, an identical upload) and committed its row while this step's write was failing, and its row must not be
/// left naming a missing file. When that cannot be told (the database is unreachable), the object stays: an object no
/// row names is what the fixity audit reports as an orphan, whereas a row without its object is lost data.
/// </summary>
public static class StagedObjectUndo
{
    public static async Task WithdrawUnlessNamedAsync(ArchiveDbContext db, IDbContextTransaction? transaction, StagedObject staged)
    {
        ArgumentNullException.ThrowIfNull(db);
        ArgumentNullException.ThrowIfNull(staged);
        if (!staged.AddedToStore)
        {
            return;
        }

        db.ChangeTracker.Clear();
        bool named;
        try
        {
            if (transaction is not null)
            {
                // This step's own rows are gone with its transaction; what the query sees then is what others committed.
                await transaction.RollbackAsync(CancellationToken.None).ConfigureAwait(false);
            }

            named = await db.Objects.AsNoTracking().AnyAsync(o => o.Sha256 == staged.Sha256, CancellationToken.None).ConfigureAwait(false);
        }
        catch (Exception e) when (e is DbException or InvalidOperationException or DbUpdateException)
        {
            return;
        }

        if (!named)
        {
            staged.Rollback();
        }
    }
}
