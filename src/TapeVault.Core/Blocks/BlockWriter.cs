using TapeVault.Core.Formats;

namespace TapeVault.Core.Blocks;

/// <summary>A file to put on tape.</summary>
public sealed record TapeFile(string Name, byte[] Content);

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
            if (layout.IsStream)
            {
                blocks.Add(file.Content);
                continue;
            }

            int size = layout.PayloadBytes ?? Math.Min(DefaultPayloadBytes, layout.MaximumPayloadBytes);
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
