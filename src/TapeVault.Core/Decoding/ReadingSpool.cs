using System.Collections;
using System.Collections.Immutable;
using System.Runtime.InteropServices;
using TapeVault.Core.Blocks;

namespace TapeVault.Core.Decoding;

/// <summary>
/// Where a decode hands each reading the moment its block is finished: the reading is written whole to the spool (a
/// temporary file for a decode of a capture, memory for a short stretch), and the decode keeps only its summary (the
/// reading without its per-byte margins, error odds and times), which is all the positioner and the choice of the best
/// reading per position look at. The readings are read back one at a time, so what a decode holds in memory does not
/// grow with the length of the capture. Safe to add to from several threads; reading back takes the same lock.
/// </summary>
public sealed class ReadingSpool : IDisposable
{
    private readonly Stream _stream;
    private readonly BinaryWriter _writer;
    private readonly BinaryReader _reader;
    private readonly List<long> _offsets = [];
    private readonly Lock _gate = new();
    private readonly RecentValues<ImmutableArray<byte>> _arrays = new((a, b) => a.AsSpan().SequenceEqual(b.AsSpan()));
    private readonly RecentValues<string?> _names = new((a, b) => string.Equals(a, b, StringComparison.Ordinal));

    private ReadingSpool(Stream stream)
    {
        _stream = stream;
        _writer = new BinaryWriter(stream, System.Text.Encoding.UTF8, leaveOpen: true);
        _reader = new BinaryReader(stream, System.Text.Encoding.UTF8, leaveOpen: true);
    }

    /// <summary>How many readings the spool holds.</summary>
    public int Count
    {
        get
        {
            lock (_gate)
            {
                return _offsets.Count;
            }
        }
    }

    /// <summary>
    /// A spool in a temporary file of <paramref name="folder"/> (the system's temporary folder by default) that nobody
    /// else opens and that is gone when the spool is closed or the process ends.
    /// </summary>
    public static ReadingSpool InTemporaryFile(string? folder = null)
    {
        string path = Path.Combine(folder ?? Path.GetTempPath(), $"tapevault-readings-{Guid.NewGuid():N}.spool");
        var stream = new FileStream(path, new FileStreamOptions
        {
            Mode = FileMode.CreateNew,
            Access = FileAccess.ReadWrite,
            Share = FileShare.None,
            BufferSize = 1 << 16,
            Options = OperatingSystem.IsWindows() ? FileOptions.DeleteOnClose : FileOptions.None,
        });
        if (!OperatingSystem.IsWindows())
        {
            // The open handle keeps the data; the name goes at once, so nothing is left behind however the process ends.
            File.Delete(path);
        }

        return new ReadingSpool(stream);
    }

    /// <summary>A spool in memory, for decodes of short stretches.</summary>
    public static ReadingSpool InMemory() => new(new MemoryStream());

    /// <summary>
    /// The reading without its per-byte margins, error odds and times: what is kept in memory while the reading is
    /// spooled. The settings of a bank mostly read a block alike, so a header, payload or file name equal to one of a
    /// reading summarised shortly before is kept once, shared by both summaries.
    /// </summary>
    public BlockCandidate Summarize(BlockCandidate reading)
    {
        ArgumentNullException.ThrowIfNull(reading);
        lock (_gate)
        {
            return reading with
            {
                Identity = reading.Identity with { FileName = _names.Share(reading.Identity.FileName) },
                Header = _arrays.Share(reading.Header),
                Payload = _arrays.Share(reading.Payload),
                ByteMargins = [],
                ByteErrorOdds = [],
                HeaderErrorOdds = [],
                ChecksumErrorOdds = [],
                ByteSeconds = [],
            };
        }
    }

