using System.Buffers;
using System.Runtime.CompilerServices;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Blocks;

/// <summary>
/// The one place that knows how a block's bytes lie: header fields at their offsets in their byte order, the payload,
/// then the check value over the bytes the profile says it covers. The assembler, the merge and the writer all read
/// and write blocks through it. A block here is the bytes from the first header byte on (header, payload, check).
/// </summary>
public sealed partial class BlockLayoutCodec
{
    private static readonly ConditionalWeakTable<BlockLayout, BlockLayoutCodec> Codecs = new();

    private readonly int[] _offsets;
    private readonly (int Start, int Length)[] _coveredHeader;
    private readonly int _coveredHeaderBytes;
    private readonly bool _coversPayload;
    private readonly uint _checkMask;

    public BlockLayoutCodec(BlockLayout layout)
    {
        ArgumentNullException.ThrowIfNull(layout);
        Layout = layout;
        Checksum = layout.Checksum?.Resolve();
        CheckBytes = Checksum?.Width ?? 0;
        _checkMask = CheckBytes >= 4 ? uint.MaxValue : (1u << (8 * CheckBytes)) - 1;
        _offsets = new int[layout.Header.Count];
        int offset = 0;
        for (int i = 0; i < _offsets.Length; i++)
        {
            _offsets[i] = offset;
            offset += layout.Header[i].Bytes;
        }

        HeaderBytes = offset;
        var ranges = new List<(int Start, int Length)>();
        _coversPayload = layout.Checksum?.Covers != ChecksumCoverage.Fields || layout.Checksum.CoveredFields.Contains(ChecksumSpec.PayloadName);
        for (int i = 0; i < _offsets.Length; i++)
        {
            bool covered = layout.Checksum?.Covers switch
            {
                ChecksumCoverage.HeaderAndPayload => true,
                ChecksumCoverage.Fields => layout.Checksum.CoveredFields.Contains(layout.Header[i].Name),
                _ => false,
            };
            if (!covered)
            {
                continue;
            }

            // Neighbouring covered fields make one range, so that the usual coverages are one slice of the block.
            if (ranges.Count > 0 && ranges[^1].Start + ranges[^1].Length == _offsets[i])
            {
                ranges[^1] = (ranges[^1].Start, ranges[^1].Length + layout.Header[i].Bytes);
            }
            else
            {
                ranges.Add((_offsets[i], layout.Header[i].Bytes));
            }
        }

        _coveredHeader = [.. ranges];
        _coveredHeaderBytes = ranges.Sum(r => r.Length);
    }

    /// <summary>The codec of <paramref name="layout"/>, made once per layout instance.</summary>
    public static BlockLayoutCodec For(BlockLayout layout)
    {
        ArgumentNullException.ThrowIfNull(layout);
        return Codecs.GetValue(layout, static l => new BlockLayoutCodec(l));
    }

    public BlockLayout Layout { get; }

    /// <summary>The layout's checksum; null when blocks carry no check value.</summary>
    public IBlockChecksum? Checksum { get; }

    public int HeaderBytes { get; }

    /// <summary>Bytes of the stored check value (0 without a checksum).</summary>
    public int CheckBytes { get; }

    /// <summary>The length of a whole block whose payload is <paramref name="payloadLength"/> bytes.</summary>
    public int BlockBytes(int payloadLength) => HeaderBytes + payloadLength + CheckBytes;

    /// <summary>Where <paramref name="field"/> (one of the layout's header fields) starts in the block.</summary>
    public int FieldOffset(HeaderField field)
    {
        ArgumentNullException.ThrowIfNull(field);
        int equal = -1;
        for (int i = 0; i < _offsets.Length; i++)
        {
            if (ReferenceEquals(Layout.Header[i], field))
            {
                return _offsets[i];
            }

            if (equal < 0 && Layout.Header[i] == field)
            {
                equal = i;
            }
        }

        return equal >= 0 ? _offsets[equal] : throw new ArgumentException($"The field '{field.Name}' is not in the layout's header.", nameof(field));
    }

