namespace TapeVault.Core.Drafting;

/// <summary>
/// Which runs of the lead-in class begin blocks, where blocks follow one another after short gaps. A gap is a run of
/// the lead-in class too short for a lead-in; but a run as long may lie inside a block, where a 0 bit is a cycle of
/// the lead-in class: a header whose block number and length are both zero (the first block of a file, 256 bytes)
/// holds sixteen 0 bits in a row, more after a name padded with spaces. Cut there, the block's first part (its sync
/// and header, or the sync alone, too short to be kept) ends at the run, and what follows the run begins with the
/// payload; the blocks no longer begin alike, and neither the sync nor the check is found. So a gap begins a block
/// only where the cycles after it begin as those after most gaps and lead-ins do. A run after which they do not, and
/// which data bits follow, is data: the block before it goes on over it. A run followed by anything else (noise
/// after the trailer, a dropout) ends the block before it and begins none.
/// </summary>
internal static class GapCuts
{
    /// <summary>
    /// How many cycles after a run are compared: the sync's bits after its leading 0 bits (which the gap takes) and
    /// a header's first bits, which every block shares; payload bits after a run inside a block match them by chance
    /// once in a few dozen.
    /// </summary>
    public const int ComparedCycles = 6;

    /// <summary>
    /// The runs (lead-ins and gaps, in order) that begin or end blocks, each with whether a block begins after it.
    /// Lead-ins (runs of <paramref name="leastLeadIn"/> cycles or more) always stay and begin blocks. Where no way of
    /// beginning is shared by half the runs or more, every run stays and begins a block.
    /// </summary>
    public static List<((int Class, int Start, int Length) Run, bool Begins)> Judge(int[] symbols, IReadOnlyList<(int Class, int Start, int Length)> runs, int leastLeadIn)
    {
        ArgumentNullException.ThrowIfNull(symbols);
        ArgumentNullException.ThrowIfNull(runs);
        var after = runs.Select(r => After(symbols, r.Start + r.Length)).ToList();
        var common = after.Where(a => a is not null).GroupBy(a => a!, StringComparer.Ordinal).OrderByDescending(g => g.Count()).FirstOrDefault();
        var result = new List<((int Class, int Start, int Length) Run, bool Begins)>();
        if (common is null || common.Count() < Math.Max(2, (runs.Count + 1) / 2))
        {
            result.AddRange(runs.Select(r => (r, true)));
            return result;
        }

        // Data bits: the lead-in class's cycles and those of the classes the common beginning holds.
        var bits = new HashSet<char>(common.Key.Where(c => c != '?'));
        for (int k = 0; k < runs.Count; k++)
        {
            var run = runs[k];
            if (run.Length >= leastLeadIn || after[k] == common.Key)
            {
                result.Add((run, true));
            }
            else if (!Bits(symbols, run.Start + run.Length, run.Class, bits))
            {
                result.Add((run, false));
            }
        }

        return result;
    }

    /// <summary>The classes of the <see cref="ComparedCycles"/> cycles from <paramref name="from"/> as text, null where the stretch ends first.</summary>
    private static string? After(int[] symbols, int from)
    {
        if (from + ComparedCycles > symbols.Length)
        {
            return null;
        }

        return string.Concat(symbols.AsSpan(from, ComparedCycles).ToArray().Select(Symbol));
    }

    private static bool Bits(int[] symbols, int from, int leadIn, HashSet<char> bits)
    {
        for (int i = from; i < Math.Min(symbols.Length, from + ComparedCycles); i++)
        {
            if (symbols[i] != leadIn && !bits.Contains(Symbol(symbols[i])))
            {
                return false;
            }
        }

        return from < symbols.Length;
    }

    /// <summary>A class as one character (no class: '?').</summary>
    private static char Symbol(int s) => s < 0 ? '?' : (char)('A' + s);
}
