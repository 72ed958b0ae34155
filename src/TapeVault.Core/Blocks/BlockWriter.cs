using TapeVault.Core.Checksums;
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

    /// <summary>One block: header fields by role, the payload, then the checksum.</summary>
    public static byte[] Build(BlockLayout layout, string fileName, long fileId, long blockNumber, ReadOnlySpan<byte> payload)
    {
        ArgumentNullException.ThrowIfNull(layout);
        var checksum = layout.Checksum is { } spec ? ChecksumCatalog.Get(spec.Algorithm) : null;
        int checkBytes = checksum?.Width ?? 0;
        var block = new byte[layout.HeaderBytes + payload.Length + checkBytes];
        int offset = 0;
        foreach (var field in layout.Header)
        {
            var target = block.AsSpan(offset, field.Bytes);
            switch (field.Role)
            {
                case FieldRole.FileName:
                    target.Fill((byte)' ');
                    for (int i = 0; i < Math.Min(fileName.Length, field.Bytes); i++)
                    {
                        target[i] = fileName[i] is >= ' ' and < '\u007f' ? (byte)fileName[i] : (byte)'?';
                    }

                    break;
                case FieldRole.FileId:
                    WriteUnsigned(target, (ulong)fileId, field.BigEndian);
                    break;
                case FieldRole.BlockNumber:
                    WriteUnsigned(target, (ulong)blockNumber, field.BigEndian);
                    break;
                case FieldRole.PayloadLength:
                    WriteUnsigned(target, (ulong)payload.Length, field.BigEndian);
                    break;
            }

            offset += field.Bytes;
        }

        payload.CopyTo(block.AsSpan(offset));
        offset += payload.Length;
        if (checksum is not null)
        {
            var covered = layout.Checksum!.Covers == ChecksumCoverage.Payload
                ? block.AsSpan(layout.HeaderBytes, payload.Length)
                : block.AsSpan(0, offset);
            WriteUnsigned(block.AsSpan(offset, checkBytes), checksum.Compute(covered), layout.Checksum.BigEndian);
        }

        return block;
    }

    private static void WriteUnsigned(Span<byte> target, ulong value, bool bigEndian)
    {
        for (int i = 0; i < target.Length; i++)
        {
            byte b = unchecked((byte)(value >> (8 * i)));
            target[bigEndian ? target.Length - 1 - i : i] = b;
        }
    }
}
