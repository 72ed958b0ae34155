using System.Security.Cryptography;

namespace TapeVault.Archive.Storage;

/// <summary>
/// Files named by their SHA-256 under <c>objects/ab/cd/&lt;hash&gt;</c>. A new object is streamed into <c>tmp/</c>
/// while it is hashed, then moved into place in one rename; stored objects are made read-only and never rewritten.
/// </summary>
public sealed class ContentStore
{
    private const int BufferBytes = 81_920;

    /// <summary>The piece a re-hash reads at a time (1 MiB).</summary>
    private const int HashBufferBytes = 1 << 20;

    public ContentStore(string root)
    {
        ArgumentException.ThrowIfNullOrEmpty(root);
        Root = Path.GetFullPath(root);
        TempFolder = Path.Combine(Root, "tmp");
        Directory.CreateDirectory(TempFolder);
        Directory.CreateDirectory(Path.Combine(Root, "objects"));
    }

    public string Root { get; }

    public string TempFolder { get; }

    /// <summary>
    /// Opens a new temporary file for writing: every byte the store takes in passes through it. Replaceable so that a
    /// test can hand the store a stream on a full device (Linux's /dev/full answers every write with ENOSPC) and see
    /// the real code path meet a full disk.
    /// </summary>
    public Func<string, Stream> OpenTemporary { get; set; } =
        path => new FileStream(path, FileMode.CreateNew, FileAccess.Write, FileShare.None, BufferBytes, FileOptions.Asynchronous);

    public static bool IsHash(string? sha256) =>
        sha256 is { Length: 64 } && sha256.All(c => c is (>= '0' and <= '9') or (>= 'a' and <= 'f'));

    public string PathOf(string sha256)
    {
        if (!IsHash(sha256))
        {
            throw new ArgumentException("Not a lower-case hex SHA-256.", nameof(sha256));
        }

        return Path.Combine(Root, "objects", sha256[..2], sha256[2..4], sha256);
    }

    public bool Exists(string sha256) => File.Exists(PathOf(sha256));

    public FileStream OpenRead(string sha256) =>
        new(PathOf(sha256), FileMode.Open, FileAccess.Read, FileShare.Read, BufferBytes, FileOptions.Asynchronous | FileOptions.SequentialScan);

    /// <summary>Streams <paramref name="source"/> into a temporary file, hashing as it goes; never holds the whole in memory.</summary>
    /// <exception cref="ObjectTooLargeException">The stream is longer than <paramref name="maxBytes"/>; nothing is left behind.</exception>
    public async Task<StagedObject> StageAsync(Stream source, long maxBytes, CancellationToken cancellation = default) =>
        await StageAsync(source, maxBytes, ReadOnlyMemory<byte>.Empty, cancellation).ConfigureAwait(false);

    /// <summary>As above, for a stream whose first bytes (<paramref name="alreadyRead"/>) the caller has read to look at.</summary>
    public async Task<StagedObject> StageAsync(Stream source, long maxBytes, ReadOnlyMemory<byte> alreadyRead, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(source);
        var tempPath = Path.Combine(TempFolder, $"{Guid.NewGuid():N}.part");
        var staged = new StagedObject(this, tempPath);
        try
        {
            using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
            long size = alreadyRead.Length;
            var buffer = new byte[BufferBytes];
            await using (var file = OpenTemporary(tempPath))
            {
                if (size > maxBytes)
                {
                    throw new ObjectTooLargeException(maxBytes);
                }

                hash.AppendData(alreadyRead.Span);
                await file.WriteAsync(alreadyRead, cancellation).ConfigureAwait(false);
                int read;
                while ((read = await source.ReadAsync(buffer, cancellation).ConfigureAwait(false)) > 0)
                {
                    size += read;
                    if (size > maxBytes)
                    {
                        throw new ObjectTooLargeException(maxBytes);
                    }

                    hash.AppendData(buffer, 0, read);
                    await file.WriteAsync(buffer.AsMemory(0, read), cancellation).ConfigureAwait(false);
                }

                await FlushToDiskAsync(file, cancellation).ConfigureAwait(false);
            }

            staged.Complete(Convert.ToHexStringLower(hash.GetHashAndReset()), size);
            return staged;
        }
        catch
        {
            staged.Dispose();
            throw;
        }
    }

