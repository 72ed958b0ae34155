namespace TapeVault.Core.Synthesis;

/// <summary>How much of a trial's capture the truth profile itself reads, which bounds what any draft can read of it.</summary>
public enum TruthReading
{
    /// <summary>The truth reads at least <see cref="DraftTally.LittleShare"/> of the blocks written.</summary>
    Enough,

    /// <summary>The truth reads some blocks, but under <see cref="DraftTally.LittleShare"/> of those written.</summary>
    Little,

    /// <summary>The truth reads none of the blocks written: the capture is lost to the read path, not to the draft.</summary>
    None,
}

/// <summary>
/// The draft figure's sums over trials, kept so that a block the read path loses (the truth profile reads it not) is
/// told apart from one the draft loses (the truth reads it, the confirmed draft not): every share is given both of
/// the blocks written and of the blocks the truth reads, and the captures the truth reads little or none of are
/// counted apart, with what the draft reads of the others alone.
/// </summary>
public sealed record DraftTally
{
    /// <summary>Under this share of its written blocks read by the truth, a capture is one the truth reads little of.</summary>
    public const double LittleShare = 0.5;

    public int Trials { get; init; }

    public int Written { get; init; }

    /// <summary>Blocks the truth profile reads exactly.</summary>
    public int Truth { get; init; }

    /// <summary>Blocks the confirmed draft reads exactly.</summary>
    public int Draft { get; init; }

    /// <summary>Blocks both the confirmed draft and the truth read.</summary>
    public int Both { get; init; }

    /// <summary>Captures the truth reads under <see cref="LittleShare"/> of, none included.</summary>
    public int TruthLittleTrials { get; init; }

    /// <summary>Captures the truth reads none of.</summary>
    public int TruthNoneTrials { get; init; }

    /// <summary>Blocks written on the captures the truth reads at least <see cref="LittleShare"/> of.</summary>
    public int WrittenWhereTruthReads { get; init; }

    /// <summary>Blocks the truth reads on those captures.</summary>
    public int TruthWhereTruthReads { get; init; }

    /// <summary>Blocks both read on those captures.</summary>
    public int BothWhereTruthReads { get; init; }

    /// <summary>Blocks written that the truth does not read: the read path's loss, which no draft can make up.</summary>
    public int LostByReadPath => Written - Truth;

    /// <summary>Blocks the truth reads that the confirmed draft does not: the draft's loss.</summary>
    public int LostByDraft => Truth - Both;

    public static TruthReading Classify(int written, int truthRead)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(written);
        ArgumentOutOfRangeException.ThrowIfNegative(truthRead);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(truthRead, written);
        return truthRead == 0 ? TruthReading.None
            : truthRead < LittleShare * written ? TruthReading.Little
            : TruthReading.Enough;
    }

    /// <summary>The tally with one more trial: <paramref name="both"/> of its blocks read by the draft and the truth alike.</summary>
    public DraftTally Add(int written, int truthRead, int draftRead, int both)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(draftRead);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(draftRead, written);
        ArgumentOutOfRangeException.ThrowIfNegative(both);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(both, Math.Min(truthRead, draftRead));
        var reading = Classify(written, truthRead);
        bool enough = reading == TruthReading.Enough;
        return this with
        {
            Trials = Trials + 1,
            Written = Written + written,
            Truth = Truth + truthRead,
            Draft = Draft + draftRead,
            Both = Both + both,
            TruthLittleTrials = TruthLittleTrials + (enough ? 0 : 1),
            TruthNoneTrials = TruthNoneTrials + (reading == TruthReading.None ? 1 : 0),
            WrittenWhereTruthReads = WrittenWhereTruthReads + (enough ? written : 0),
            TruthWhereTruthReads = TruthWhereTruthReads + (enough ? truthRead : 0),
            BothWhereTruthReads = BothWhereTruthReads + (enough ? both : 0),
        };
    }

    /// <summary>The sums of two tallies (families into the whole figure).</summary>
    public DraftTally Plus(DraftTally other)
    {
        ArgumentNullException.ThrowIfNull(other);
        return new DraftTally
        {
            Trials = Trials + other.Trials,
            Written = Written + other.Written,
            Truth = Truth + other.Truth,
            Draft = Draft + other.Draft,
            Both = Both + other.Both,
            TruthLittleTrials = TruthLittleTrials + other.TruthLittleTrials,
            TruthNoneTrials = TruthNoneTrials + other.TruthNoneTrials,
            WrittenWhereTruthReads = WrittenWhereTruthReads + other.WrittenWhereTruthReads,
            TruthWhereTruthReads = TruthWhereTruthReads + other.TruthWhereTruthReads,
            BothWhereTruthReads = BothWhereTruthReads + other.BothWhereTruthReads,
        };
    }
}
