namespace TapeVault.Core.Blocks;

/// <summary>
/// The stretch of tape that some readings of one block prove. Where a reading starts is where its sync was read; where
/// it ends is proven only by a checksum that holds: a failed reading's end is its length field's word, and a misread
/// length runs on over the blocks after it. So once a clean reading is among them, a failed reading reaches as far past
/// its own start as the clean reading is long, however far it ran on; readings that are all failed end where the
/// furthest of them does.
/// </summary>
internal readonly record struct ProvenSpan
{
    private ProvenSpan(double start, double cleanEnd, double cleanLength, double failedStart, double anyEnd)
    {
        Start = start;
        CleanEnd = cleanEnd;
        CleanLength = cleanLength;
        FailedStart = failedStart;
        AnyEnd = anyEnd;
    }

    /// <summary>No reading yet: starts at +∞ and ends at −∞.</summary>
    public static ProvenSpan Empty { get; } = new(double.PositiveInfinity, double.NegativeInfinity, 0, double.NegativeInfinity, double.NegativeInfinity);

    /// <summary>The earliest start of the readings.</summary>
    public double Start { get; }

    private double CleanEnd { get; }

    private double CleanLength { get; }

    private double FailedStart { get; }

    private double AnyEnd { get; }

    /// <summary>Whether a clean reading is among them.</summary>
    public bool HasClean => CleanLength > 0;

    /// <summary>Where the readings end, as far as they prove it.</summary>
    public double End => HasClean ? Math.Max(CleanEnd, Math.Min(FailedStart + CleanLength, AnyEnd)) : AnyEnd;

    /// <summary>The span with one more reading.</summary>
    public ProvenSpan With(BlockCandidate c)
    {
        ArgumentNullException.ThrowIfNull(c);
        double start = Math.Min(Start, c.StartSeconds);
        double anyEnd = Math.Max(AnyEnd, c.EndSeconds);
        return c.Status == BlockStatus.Clean
            ? new(start, Math.Max(CleanEnd, c.EndSeconds), Math.Max(CleanLength, Math.Max(c.EndSeconds - c.StartSeconds, double.Epsilon)), FailedStart, anyEnd)
            : new(start, CleanEnd, CleanLength, Math.Max(FailedStart, c.StartSeconds), anyEnd);
    }
}