    /// <summary>Stores a file made elsewhere in the store's temporary folder (a tape image, an export).</summary>
    public async Task<StagedObject> StageAsync(Func<Stream, Task> write, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(write);
        var tempPath = Path.Combine(TempFolder, $"{Guid.NewGuid():N}.part");
        try
        {
            await using (var file = OpenTemporary(tempPath))
            {
                await write(file).ConfigureAwait(false);
                await FlushToDiskAsync(file, cancellation).ConfigureAwait(false);
            }

            await using var read = File.OpenRead(tempPath);
            var staged = new StagedObject(this, tempPath);
            staged.Complete(Convert.ToHexStringLower(await SHA256.HashDataAsync(read, cancellation).ConfigureAwait(false)), read.Length);
            return staged;
        }
        catch
        {
            File.Delete(tempPath);
            throw;
        }
    }

    private static async Task FlushToDiskAsync(Stream file, CancellationToken cancellation)
    {
        await file.FlushAsync(cancellation).ConfigureAwait(false);
        if (file is FileStream stream)
        {
            stream.Flush(flushToDisk: true);
        }
    }

    /// <summary>Re-hashes a stored object; null when the object's file is gone.</summary>
    public string? HashStored(string sha256, CancellationToken cancellation = default) => MeasureStored(sha256, cancellation)?.Sha256;

    /// <summary>
    /// Re-hashes a stored object and counts its bytes, from one open of its file (no look-up before it, no size
    /// asked after it: on an audit of thousands of small files the path look-ups cost as much as the hashing); null
    /// when the object's file is gone. It reads synchronously, on the caller's thread (an audit hashes on every core at
    /// once): a stored object is a local file, and an asynchronous read of one is a synchronous read on a pool thread.
    /// </summary>
    public StoredFacts? MeasureStored(string sha256, CancellationToken cancellation = default)
    {
        Microsoft.Win32.SafeHandles.SafeFileHandle file;
        try
        {
            file = File.OpenHandle(PathOf(sha256), FileMode.Open, FileAccess.Read, FileShare.Read, FileOptions.SequentialScan);
        }
        catch (Exception e) when (e is FileNotFoundException or DirectoryNotFoundException)
        {
            return null;
        }

        using (file)
        {
            var buffer = System.Buffers.ArrayPool<byte>.Shared.Rent(HashBufferBytes);
            try
            {
                // A file that fits in the buffer (a tape image, most exports, a short capture) is hashed in one call; a
                // longer one (a capture of minutes) piece by piece.
                Span<byte> digest = stackalloc byte[SHA256.HashSizeInBytes];
                int read = Fill(file, buffer, 0);
                long length = read;
                if (read < HashBufferBytes)
                {
                    SHA256.HashData(buffer.AsSpan(0, read), digest);
                }
                else
                {
                    using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
                    do
                    {
                        cancellation.ThrowIfCancellationRequested();
                        hash.AppendData(buffer, 0, read);
                        read = Fill(file, buffer, length);
                        length += read;
                    }
                    while (read > 0);
                    hash.GetHashAndReset(digest);
                }

                return new StoredFacts(Convert.ToHexStringLower(digest), length);
            }
            finally
            {
                System.Buffers.ArrayPool<byte>.Shared.Return(buffer);
            }
        }
    }

    /// <summary>Reads from <paramref name="offset"/> until the hash's buffer is full or the file ends; how many bytes it read.</summary>
    private static int Fill(Microsoft.Win32.SafeHandles.SafeFileHandle file, byte[] buffer, long offset)
    {
        int filled = 0;
        int read;
        while (filled < HashBufferBytes && (read = RandomAccess.Read(file, buffer.AsSpan(filled, HashBufferBytes - filled), offset + filled)) > 0)
        {
            filled += read;
        }

        return filled;
    }

    /// <summary>
    /// Removes whatever an interrupted piece of work (a crash, a kill) left in the temporary folder, which only the app
    /// writes to: staged uploads and objects (*.part), catalogue folders being published (catalogue-*), demo captures
    /// being made (demo-*), plot caches being written. Nothing in it is ever the only copy of anything. Returns how
    /// many entries were removed.
    /// </summary>
    public int SweepTemporaryFiles(TimeSpan? olderThan = null)
    {
        // With a store other nodes write too, only what nobody has touched for a while is left over from a stop.
        var cutoff = olderThan is { } age ? DateTime.UtcNow - age : DateTime.MaxValue;
        int removed = 0;
        foreach (var file in Directory.EnumerateFiles(TempFolder))
        {
            if (File.GetLastWriteTimeUtc(file) < cutoff)
            {
                File.Delete(file);
                removed++;
            }
        }

        foreach (var folder in Directory.EnumerateDirectories(TempFolder))
        {
            if (Directory.GetLastWriteTimeUtc(folder) < cutoff)
            {
                Directory.Delete(folder, recursive: true);
                removed++;
            }
        }

        return removed;
    }

