using System.IO.Compression;
using System.Security.Cryptography;

namespace TapeVault.Archive.Export;

/// <summary>Where a bag's files go: a folder or a zip. Every file is hashed as it is written.</summary>
public abstract class BagSink : IAsyncDisposable
{
    /// <summary>Writes one file of the bag and returns its SHA-256 (lower-case hex) and length.</summary>
    public async Task<(string Sha256, long Length)> WriteAsync(string relativePath, Func<Stream, Task> write, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(write);
        await using var target = await OpenAsync(relativePath, cancellation).ConfigureAwait(false);
        using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        var hashing = new HashingWriteStream(target, hash);
        await write(hashing).ConfigureAwait(false);
        await hashing.FlushAsync(cancellation).ConfigureAwait(false);
        return (Convert.ToHexStringLower(hash.GetHashAndReset()), hashing.Length);
    }

    public abstract ValueTask DisposeAsync();

    protected abstract Task<Stream> OpenAsync(string relativePath, CancellationToken cancellation);

    private sealed class HashingWriteStream(Stream inner, IncrementalHash hash) : Stream
    {
        private long written;

        public override bool CanRead => false;

        public override bool CanSeek => false;

        public override bool CanWrite => true;

        public override long Length => written;

        public override long Position { get => written; set => throw new NotSupportedException(); }

        public override void Flush() => inner.Flush();

        public override Task FlushAsync(CancellationToken cancellationToken) => inner.FlushAsync(cancellationToken);

        public override int Read(byte[] buffer, int offset, int count) => throw new NotSupportedException();

        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

        public override void SetLength(long value) => throw new NotSupportedException();

        public override void Write(byte[] buffer, int offset, int count) => Write(buffer.AsSpan(offset, count));

        public override void Write(ReadOnlySpan<byte> buffer)
        {
            hash.AppendData(buffer);
            written += buffer.Length;
            inner.Write(buffer);
        }

        public override async ValueTask WriteAsync(ReadOnlyMemory<byte> buffer, CancellationToken cancellationToken = default)
        {
            hash.AppendData(buffer.Span);
            written += buffer.Length;
            await inner.WriteAsync(buffer, cancellationToken).ConfigureAwait(false);
        }

        public override Task WriteAsync(byte[] buffer, int offset, int count, CancellationToken cancellationToken) =>
            WriteAsync(buffer.AsMemory(offset, count), cancellationToken).AsTask();
    }
}

/// <summary>A bag as a folder; the folder must not exist yet, so nothing of another bag is mixed in.</summary>
public sealed class FolderBagSink : BagSink
{
    private readonly string root;

    public FolderBagSink(string folder)
    {
        root = Path.GetFullPath(folder);
        if (Directory.Exists(root) && Directory.EnumerateFileSystemEntries(root).Any())
        {
            throw new ArchiveInputException($"The folder {root} already exists and is not empty; give a new folder for the bag.");
        }

        Directory.CreateDirectory(root);
    }

    public override ValueTask DisposeAsync() => ValueTask.CompletedTask;

    protected override Task<Stream> OpenAsync(string relativePath, CancellationToken cancellation)
    {
        var path = Path.GetFullPath(Path.Combine(root, relativePath));
        if (!path.StartsWith(root + Path.DirectorySeparatorChar, StringComparison.Ordinal))
        {
            throw new InvalidOperationException($"A bag path left the bag's folder: {relativePath}.");
        }

        Directory.CreateDirectory(Path.GetDirectoryName(path)!);
        return Task.FromResult<Stream>(new FileStream(path, FileMode.CreateNew, FileAccess.Write, FileShare.None, 81_920, FileOptions.Asynchronous));
    }
}

/// <summary>A bag as a zip whose single top folder is the bag (the usual way bags travel as one file).</summary>
public sealed class ZipBagSink(Stream output, string bagName) : BagSink
{
    private readonly ZipArchive zip = new(output, ZipArchiveMode.Create, leaveOpen: true);

    public override async ValueTask DisposeAsync() => await zip.DisposeAsync().ConfigureAwait(false);

    protected override Task<Stream> OpenAsync(string relativePath, CancellationToken cancellation)
    {
        // A fixed entry time keeps the zip of the same bag byte-identical.
        var entry = zip.CreateEntry($"{bagName}/{relativePath}", CompressionLevel.Optimal);
        entry.LastWriteTime = new DateTimeOffset(2000, 1, 1, 0, 0, 0, TimeSpan.Zero);
        return Task.FromResult(entry.Open());
    }
}
