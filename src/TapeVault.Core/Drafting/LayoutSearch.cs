using TapeVault.Core.Checksums;

namespace TapeVault.Core.Drafting;

/// <summary>One block as a draft read it: the bytes, and other readings of its end where the end is uncertain.</summary>
public sealed record DraftBlock(IReadOnlyList<byte[]> Readings)
{
    public byte[] First => Readings[0];
}

/// <summary>A header field a draft found, by offset: what it is, and how it was told.</summary>
public sealed record FoundField(int Offset, int Bytes, string Role, bool BigEndian, string Evidence, int? ZeroMeans = null);

/// <summary>
/// What the block layout search found: the check value (its checksum, byte order and the offset its coverage starts
/// at), the header's size and the fields it could name, the payload length where it is fixed, and how many copies of
/// each block the tape holds.
/// </summary>
public sealed record LayoutFinding(
    string? Checksum,
    bool ChecksumBigEndian,
    int CoverageStart,
    int ChecksumBytes,
    int BlocksTried,
    int BlocksHolding,
    int HeaderBytes,
    IReadOnlyList<FoundField> Fields,
    int? FixedPayloadBytes,
    int MaximumPayloadBytes,
    int Copies,
    double CopiesShare,
    IReadOnlyList<byte[]> Blocks)
{
    public bool HasChecksum => Checksum is not null;

    /// <summary>Whether every header byte belongs to a field whose role was told from the blocks.</summary>
    public bool HeaderExplained => Fields.Sum(f => f.Bytes) == HeaderBytes && Fields.All(f => f.Role != "other");

    /// <summary>
    /// The sync characters before the check's coverage where a search proved them otherwise than by every block
    /// holding them alike (<see cref="CharacterLeaderSearch"/>: the characters after a leader that most blocks share);
    /// null where the sync, if any, is the bytes every block holds alike before the coverage.
    /// </summary>
    public byte[]? Sync { get; init; }
}

/// <summary>
/// Searches decoded blocks for their layout: every checksum of the catalogue (<see cref="ChecksumCatalog"/>), stored
/// in either byte order after the bytes it covers, from the first byte or from a few bytes in (a header outside the
/// check); then a header field that always holds the payload's length, one that counts blocks, a printable name; and
/// copies of a block written one after another. Nothing is taken from any one block: a finding must hold on most.
/// </summary>
public static class LayoutSearch
{
    /// <summary>The furthest into a block a check's coverage may start (a header it leaves out).</summary>
    public const int MaximumCoverageStart = 8;

    /// <summary>At most this many blocks are tried: enough to tell a check from chance many times over.</summary>
    public const int MaximumBlocks = 16;

    private static readonly Lazy<IReadOnlyList<IBlockChecksum>> Candidates = new(() =>
    {
        var seen = new HashSet<ChecksumParameters>();
        var list = new List<IBlockChecksum>();
        foreach (string name in ChecksumCatalog.Names)
        {
            var checksum = ChecksumCatalog.Get(name);
            if (seen.Add(ChecksumCatalog.ParametersOf(checksum)))
            {
                list.Add(checksum);
            }
        }

        // A 16-bit additive sum is no catalogue name but a common check of the period (common practice).
        var sum16 = ChecksumCatalog.Create(new SumParameters(16, SumCarry.None, SumComplement.None));
        if (seen.Add(ChecksumCatalog.ParametersOf(sum16)))
        {
            list.Add(sum16);
        }

        return list;
    });

    /// <summary>The checksums a search tries: the catalogue's (one of each set of parameters) and a 16-bit additive sum.</summary>
    internal static IReadOnlyList<IBlockChecksum> Checks => Candidates.Value;

