using TapeVault.Core.Formats;

namespace TapeVault.Core.Blocks;

/// <summary>A file to put on tape.</summary>
public sealed record TapeFile(string Name, byte[] Content)
{
    /// <summary>Where the file loads in memory, for formats whose header block gives start and end addresses.</summary>
    public long Address { get; init; }
}

/// <summary>Lays files out as blocks the way a machine using the profile would write them (the synthesiser's source of truth).</summary>
public static class BlockWriter
{
    /// <summary>The payload size used when the layout lets the writer choose.</summary>
    public const int DefaultPayloadBytes = 128;

    /// <summary>Every block of every file, header + payload + checksum, in tape order (copies not repeated).</summary>
    public static List<byte[]> Blocks(FormatProfile profile, IReadOnlyList<TapeFile> files)
    {
        ArgumentNullException.ThrowIfNull(profile);
        ArgumentNullException.ThrowIfNull(files);
        var layout = profile.Layout;
        var blocks = new List<byte[]>();
        for (int f = 0; f < files.Count; f++)
        {
            var file = files[f];
            if (profile.Kinds.Count > 1)
            {
                blocks.AddRange(KindBlocks(profile.Kinds, file, f));
                continue;
            }

            if (layout.IsStream)
            {
                blocks.Add(file.Content);
                continue;
            }

            // A length field whose 0 stands for a value (0 means 256) says how much a full block holds.
            int size = layout.PayloadBytes
                ?? (int?)layout.FieldWithRole(FieldRole.PayloadLength)?.ZeroMeans
                ?? Math.Min(DefaultPayloadBytes, layout.MaximumPayloadBytes);
            if (file.Content.Length == 0 && LengthWithoutZero(layout) is { } lengthField)
            {
                throw new ArgumentException(
                    $"The file '{file.Name}' is empty, and the format cannot write an empty block: its field '{lengthField.Name}' reads a stored 0 as {lengthField.ZeroMeans}.",
                    nameof(files));
            }

            int count = Math.Max(1, (file.Content.Length + size - 1) / size);
            for (int b = 0; b < count; b++)
            {
                int start = b * size;
                int length = Math.Min(size, file.Content.Length - start);
                var payload = new byte[layout.PayloadBytes ?? Math.Max(0, length)];
                if (length > 0)
                {
                    file.Content.AsSpan(start, length).CopyTo(payload);
                }

                blocks.Add(Build(layout, file.Name, f, b, payload));
            }
        }

        return blocks;
    }

    /// <summary>
    /// The length field of a layout whose blocks say their own length in a field where a stored 0 stands for a full
    /// block (0 means 256): no block of it can be empty, so an empty file cannot be written. Null where one can.
    /// </summary>
    public static HeaderField? LengthWithoutZero(BlockLayout layout)
    {
        ArgumentNullException.ThrowIfNull(layout);
        return layout.PayloadBytes is null && layout.FieldWithRole(FieldRole.PayloadLength) is { ZeroMeans: not null } field ? field : null;
    }

    /// <summary>
    /// A file written as several block kinds: each kind once, in order; the content goes whole into the first kind
    /// whose length is not fixed (a data block), the kinds before it say its length (a length field, or start and end
    /// addresses from <see cref="TapeFile.Address"/>), and kinds with a fixed length are filled with zeros.
    /// </summary>
    private static IEnumerable<byte[]> KindBlocks(IReadOnlyList<BlockLayout> kinds, TapeFile file, int fileIndex)
    {
        var blocks = new byte[kinds.Count][];
        int dataKind = -1;
        for (int k = 0; k < kinds.Count; k++)
        {
            var kind = kinds[k];
            bool open = kind.PayloadBytes is null;
            if (open && dataKind < 0)
            {
                dataKind = k;
            }

            var payload = open && dataKind == k ? file.Content : new byte[kind.PayloadBytes ?? 0];
            blocks[k] = Build(kind, file.Name, fileIndex, k, payload);
        }

        // The lengths that later kinds take from earlier blocks, written into those blocks (whose checks change).
        for (int k = 0; k < kinds.Count; k++)
        {
            if (kinds[k].LengthRule is not { } rule)
            {
                continue;
            }

            var source = blocks[rule.SourceKind];
            var codec = BlockLayoutCodec.For(kinds[rule.SourceKind]);
            long length = blocks[k].Length - BlockLayoutCodec.For(kinds[k]).HeaderBytes - BlockLayoutCodec.For(kinds[k]).CheckBytes;
            if (rule.LengthField is { } field)
            {
                codec.WriteField(source, field, (ulong)length);
            }
            else
            {
                codec.WriteField(source, rule.StartField!, (ulong)file.Address);
                codec.WriteField(source, rule.EndField!, (ulong)(file.Address + length - (rule.InclusiveEnd ? 1 : 0)));
            }

            if (codec.Checksum is not null)
            {
                codec.WriteCheck(source, source.Length - codec.HeaderBytes - codec.CheckBytes);
            }
        }

        return blocks;
    }

    /// <summary>One block: header fields by role, the payload, then the check value (<see cref="BlockLayoutCodec"/>).</summary>
    public static byte[] Build(BlockLayout layout, string fileName, long fileId, long blockNumber, ReadOnlySpan<byte> payload)
    {
        ArgumentNullException.ThrowIfNull(layout);
        ArgumentNullException.ThrowIfNull(fileName);
        var codec = BlockLayoutCodec.For(layout);
        var block = new byte[codec.BlockBytes(payload.Length)];
        foreach (var field in layout.Header)
        {
            switch (field.Role)
            {
                case FieldRole.FileName:
                    var target = block.AsSpan(codec.FieldOffset(field), field.Bytes);
                    target.Fill((byte)' ');
                    for (int i = 0; i < Math.Min(fileName.Length, field.Bytes); i++)
                    {
                        target[i] = fileName[i] is >= ' ' and < '\u007f' ? (byte)fileName[i] : (byte)'?';
                    }

                    break;
                case FieldRole.FileId:
                    codec.WriteField(block, field, (ulong)fileId);
                    break;
                case FieldRole.BlockNumber:
                    codec.WriteField(block, field, (ulong)blockNumber);
                    break;
                case FieldRole.PayloadLength:
                    codec.WriteField(block, field, (ulong)payload.Length);
                    break;
                case FieldRole.Sync:
                    // The first copy's sync; the flux writer puts each copy's own (BlockLayoutCodec.ForCopy).
                    codec.SyncOfCopy(0).CopyTo(block.AsSpan(codec.FieldOffset(field), field.Bytes));
                    break;
            }
        }

        payload.CopyTo(block.AsSpan(codec.HeaderBytes));
        if (codec.Checksum is not null)
        {
            codec.WriteCheck(block, payload.Length);
        }

        return block;
    }
}