    /// <summary>Writes <paramref name="reading"/> whole to the spool; returns its number for <see cref="Read"/>.</summary>
    public int Add(BlockCandidate reading)
    {
        ArgumentNullException.ThrowIfNull(reading);
        lock (_gate)
        {
            long offset = _stream.Seek(0, SeekOrigin.End);
            Write(_writer, reading);
            _offsets.Add(offset);
            return _offsets.Count - 1;
        }
    }

    /// <summary>Reading <paramref name="record"/> as it was added, with <paramref name="position"/> as its position on the tape.</summary>
    public BlockCandidate Read(int record, int position)
    {
        lock (_gate)
        {
            _stream.Seek(_offsets[record], SeekOrigin.Begin);
            return ReadCandidate(_reader, position);
        }
    }

    public void Dispose()
    {
        _reader.Dispose();
        _writer.Dispose();
        _stream.Dispose();
    }

    private static void Write(BinaryWriter w, BlockCandidate c)
    {
        w.Write(c.SettingIndex);
        w.Write(c.SettingName);
        WriteOptional(w, c.Identity.FileName);
        WriteOptional(w, c.Identity.FileId);
        WriteOptional(w, c.Identity.BlockNumber);
        w.Write(c.Identity.Ordinal);
        WriteArray(w, c.Header);
        WriteArray(w, c.Payload);
        w.Write(c.StoredChecksum.HasValue);
        w.Write(c.StoredChecksum.GetValueOrDefault());
        w.Write((int)c.Status);
        w.Write((int)c.Doubts);
        w.Write(c.Confidence);
        w.Write(c.ModelConfidence);
        WriteArray(w, c.ByteMargins);
        WriteArray(w, c.ByteErrorOdds);
        WriteArray(w, c.HeaderErrorOdds);
        WriteArray(w, c.ChecksumErrorOdds);
        WriteArray(w, c.ByteSeconds);
        w.Write(c.Decisions);
        w.Write(c.AmbiguousDecisions);
        w.Write(c.MinimumMargin);
        w.Write(c.MeanMargin);
        w.Write(c.FramingErrors);
        w.Write(c.LevelDbfs);
        w.Write(c.SnrDb);
        w.Write(c.Speed);
        w.Write(c.StartSeconds);
        w.Write(c.EndSeconds);
        w.Write(c.Truncated);
        w.Write(c.SyncCopy.HasValue);
        w.Write(c.SyncCopy.GetValueOrDefault());
    }

    private static BlockCandidate ReadCandidate(BinaryReader r, int position)
    {
        int settingIndex = r.ReadInt32();
        string settingName = r.ReadString();
        var identity = new BlockIdentity(ReadOptionalString(r), ReadOptionalLong(r), ReadOptionalLong(r), r.ReadInt32());
        var header = ReadArray<byte>(r);
        var payload = ReadArray<byte>(r);
        bool hasChecksum = r.ReadBoolean();
        uint checksum = r.ReadUInt32();
        return new BlockCandidate
        {
            SettingIndex = settingIndex,
            SettingName = settingName,
            Position = position,
            Identity = identity,
            Header = header,
            Payload = payload,
            StoredChecksum = hasChecksum ? checksum : null,
            Status = (BlockStatus)r.ReadInt32(),
            Doubts = (BlockDoubts)r.ReadInt32(),
            Confidence = r.ReadDouble(),
            ModelConfidence = r.ReadDouble(),
            ByteMargins = ReadArray<float>(r),
            ByteErrorOdds = ReadArray<float>(r),
            HeaderErrorOdds = ReadArray<float>(r),
            ChecksumErrorOdds = ReadArray<float>(r),
            ByteSeconds = ReadArray<double>(r),
            Decisions = r.ReadInt32(),
            AmbiguousDecisions = r.ReadInt32(),
            MinimumMargin = r.ReadDouble(),
            MeanMargin = r.ReadDouble(),
            FramingErrors = r.ReadInt32(),
            LevelDbfs = r.ReadDouble(),
            SnrDb = r.ReadDouble(),
            Speed = r.ReadDouble(),
            StartSeconds = r.ReadDouble(),
            EndSeconds = r.ReadDouble(),
            Truncated = r.ReadBoolean(),
            SyncCopy = r.ReadBoolean() ? r.ReadInt32() : DiscardInt32(r),
        };
    }