    /// <summary>How many of <paramref name="blocks"/> some catalogue checksum holds on: the quick score of a way of reading them.</summary>
    /// <param name="blocks">The blocks as read.</param>
    /// <param name="fieldsInCoverage">
    /// Whether the bytes before the check's coverage are known to be no header fields (sync characters after a leader,
    /// say): then the length, counter and name are looked for from where the coverage starts.
    /// </param>
    public static LayoutFinding Search(IReadOnlyList<DraftBlock> blocks, bool fieldsInCoverage = false)
    {
        ArgumentNullException.ThrowIfNull(blocks);
        var tried = blocks.Where(b => b.First.Length >= 3).Take(MaximumBlocks).ToList();
        var (checksum, big, start, holding, chosen) = FindChecksum(tried, MaximumCoverageStart);
        int fieldsFrom = fieldsInCoverage ? start : 0;
        var lengths = chosen.Select(b => b.Length).ToList();
        int width = checksum?.Width ?? 0;
        var fields = new List<FoundField>();
        int header = start;
        int? fixedPayload = null;
        var good = chosen.Where(b => b.Length > width + start).ToList();
        if (checksum is not null && good.Count > 0)
        {
            var lengthField = good.Select(b => b.Length).Distinct().Count() >= 2 ? FindLengthField(good, width, start, fieldsFrom) : null;
            if (lengthField is { } lf)
            {
                header = lf.Header;
                fields.Add(lf.Field);
            }
            else
            {
                fixedPayload = good.GroupBy(b => b.Length).OrderByDescending(g => g.Count()).First().Key - width - header;
            }

            fields.AddRange(FindCounterAndName(good, fieldsFrom, header, fields));
        }

        fields.Sort((a, b) => a.Offset.CompareTo(b.Offset));
        int maximum = Math.Max(1, good.Count > 0 ? good.Max(b => b.Length) - width - header : 1);
        var (copies, share, _) = Copies(checksum is null ? [.. tried.Select(b => b.First)] : chosen);
        return new LayoutFinding(checksum?.Name, big, start, width, tried.Count, holding, header, fields, fixedPayload, maximum, copies, share, chosen);
    }

    /// <summary>
    /// The catalogue checksum (<see cref="Checks"/>) that holds on the most of <paramref name="blocks"/> (at least half,
    /// and two), stored at each block's end in either byte order, its coverage starting at most
    /// <paramref name="maximumStart"/> bytes in; on a tie the wider check, else the first tried. With the blocks (the
    /// first reading of each that holds) it holds on.
    /// </summary>
    internal static (IBlockChecksum? Checksum, bool BigEndian, int Start, int Holding, List<byte[]> Chosen) FindChecksum(IReadOnlyList<DraftBlock> blocks, int maximumStart)
    {
        IBlockChecksum? best = null;
        bool bestBig = true;
        int bestStart = 0;
        int bestHolding = 0;
        List<byte[]> bestChosen = [.. blocks.Select(b => b.First)];
        int needed = Math.Max(2, (blocks.Count + 1) / 2);
        foreach (var checksum in Candidates.Value)
        {
            for (int start = 0; start <= maximumStart; start++)
            {
                int holdBig = 0;
                int holdLittle = 0;
                var chosenBig = new byte[blocks.Count][];
                var chosenLittle = new byte[blocks.Count][];
                for (int i = 0; i < blocks.Count; i++)
                {
                    // Give up on this reading once too few blocks are left to reach the share needed.
                    if (Math.Max(holdBig, holdLittle) + (blocks.Count - i) < needed)
                    {
                        break;
                    }

                    foreach (var reading in blocks[i].Readings)
                    {
                        var (big, little) = Holds(checksum, reading, start);
                        if (chosenBig[i] is null && big)
                        {
                            chosenBig[i] = reading;
                            holdBig++;
                        }

                        if (chosenLittle[i] is null && little)
                        {
                            chosenLittle[i] = reading;
                            holdLittle++;
                        }
                    }
                }

                foreach (var (holding, big, chosen) in new[] { (holdBig, true, chosenBig), (holdLittle, false, chosenLittle) })
                {
                    // On a tie the wider check wins: the low byte of a 16-bit sum is the 8-bit sum of the same
                    // bytes, so the narrower check holds wherever the wider one does, one byte short.
                    if (holding >= needed && (holding > bestHolding || (holding == bestHolding && best is not null && checksum.Width > best.Width)))
                    {
                        best = checksum;
                        bestBig = big;
                        bestStart = start;
                        bestHolding = holding;
                        bestChosen = [.. chosen.Where(c => c is not null)];
                    }
                }
            }
        }

        return (best, bestBig, bestStart, bestHolding, bestChosen);
    }

