using System.Collections.Immutable;

namespace TapeVault.Core.Merge;

/// <summary>
/// A reading whose weak check held but that nothing proved, at its place in a merge: the strength of the format's
/// check (weak or strong, by its false-match odds), its bytes, whether it was read by one detector setting only (no
/// other reading of the place has its bytes, and another setting of its capture read the place), and whether a check
/// proved the place. Counted over readings of known tapes, how often such readings are right when read by one setting
/// only weighs a position kept from one of them (<see cref="TapeMerger.WeakReadings"/>).
/// </summary>
public sealed record WeakReading
{
    public WeakReading(CheckStrength checkStrength, ImmutableArray<byte> header, ImmutableArray<byte> payload, bool byOneSettingOnly, bool atProvenPlace)
    {
        if (!Enum.IsDefined(checkStrength))
        {
            throw new ArgumentOutOfRangeException(nameof(checkStrength), checkStrength, "A check is weak, strong or absent.");
        }

        CheckStrength = checkStrength;
        Header = header.IsDefault ? throw new ArgumentException("A reading has a header, if empty.", nameof(header)) : header;
        Payload = payload.IsDefault ? throw new ArgumentException("A reading has a payload, if empty.", nameof(payload)) : payload;
        ByOneSettingOnly = byOneSettingOnly;
        AtProvenPlace = atProvenPlace;
    }

    public CheckStrength CheckStrength { get; }

    public ImmutableArray<byte> Header { get; }

    public ImmutableArray<byte> Payload { get; }

    public bool ByOneSettingOnly { get; }

    public bool AtProvenPlace { get; }
}

/// <summary>How far a holding block check proves a block, by its false-match odds (<see cref="Blocks.BlockScorer.WeakCheckFalseMatch"/>).</summary>
public enum CheckStrength
{
    /// <summary>The format has no block check.</summary>
    None,

    /// <summary>An additive sum or an xor: a holding check proves a block only beside decisions that vouch for it.</summary>
    Weak,

    /// <summary>A CRC, whose readings are weak only across a framing error.</summary>
    Strong,
}