    /// <summary>Where an object lives, relative to the store's root ("objects/ab/cd/…"): for messages, which never show server paths.</summary>
    public string RelativePath(string sha256) => Path.GetRelativePath(Root, PathOf(sha256)).Replace('\\', '/');

    /// <summary>Every object file in the store, by hash (for audits and orphan checks).</summary>
    public IEnumerable<string> EnumerateHashes() =>
        Directory.EnumerateFiles(Path.Combine(Root, "objects"), "*", SearchOption.AllDirectories)
            .Select(Path.GetFileName)
            .Where(IsHash)!;

    internal bool Place(string tempPath, string sha256)
    {
        var target = PathOf(sha256);
        if (File.Exists(target))
        {
            File.Delete(tempPath);
            return false;
        }

        Directory.CreateDirectory(Path.GetDirectoryName(target)!);
        try
        {
            File.Move(tempPath, target, overwrite: false);
        }
        catch (IOException) when (File.Exists(target))
        {
            // Another ingest of the same bytes won the race; its copy is identical.
            File.Delete(tempPath);
            return false;
        }

        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(target, UnixFileMode.UserRead | UnixFileMode.GroupRead | UnixFileMode.OtherRead);
        }
        else
        {
            File.SetAttributes(target, FileAttributes.ReadOnly);
        }

        return true;
    }

    /// <summary>Takes back an object placed by a step whose database write then failed, so no orphan stays.</summary>
    internal void Withdraw(string sha256)
    {
        var target = PathOf(sha256);
        if (File.Exists(target))
        {
            File.SetAttributes(target, FileAttributes.Normal);
            File.Delete(target);
        }
    }
}

/// <summary>A file hashed into the store's temporary folder; disposing it without <see cref="Commit"/> deletes it.</summary>
public sealed class StagedObject : IDisposable
{
    private readonly ContentStore store;
    private bool placed;

    internal StagedObject(ContentStore store, string tempPath)
    {
        this.store = store;
        TempPath = tempPath;
    }

    public string TempPath { get; }

    public string Sha256 { get; private set; } = string.Empty;

    public long Size { get; private set; }

    /// <summary>True when this commit added the object; false when the store already held the same bytes.</summary>
    public bool AddedToStore { get; private set; }

    /// <summary>Moves the file into place (or drops it when the store already has the same bytes).</summary>
    public bool Commit()
    {
        AddedToStore = store.Place(TempPath, Sha256);
        placed = true;
        return AddedToStore;
    }

    /// <summary>Undoes <see cref="Commit"/> when the database refused the object's row.</summary>
    public void Rollback()
    {
        if (placed && AddedToStore)
        {
            store.Withdraw(Sha256);
            AddedToStore = false;
        }
    }

    public void Dispose()
    {
        if (!placed && File.Exists(TempPath))
        {
            File.Delete(TempPath);
        }
    }

    internal void Complete(string sha256, long size)
    {
        Sha256 = sha256;
        Size = size;
    }
}

public sealed class ObjectTooLargeException(long maxBytes)
    : Exception($"The upload is larger than the limit of {ByteSizes.Format(maxBytes)}.")
{
    public long MaxBytes { get; } = maxBytes;
}

/// <summary>Sizes as people read them (binary units, two decimals at most).</summary>
public static class ByteSizes
{
    public static string Format(long bytes) => bytes switch
    {
        >= 1L << 30 => $"{bytes / (double)(1L << 30):0.##} GiB",
        >= 1L << 20 => $"{bytes / (double)(1L << 20):0.##} MiB",
        >= 1L << 10 => $"{bytes / 1024.0:0.##} KiB",
        _ => $"{bytes} bytes",
    };
}

/// <summary>What a stored object's file holds when read: its SHA-256 (64 lower-case hex digits) and its length in bytes.</summary>
public sealed record StoredFacts
{
    public StoredFacts(string sha256, long length)
    {
        ArgumentNullException.ThrowIfNull(sha256);
        if (sha256.Length != 64 || !sha256.All(char.IsAsciiHexDigitLower))
        {
            throw new ArgumentException($"A SHA-256 is 64 lower-case hex digits, not '{sha256}'.", nameof(sha256));
        }

        ArgumentOutOfRangeException.ThrowIfNegative(length);
        Sha256 = sha256;
        Length = length;
    }

    public string Sha256 { get; }

    public long Length { get; }
}