    /// <summary>Reads the value written beside an absent optional number, which stands for nothing.</summary>
    private static int? DiscardInt32(BinaryReader r)
    {
        r.ReadInt32();
        return null;
    }

    private static void WriteOptional(BinaryWriter w, string? value)
    {
        w.Write(value is not null);
        w.Write(value ?? string.Empty);
    }

    private static void WriteOptional(BinaryWriter w, long? value)
    {
        w.Write(value.HasValue);
        w.Write(value.GetValueOrDefault());
    }

    private static string? ReadOptionalString(BinaryReader r)
    {
        bool has = r.ReadBoolean();
        string value = r.ReadString();
        return has ? value : null;
    }

    private static long? ReadOptionalLong(BinaryReader r)
    {
        bool has = r.ReadBoolean();
        long value = r.ReadInt64();
        return has ? value : null;
    }

    // The spool is read back by the process that wrote it, so the elements' bytes are written as they lie in memory.
    private static void WriteArray<T>(BinaryWriter w, ImmutableArray<T> values)
        where T : unmanaged
    {
        var span = values.AsSpan();
        w.Write(span.Length);
        w.Write(MemoryMarshal.AsBytes(span));
    }

    private static ImmutableArray<T> ReadArray<T>(BinaryReader r)
        where T : unmanaged
    {
        int length = r.ReadInt32();
        if (length == 0)
        {
            return [];
        }

        var values = new T[length];
        r.BaseStream.ReadExactly(MemoryMarshal.AsBytes(values.AsSpan()));
        return ImmutableCollectionsMarshal.AsImmutableArray(values);
    }
}

/// <summary>The last few distinct values seen: a value equal to one of them is given back as that one, to be kept once.</summary>
internal sealed class RecentValues<T>(Func<T, T, bool> equal)
{
    // A bank has up to eight settings, reading each block at about the same time; twice that covers the blocks' neighbours.
    private readonly T[] _recent = new T[16];
    private int _count;
    private int _next;

    public T Share(T value)
    {
        for (int i = 0; i < _count; i++)
        {
            if (equal(_recent[i], value))
            {
                return _recent[i];
            }
        }

        _recent[_next] = value;
        _next = (_next + 1) % _recent.Length;
        _count = Math.Min(_count + 1, _recent.Length);
        return value;
    }
}

/// <summary>
/// Readings of a spool in an order of their own, each with its position on the tape, read back from the spool one at a
/// time as they are asked for (each time anew: hold on to the ones you need).
/// </summary>
public sealed class SpooledReadings : IReadOnlyList<BlockCandidate>
{
    private readonly ReadingSpool _spool;
    private readonly int[] _records;
    private readonly int[] _positions;

    /// <param name="records">The spool's record of each reading, in the list's order.</param>
    /// <param name="positions">Each reading's position on the tape, in the list's order.</param>
    public SpooledReadings(ReadingSpool spool, int[] records, int[] positions)
    {
        ArgumentNullException.ThrowIfNull(spool);
        ArgumentNullException.ThrowIfNull(records);
        ArgumentNullException.ThrowIfNull(positions);
        if (records.Length != positions.Length)
        {
            throw new ArgumentException("Every reading needs a position.", nameof(positions));
        }

        _spool = spool;
        _records = records;
        _positions = positions;
    }

    public int Count => _records.Length;

    public BlockCandidate this[int index] => _spool.Read(_records[index], _positions[index]);

    public IEnumerator<BlockCandidate> GetEnumerator()
    {
        for (int i = 0; i < _records.Length; i++)
        {
            yield return this[i];
        }
    }

    IEnumerator IEnumerable.GetEnumerator() => GetEnumerator();
}