    /// <summary>
    /// Whether <paramref name="checksum"/>, computed once over <paramref name="reading"/> from <paramref name="start"/>
    /// up to the check value stored at its end, equals that value read big-endian and little-endian (a one-byte value
    /// has one order). A stored check of all zeros or all ones is no evidence: a reading lengthened by lead-in bits ends
    /// in such bytes, and a CRC over a message with its own CRC after it leaves a constant (zero where nothing is xored
    /// out), so the check would "hold" one field too late; nor are covered bytes that are all zero.
    /// </summary>
    internal static (bool Big, bool Little) Holds(IBlockChecksum checksum, ReadOnlySpan<byte> reading, int start = 0)
    {
        ArgumentNullException.ThrowIfNull(checksum);
        int w = checksum.Width;
        if (reading.Length < start + w + 1)
        {
            return default;
        }

        var covered = reading[start..^w];
        var stored = reading[^w..];
        if (AllZero(covered) || stored.IndexOfAnyExcept((byte)0) < 0 || stored.IndexOfAnyExcept((byte)0xFF) < 0)
        {
            return default;
        }

        uint value = checksum.Compute(covered);
        return (value == Read(stored, true), w > 1 && value == Read(stored, false));
    }

    /// <summary>Whether <paramref name="checksum"/> holds on <paramref name="reading"/>, its value stored at the end in the order given (see <see cref="Holds(IBlockChecksum, ReadOnlySpan{byte}, int)"/>).</summary>
    internal static bool Holds(IBlockChecksum checksum, bool bigEndian, ReadOnlySpan<byte> reading, int start = 0)
    {
        var (big, little) = Holds(checksum, reading, start);
        return bigEndian ? big : little;
    }

    private static (FoundField Field, int Header)? FindLengthField(List<byte[]> blocks, int checkBytes, int coverageStart, int fieldsFrom)
    {
        const int maximumHeader = 24;
        for (int header = Math.Max(1, coverageStart); header <= maximumHeader; header++)
        {
            for (int offset = fieldsFrom; offset < header; offset++)
            {
                foreach (int width in new[] { 1, 2 })
                {
                    if (offset + width > header)
                    {
                        continue;
                    }

                    foreach (bool big in width == 1 ? new[] { false } : [false, true])
                    {
                        // A one-byte length may write a full block of 256 as 0 (common practice).
                        int agree = 0;
                        int zeroes = 0;
                        foreach (var block in blocks)
                        {
                            uint value = block.Length >= header + checkBytes ? Read(block.AsSpan(offset, width), big) : uint.MaxValue;
                            int payload = block.Length - header - checkBytes;
                            if (payload < 0)
                            {
                                continue;
                            }

                            if (value == (uint)payload)
                            {
                                agree++;
                            }
                            else if (width == 1 && value == 0 && payload == 256)
                            {
                                agree++;
                                zeroes++;
                            }
                        }

                        if (agree == blocks.Count)
                        {
                            return (new FoundField(offset, width, "payload-length", big,
                                $"holds the payload's length in all {agree} blocks whose check holds, whose lengths differ" + (zeroes > 0 ? $" ({zeroes} of 256 bytes written as 0)" : string.Empty),
                                zeroes > 0 ? 256 : null), header);
                        }
                    }
                }
            }
        }

        return null;
    }

