using Microsoft.Data.Sqlite;

namespace TapeVault.Archive.Storage;

/// <summary>
/// A full disk, told apart from other faults so that people are told what happened: the content store's writes fail
/// with ENOSPC (errno 28 on Linux and macOS, which .NET puts in the IOException's HResult; ERROR_DISK_FULL and
/// ERROR_HANDLE_DISK_FULL on Windows), SQLite's with SQLITE_FULL (result code 13)
/// and PostgreSQL's with SQLSTATE 53100 (disk_full, PostgreSQL documentation, Appendix A).
/// </summary>
public static class StorageFaults
{
    private const int Enospc = 28;
    private const int WindowsDiskFull = unchecked((int)0x80070070);
    private const int WindowsHandleDiskFull = unchecked((int)0x80070027);
    private const int SqliteFull = 13;

    /// <summary>Whether <paramref name="exception"/>, or one it wraps, says the disk is full.</summary>
    public static bool IsDiskFull(Exception? exception)
    {
        for (var e = exception; e is not null; e = e.InnerException)
        {
            if (e is SqliteException { SqliteErrorCode: SqliteFull })
            {
                return true;
            }

            if (e is Npgsql.PostgresException { SqlState: Npgsql.PostgresErrorCodes.DiskFull })
            {
                return true;
            }

            if (e is IOException && e.HResult is Enospc or WindowsDiskFull or WindowsHandleDiskFull)
            {
                return true;
            }

            if (e is AggregateException aggregate && aggregate.InnerExceptions.Any(IsDiskFull))
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>
    /// The one sentence for a full disk: what could not be written, that nothing of it was kept, and what to do. It
    /// names no server path (the system's own message would).
    /// </summary>
    public static string DiskFullSentence(string what) =>
        $"The archive's disk is full: {what} could not be written and nothing of it was kept; free space on the disk that holds the archive's database and store, then try again.";
}
