namespace TapeVault.Core.Formats;

/// <summary>
/// The pulse-width family's symbols beyond the bits: what a pulse measures, the markers around each byte and at the
/// end of a block, and the short gap between consecutive blocks. See docs/profiles.md.
/// </summary>
public sealed partial record PulseWidthEncoding
{
    /// <summary>
    /// True when each class is a half cycle (the time between two successive reversals of either direction); false
    /// (the default) when it is a whole cycle. A detector setting that counts one edge direction sees only whole
    /// cycles and reads nothing of a half-cycle format.
    /// </summary>
    public bool HalfCycles { get; init; }

    /// <summary>The class sequence written before every byte (empty for none).</summary>
    public IReadOnlyList<string> BeforeByte { get; init; } = [];

    /// <summary>The class sequence written after every byte, its parity and stop bits (empty for none).</summary>
    public IReadOnlyList<string> AfterByte { get; init; } = [];

    /// <summary>The class sequence written after a block's last byte, in place of the next byte's marker (empty for none).</summary>
    public IReadOnlyList<string> EndOfBlock { get; init; } = [];

    /// <summary>
    /// Pulses of the lead-in class a writer puts between consecutive blocks instead of a lead-in (0: every block has
    /// its own lead-in). A reader takes a run of at least half as many, followed by the sync, as a block start.
    /// </summary>
    public int BlockGap { get; init; }

    /// <summary>The shortest run of lead-in pulses that starts a block: the lead-in's minimum, or half the block gap where there is one.</summary>
    public int ShortestRun => BlockGap > 0 ? Math.Min(LeadInMinimum, Math.Max(8, (BlockGap + 1) / 2)) : LeadInMinimum;
}
