using TapeVault.Core.Formats;

namespace TapeVault.Core.Blocks;

// Sync fields: the bytes a format writes where a block begins, whose expected values may differ from copy to copy.
public sealed partial class BlockLayoutCodec
{
    /// <summary>The layout's sync field (always its first header field), or null when it has none.</summary>
    public HeaderField? SyncField => Layout.Header is [{ Role: FieldRole.Sync } sync, ..] ? sync : null;

    /// <summary>
    /// Which copy's expected sync bytes the block (or the header read so far) holds: 0 for the first copy, 1 for the
    /// second and so on; 0 when the layout has no sync field; -1 when the bytes are those of no copy, or too few.
    /// A field with one expected value for all copies matches as copy 0.
    /// </summary>
    public int MatchSync(ReadOnlySpan<byte> block)
    {
        if (SyncField is not { } sync)
        {
            return 0;
        }

        if (block.Length < sync.Bytes)
        {
            return -1;
        }

        var read = block[..sync.Bytes];
        for (int c = 0; c < sync.Expected.Count; c++)
        {
            if (read.SequenceEqual(sync.Expected[c].AsSpan()))
            {
                return c;
            }
        }

        return -1;
    }

    /// <summary>
    /// Which copy a reading began at, as far as its sync bytes tell: where the copies' expected syncs differ, the one
    /// copy whose sync agrees with every sync byte read, once at least two were read (a single byte misread in one bit
    /// may name the other copy of a sync such as 89/09). Null without a sync field that differs from copy to copy, with
    /// fewer than two sync bytes read, or when the bytes agree with no copy or with several.
    /// </summary>
    public int? SyncCopyRead(ReadOnlySpan<byte> block)
    {
        if (SyncField is not { Expected.Count: > 1 } sync)
        {
            return null;
        }

        int read = Math.Min(block.Length, sync.Bytes);
        if (read < 2)
        {
            return null;
        }

        int? found = null;
        for (int c = 0; c < sync.Expected.Count; c++)
        {
            if (block[..read].SequenceEqual(sync.Expected[c].AsSpan(0, read)))
            {
                if (found is not null)
                {
                    return null;
                }

                found = c;
            }
        }

        return found;
    }

    /// <summary>The expected sync bytes of copy <paramref name="copy"/> (empty without a sync field).</summary>
    public ReadOnlySpan<byte> SyncOfCopy(int copy)
    {
        if (SyncField is not { } sync)
        {
            return [];
        }

        ArgumentOutOfRangeException.ThrowIfNegative(copy);
        return sync.Expected[Math.Min(copy, sync.Expected.Count - 1)].AsSpan();
    }

    /// <summary>
    /// Copy <paramref name="copy"/> of a whole block (header, payload, check) as the writer puts it on tape: the
    /// block itself where every copy is alike, else a new array with that copy's sync bytes. Where the check covers
    /// the sync and held over the block as given, it is computed again for the copy; a block altered after its check
    /// was computed stays as wrong in every copy.
    /// </summary>
    public byte[] ForCopy(byte[] block, int copy)
    {
        ArgumentNullException.ThrowIfNull(block);
        if (SyncField is not { } sync || sync.Expected.Count < 2 || block.Length < HeaderBytes + CheckBytes)
        {
            return block;
        }

        int payloadLength = block.Length - HeaderBytes - CheckBytes;
        bool recompute = CoversSync && Checksum is not null && ComputeCheck(block, payloadLength) == ReadStoredCheck(block, payloadLength);
        var written = (byte[])block.Clone();
        SyncOfCopy(copy).CopyTo(written);
        if (recompute)
        {
            WriteCheck(written, payloadLength);
        }

        return written;
    }

    // The sync is the first field, so a check covers it when its first covered stretch starts the block.
    private bool CoversSync => SyncField is not null && _coveredHeader.Length > 0 && _coveredHeader[0].Start == 0;

    /// <summary>
    /// Writes the first copy's sync bytes over a block's sync field when the bytes read there are those of another
    /// copy, so that all copies of a block agree byte for byte (the copy is known from the sync). A check that
    /// covers the sync is computed again. False (and nothing changed) when the sync matched no copy.
    /// </summary>
    public bool NormalizeSync(Span<byte> block, int payloadLength)
    {
        int copy = MatchSync(block);
        if (copy < 0)
        {
            return false;
        }

        if (copy > 0)
        {
            bool held = Checksum is not null && payloadLength >= 0 && block.Length >= BlockBytes(payloadLength)
                && ComputeCheck(block, payloadLength) == ReadStoredCheck(block, payloadLength);
            SyncOfCopy(0).CopyTo(block);
            if (held)
            {
                WriteCheck(block, payloadLength);
            }
        }

        return true;
    }
}