    /// <summary>
    /// The unsigned value of a field of up to eight bytes in its byte order, from a block or its header; a stored 0
    /// reads as the value the field says it stands for (<see cref="HeaderField.ZeroMeans"/>).
    /// </summary>
    public long ReadField(ReadOnlySpan<byte> bytes, HeaderField field)
    {
        if (!TryReadField(bytes, field, out long value))
        {
            throw new ArgumentException($"The bytes end before the field '{field.Name}' does.", nameof(bytes));
        }

        return value;
    }

    /// <summary>As <see cref="ReadField"/>; false when <paramref name="bytes"/> end before the field does (a header cut short).</summary>
    public bool TryReadField(ReadOnlySpan<byte> bytes, HeaderField field, out long value)
    {
        ArgumentNullException.ThrowIfNull(field);
        if (field.Bytes > 8)
        {
            throw new ArgumentException($"The field '{field.Name}' has {field.Bytes} bytes; a number has at most 8.", nameof(field));
        }

        int offset = FieldOffset(field);
        if (offset + field.Bytes > bytes.Length)
        {
            value = 0;
            return false;
        }

        value = unchecked((long)ReadUnsigned(bytes.Slice(offset, field.Bytes), field.BigEndian));
        if (value == 0 && field.ZeroMeans is { } zeroMeans)
        {
            value = zeroMeans;
        }

        return true;
    }

    /// <summary>
    /// Writes <paramref name="value"/> into a field in its byte order (bits above the field's width are dropped); the
    /// value a stored 0 stands for (<see cref="HeaderField.ZeroMeans"/>) is written as 0, and 0 itself cannot be written
    /// into such a field (it would read back as that value).
    /// </summary>
    public void WriteField(Span<byte> block, HeaderField field, ulong value)
    {
        ArgumentNullException.ThrowIfNull(field);
        if (field.ZeroMeans is { } zeroMeans)
        {
            if (value == 0)
            {
                throw new ArgumentException($"The field '{field.Name}' cannot hold 0: a stored 0 reads as {zeroMeans}.", nameof(value));
            }

            if (value == (ulong)zeroMeans)
            {
                value = 0;
            }
        }

        WriteUnsigned(block.Slice(FieldOffset(field), field.Bytes), value, field.BigEndian);
    }

    /// <summary>An unsigned number of up to eight bytes, most significant byte first when <paramref name="bigEndian"/>.</summary>
    public static ulong ReadUnsigned(ReadOnlySpan<byte> bytes, bool bigEndian)
    {
        ulong value = 0;
        for (int i = 0; i < bytes.Length; i++)
        {
            value = unchecked((value << 8) | bytes[bigEndian ? i : bytes.Length - 1 - i]);
        }

        return value;
    }

    /// <summary>The low bytes of <paramref name="value"/> into all of <paramref name="target"/>, in the byte order given.</summary>
    public static void WriteUnsigned(Span<byte> target, ulong value, bool bigEndian)
    {
        for (int i = 0; i < target.Length; i++)
        {
            byte b = i < 8 ? unchecked((byte)(value >> (8 * i))) : (byte)0;
            target[bigEndian ? target.Length - 1 - i : i] = b;
        }
    }

    /// <summary>The check value computed over the bytes the checksum covers, of a block with a payload of <paramref name="payloadLength"/> bytes.</summary>
    public uint ComputeCheck(ReadOnlySpan<byte> block, int payloadLength)
    {
        var checksum = Checksum ?? throw new InvalidOperationException("The layout has no checksum.");
        ArgumentOutOfRangeException.ThrowIfNegative(payloadLength);
        if (HeaderBytes + payloadLength > block.Length)
        {
            throw new ArgumentException($"The block holds {block.Length} bytes, fewer than its header and a payload of {payloadLength}.", nameof(block));
        }

        // Most coverages are one stretch of the block; only a check that skips a field needs the pieces joined.
        bool payloadPiece = _coversPayload && payloadLength > 0;
        int pieces = _coveredHeader.Length + (payloadPiece ? 1 : 0);
        bool joinsPayload = _coveredHeader.Length > 0 && _coveredHeader[^1].Start + _coveredHeader[^1].Length == HeaderBytes;
        if (pieces == 0)
        {
            return checksum.Compute([]) & _checkMask;
        }

        if (pieces == 1 || (pieces == 2 && _coveredHeader.Length == 1 && joinsPayload))
        {
            int start = _coveredHeader.Length > 0 ? _coveredHeader[0].Start : HeaderBytes;
            int end = payloadPiece ? HeaderBytes + payloadLength : _coveredHeader[^1].Start + _coveredHeader[^1].Length;
            return checksum.Compute(block[start..end]) & _checkMask;
        }

        int total = (_coversPayload ? payloadLength : 0) + _coveredHeaderBytes;
        byte[] rented = ArrayPool<byte>.Shared.Rent(total);
        try
        {
            int at = 0;
            foreach (var (start, length) in _coveredHeader)
            {
                block.Slice(start, length).CopyTo(rented.AsSpan(at));
                at += length;
            }

            if (_coversPayload)
            {
                block.Slice(HeaderBytes, payloadLength).CopyTo(rented.AsSpan(at));
            }

            return checksum.Compute(rented.AsSpan(0, total)) & _checkMask;
        }
        finally
        {
            ArrayPool<byte>.Shared.Return(rented);
        }
    }