    private static IEnumerable<FoundField> FindCounterAndName(List<byte[]> blocks, int from, int header, List<FoundField> taken)
    {
        bool free(int offset, int bytes) => !taken.Any(f => offset < f.Offset + f.Bytes && f.Offset < offset + bytes);
        var distinct = WithoutRepeats(blocks);
        var found = new List<FoundField>();
        if (FindName(blocks, from, header, i => free(i, 1)) is { } name)
        {
            found.Add(new FoundField(name.Offset, name.Bytes, "file-name", false, $"{name.Bytes} bytes of printable text in every block"));
        }

        // A block counter: a field that goes up by one from each block to the next in most steps.
        if (distinct.Count >= 3)
        {
            FoundField? counter = null;
            double bestShare = 0.6;
            for (int offset = from; offset < header; offset++)
            {
                foreach (int width in new[] { 2, 1 })
                {
                    if (offset + width > header || !free(offset, width) || found.Any(f => offset < f.Offset + f.Bytes && f.Offset < offset + width))
                    {
                        continue;
                    }

                    foreach (bool big in width == 1 ? new[] { false } : [false, true])
                    {
                        int up = 0;
                        for (int i = 1; i < distinct.Count; i++)
                        {
                            if (Read(distinct[i].AsSpan(offset, width), big) == Read(distinct[i - 1].AsSpan(offset, width), big) + 1)
                            {
                                up++;
                            }
                        }

                        double share = (double)up / (distinct.Count - 1);
                        if (share > bestShare + 1e-9)
                        {
                            bestShare = share;
                            counter = new FoundField(offset, width, "block-number", big, $"goes up by one from block to block in {up} of {distinct.Count - 1} steps");
                        }
                    }
                }
            }

            if (counter is not null)
            {
                found.Add(counter);
            }
        }

        return found;
    }

    /// <summary>
    /// How many copies of a block the tape holds: the blocks in runs of equal ones, the run length that covers the most
    /// blocks (the shorter on a tie, at most eight), the share of blocks in runs of that length, and the runs.
    /// </summary>
    internal static (int Copies, double Share, List<(int Start, int Length)> Runs) Copies(IReadOnlyList<byte[]> blocks)
    {
        var runs = new List<(int Start, int Length)>();
        if (blocks.Count < 2)
        {
            runs.AddRange(blocks.Count == 1 ? [(0, 1)] : []);
            return (1, 0, runs);
        }

        int start = 0;
        for (int i = 1; i <= blocks.Count; i++)
        {
            if (i < blocks.Count && blocks[i].AsSpan().SequenceEqual(blocks[i - 1]))
            {
                continue;
            }

            runs.Add((start, i - start));
            start = i;
        }

        int copies = runs.GroupBy(r => r.Length).OrderByDescending(g => g.Count() * g.Key).ThenBy(g => g.Key).First().Key;
        copies = Math.Clamp(copies, 1, 8);
        double share = (double)runs.Where(r => r.Length == copies).Sum(r => r.Length) / blocks.Count;
        return (copies, share, runs);
    }

    /// <summary>The blocks with each run of equal ones (the copies of a block) kept once.</summary>
    internal static List<byte[]> WithoutRepeats(IEnumerable<byte[]> blocks)
    {
        var distinct = new List<byte[]>();
        foreach (var block in blocks)
        {
            if (distinct.Count == 0 || !distinct[^1].AsSpan().SequenceEqual(block))
            {
                distinct.Add(block);
            }
        }

        return distinct;
    }

    /// <summary>
    /// A printable name: the longest run (three bytes or more; the first of equal ones) of offsets from
    /// <paramref name="from"/> up to <paramref name="to"/>, each <paramref name="free"/>, that hold printable text in
    /// every block.
    /// </summary>
    internal static (int Offset, int Bytes)? FindName(IReadOnlyList<byte[]> blocks, int from, int to, Func<int, bool> free)
    {
        int bestStart = -1;
        int bestLength = 0;
        for (int start = from; start < to; start++)
        {
            int length = 0;
            while (start + length < to && free(start + length) && blocks.All(b => b[start + length] is >= 0x20 and < 0x7f))
            {
                length++;
            }

            if (length > bestLength)
            {
                (bestStart, bestLength) = (start, length);
            }
        }

        return bestLength >= 3 ? (bestStart, bestLength) : null;
    }

    private static bool AllZero(ReadOnlySpan<byte> bytes) => bytes.IndexOfAnyExcept((byte)0) < 0;

    internal static uint Read(ReadOnlySpan<byte> bytes, bool bigEndian)
    {
        uint value = 0;
        for (int i = 0; i < bytes.Length; i++)
        {
            int index = bigEndian ? i : bytes.Length - 1 - i;
            value = (value << 8) | bytes[index];
        }

        return value;
    }
}
