namespace TapeVault.Core.Formats;

/// <summary>
/// Where a block kind's payload length comes from when no field of its own gives it: a field of the last block of
/// an earlier kind (a header block), or that block's start and end addresses.
/// </summary>
/// <param name="SourceKind">The index of the kind whose block carries the length (an earlier kind).</param>
/// <param name="LengthField">The source block's field holding the length, or null when addresses give it.</param>
/// <param name="StartField">The source block's start address field (with <paramref name="EndField"/>).</param>
/// <param name="EndField">The source block's end address field.</param>
/// <param name="InclusiveEnd">True when the end address is the last byte's (length = end − start + 1), false when it is the one after (end − start).</param>
public sealed record PayloadLengthRule(int SourceKind, HeaderField? LengthField, HeaderField? StartField, HeaderField? EndField, bool InclusiveEnd);

public sealed partial record BlockLayout
{
    /// <summary>The block kind's name (<c>block</c> for a profile with one kind).</summary>
    public string Kind { get; init; } = "block";

    /// <summary>Where the payload length comes from when an earlier block gives it; null otherwise.</summary>
    public PayloadLengthRule? LengthRule { get; init; }
}

public sealed partial record FormatProfile
{
    /// <summary>
    /// The block kinds a file is written as, in order (a header block, then a data block), each written
    /// <see cref="BlockLayout.Copies"/> times in a row; empty for a profile with one kind, which is <see cref="Layout"/>.
    /// With several, <see cref="Layout"/> is the first.
    /// </summary>
    public IReadOnlyList<BlockLayout> Kinds { get; init; } = [];

    /// <summary>Every block kind in the order a file writes them: <see cref="Kinds"/>, or <see cref="Layout"/> alone.</summary>
    public IReadOnlyList<BlockLayout> BlockKinds => Kinds.Count > 0 ? Kinds : [Layout];
}
