using System.Security.Cryptography;

namespace TapeVault.Core.Audio;

/// <summary>
/// A seekable read-only stream over a file that computes the SHA-256 of the whole file
/// while its reader (our header probe, then NAudio) reads it.
/// </summary>
/// <remarks>
/// <para>
/// The hash only ever takes bytes in file order. The stream remembers <see cref="HashedBytes"/>, the length
/// of the prefix <c>[0, HashedBytes)</c> already fed to the hash. A read that covers the byte at
/// <see cref="HashedBytes"/> feeds the part of it past that point and moves the mark on; bytes read again
/// after a backward seek are never hashed twice, and bytes read after a forward seek are not hashed (yet).
/// </para>
/// <para>
/// So the owner closes the gaps: once the WAV parsers have walked the header (stepping over chunk bodies such as
/// LIST, and over the audio to look for chunks after it), <see cref="HashUpTo"/> reads and hashes the bytes it
/// skipped before the audio; the audio is then read in order and moves the mark; and <see cref="Finish"/> reads
/// and hashes whatever lies after it (trailing chunks, junk after the RIFF end). Every byte is hashed exactly
/// once and every byte of audio is read from the source once; only chunk headers are read twice.
/// </para>
/// </remarks>
internal sealed class HashingReadStream : Stream
{
    private const int ScratchBytes = 64 * 1024;

    private readonly Stream source;
    private readonly IncrementalHash hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
    private byte[]? scratch;
    private string? sha256;
    private bool disposed;

    /// <summary>Wraps <paramref name="source"/>, which must be readable and seekable and positioned at 0. The stream owns it.</summary>
    public HashingReadStream(Stream source)
    {
        ArgumentNullException.ThrowIfNull(source);
        if (!source.CanRead || !source.CanSeek)
        {
            throw new ArgumentException("The source stream must be readable and seekable.", nameof(source));
        }

        this.source = source;
    }

    /// <summary>Bytes from the start of the file already fed to the hash.</summary>
    public long HashedBytes { get; private set; }

    /// <summary>Bytes read from the source so far, counting re-reads (for tests of the read-once promise).</summary>
    public long SourceBytesRead { get; private set; }

    /// <summary>The lower-case hex SHA-256 of the whole file once <see cref="Finish"/> has run, else null.</summary>
    public string? Sha256 => sha256;

    /// <inheritdoc />
    public override bool CanRead => !disposed;

    /// <inheritdoc />
    public override bool CanSeek => !disposed;

    /// <inheritdoc />
    public override bool CanWrite => false;

    /// <inheritdoc />
    public override long Length => source.Length;

    /// <inheritdoc />
    public override long Position
    {
        get => source.Position;
        set
        {
            ArgumentOutOfRangeException.ThrowIfNegative(value);
            source.Position = value;
        }
    }

    /// <inheritdoc />
    public override long Seek(long offset, SeekOrigin origin) => source.Seek(offset, origin);

    /// <inheritdoc />
    public override int Read(byte[] buffer, int offset, int count) => Read(buffer.AsSpan(offset, count));

    /// <inheritdoc />
    public override int ReadByte()
    {
        Span<byte> one = stackalloc byte[1];
        return Read(one) == 1 ? one[0] : -1;
    }

    /// <summary>
    /// Reads until <paramref name="buffer"/> is full or the file ends, so a short count means the end of the file
    /// (NAudio's converters drop a partial sample otherwise).
    /// </summary>
    public override int Read(Span<byte> buffer)
    {
        ObjectDisposedException.ThrowIf(disposed, this);
        long start = source.Position;
        int total = 0;
        while (total < buffer.Length)
        {
            int n = source.Read(buffer[total..]);
            if (n == 0)
            {
                break;
            }

            total += n;
        }

        SourceBytesRead += total;
        long end = start + total;
        if (sha256 is null && start <= HashedBytes && end > HashedBytes)
        {
            int skip = (int)(HashedBytes - start);
            hash.AppendData(buffer[skip..total]);
            HashedBytes = end;
        }

        return total;
    }

    /// <summary>
    /// Reads and hashes the bytes from <see cref="HashedBytes"/> up to <paramref name="position"/> (or the end of the
    /// file) that no read has covered yet. Does nothing if they are already hashed. Keeps the current position.
    /// </summary>
    public void HashUpTo(long position)
    {
        ObjectDisposedException.ThrowIf(disposed, this);
        if (sha256 is null && position > HashedBytes)
        {
            long keep = source.Position;
            HashFrom(HashedBytes, position);
            source.Position = keep;
        }
    }

    /// <summary>
    /// Hashes every byte from <see cref="HashedBytes"/> to the end of the file and returns the file's SHA-256
    /// as lower-case hex. Later calls return the same value. Leaves the position at the end of the file.
    /// </summary>
    public string Finish()
    {
        ObjectDisposedException.ThrowIf(disposed, this);
        if (sha256 is null)
        {
            HashFrom(HashedBytes, long.MaxValue);
            sha256 = Convert.ToHexStringLower(hash.GetHashAndReset());
        }

        return sha256;
    }

    /// <inheritdoc />
    public override void Flush()
    {
    }

    /// <inheritdoc />
    public override void SetLength(long value) => throw new NotSupportedException();

    /// <inheritdoc />
    public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();

    /// <inheritdoc />
    protected override void Dispose(bool disposing)
    {
        if (disposing && !disposed)
        {
            disposed = true;
            hash.Dispose();
            source.Dispose();
        }

        base.Dispose(disposing);
    }

    /// <summary>Reads and hashes the bytes from <paramref name="from"/> (the mark) up to <paramref name="to"/> or the end of the file.</summary>
    private void HashFrom(long from, long to)
    {
        scratch ??= new byte[ScratchBytes];
        source.Position = from;
        long position = from;
        while (position < to)
        {
            int want = (int)Math.Min(scratch.Length, to - position);
            int n = source.Read(scratch, 0, want);
            if (n == 0)
            {
                break;
            }

            hash.AppendData(scratch, 0, n);
            position += n;
            SourceBytesRead += n;
        }

        HashedBytes = position;
    }
}