    /// <summary>
    /// Whether every byte the check covers and every byte of the stored check value are one and the same value (or
    /// the check covers nothing): then a holding check proves nothing, since a stuck line or a steady tone reads as
    /// such a run and zero-init CRCs, XOR and sums over zeros give zero for free.
    /// </summary>
    public bool CoveredAllAlike(ReadOnlySpan<byte> block, int payloadLength)
    {
        var check = block.Slice(HeaderBytes + payloadLength, CheckBytes);
        bool payloadPiece = _coversPayload && payloadLength > 0;
        if (_coveredHeaderBytes == 0 && !payloadPiece)
        {
            return true;
        }

        byte value = _coveredHeader.Length > 0 ? block[_coveredHeader[0].Start] : block[HeaderBytes];
        foreach (var (start, length) in _coveredHeader)
        {
            if (block.Slice(start, length).ContainsAnyExcept(value))
            {
                return false;
            }
        }

        return !(payloadPiece && block.Slice(HeaderBytes, payloadLength).ContainsAnyExcept(value)) && !check.ContainsAnyExcept(value);
    }

    /// <summary>The check value stored after a payload of <paramref name="payloadLength"/> bytes.</summary>
    public uint ReadStoredCheck(ReadOnlySpan<byte> block, int payloadLength)
    {
        var spec = Layout.Checksum ?? throw new InvalidOperationException("The layout has no checksum.");
        return (uint)ReadUnsigned(block.Slice(HeaderBytes + payloadLength, CheckBytes), spec.BigEndian);
    }

    /// <summary>Writes a check value into <paramref name="target"/> (the block's check bytes) in the profile's byte order.</summary>
    public void WriteStoredCheck(Span<byte> target, uint value)
    {
        var spec = Layout.Checksum ?? throw new InvalidOperationException("The layout has no checksum.");
        if (target.Length != CheckBytes)
        {
            throw new ArgumentException($"The check value takes {CheckBytes} bytes, not {target.Length}.", nameof(target));
        }

        WriteUnsigned(target, value, spec.BigEndian);
    }

    /// <summary>Computes the check value of a block and stores it after the payload.</summary>
    public void WriteCheck(Span<byte> block, int payloadLength) =>
        WriteStoredCheck(block.Slice(HeaderBytes + payloadLength, CheckBytes), ComputeCheck(block, payloadLength));

    /// <summary>
    /// Whether a whole block with a payload of <paramref name="payloadLength"/> bytes is intact as far as the layout
    /// can tell: its stored check value equals the one computed over what it covers, and its length field (if it
    /// has one) gives that payload length, since a block whose length field disagrees would be a different block.
    /// False when the layout has no checksum, or the bytes are too few for such a block.
    /// </summary>
    public bool CheckHolds(ReadOnlySpan<byte> block, int payloadLength)
    {
        if (Checksum is null || payloadLength < 0 || block.Length < BlockBytes(payloadLength))
        {
            return false;
        }

        if (ComputeCheck(block, payloadLength) != ReadStoredCheck(block, payloadLength))
        {
            return false;
        }

        return Layout.FieldWithRole(FieldRole.PayloadLength) is not { } lengthField || ReadField(block, lengthField) == payloadLength;
    }
}
