using System.Globalization;
using TapeVault.Core.Checksums;

namespace TapeVault.Core.Drafting;

/// <summary>Where a header block says how long the data block after it is: a length field, or a start and an end address.</summary>
public sealed record LengthSource(int Offset, int Bytes, bool BigEndian, int? EndOffset, bool InclusiveEnd)
{
    public bool IsAddressPair => EndOffset is not null;
}

/// <summary>
/// What <see cref="BlockKindSearch"/> found: the sync bytes every block begins with (one value per copy where the
/// copies differ in it), how many copies of each block are written, the check after the sync, and, where a file is
/// a header block and a data block, the header block's size, its name field and where it gives the data's length.
/// </summary>
public sealed record KindsFinding(
    IReadOnlyList<byte[]> SyncPerCopy,
    int Copies,
    double CopiesShare,
    IBlockChecksum Checksum,
    bool ChecksumBigEndian,
    int BlocksTried,
    int BlocksHolding,
    int HeaderBodyBytes,
    (int Offset, int Bytes)? Name,
    LengthSource Length,
    int Files,
    bool LengthApproximate = false)
{
    public int SyncBytes => SyncPerCopy[0].Length;

    /// <summary>
    /// The same finding as a layout (the check's coverage starting after the sync, the header kind's fields, the
    /// blocks it holds on), so that its proof is weighed as any other reading's.
    /// </summary>
    public required LayoutFinding Layout { get; init; }
}

/// <summary>
/// Reads the structure of blocks whose bytes were framed by markers, so that each block is exactly as long as written:
/// a sync of a few bytes at the start of every block (a countdown, say, that may differ between the copies of a
/// block), copies of a block one after another (alike after the sync), a check value after the sync that some
/// checksum of the catalogue computes, and two block kinds in turn — a header block of one fixed length and a data
/// block whose length a field of the header block gives (a length, or start and end addresses, either byte order,
/// the end inclusive or exclusive). Every finding must hold on most blocks; nothing is taken from any one block.
/// </summary>
public static class BlockKindSearch
{
    /// <summary>The longest sync tried (the profile language allows 16 bytes).</summary>
    public const int MaximumSync = 16;

    public static KindsFinding? Search(IReadOnlyList<byte[]> blocks)
    {
        ArgumentNullException.ThrowIfNull(blocks);
        var usable = blocks.Where(b => b.Length >= 4).ToList();
        if (usable.Count < 4)
        {
            return null;
        }

        // The longest prefix that a few values (one per copy) share across nearly every block, and after which a
        // check holds: a constant byte after the sync (a header's type byte) is no sync, as data blocks lack it.
        for (int sync = MaximumSync; sync >= 1; sync--)
        {
            var values = SyncValues(usable, sync);
            if (values is null)
            {
                continue;
            }

            var synced = usable.Where(b => b.Length > sync + 1 && values.Any(v => b.AsSpan(0, sync).SequenceEqual(v))).ToList();
            var bodies = synced.Select(b => b[sync..]).ToList();
            var (checksum, big, _, _, chosen) = LayoutSearch.FindChecksum([.. bodies.Select(b => new DraftBlock([b]))], 0);
            if (checksum is null)
            {
                continue;
            }

            // The blocks whose bodies the check held on, in their order (each check computed once, in the search).
            var held = chosen.ToHashSet(ReferenceEqualityComparer.Instance);
            var holding = synced.Where((_, i) => held.Contains(bodies[i])).ToList();
            var (copies, share, perCopy) = Copies(holding, sync, values);
            var distinct = LayoutSearch.WithoutRepeats(holding.Select(b => b[sync..]));
            var kinds = Kinds(distinct, checksum.Width);
            bool approximate = false;
            if (kinds is null)
            {
                // No data block held its check: the header blocks that did, and the length of the block read after
                // each (its bytes damaged, its length about right), give where the length is, but not to the byte.
                var after = new List<byte[]>();
                int headerLength = distinct.GroupBy(b => b.Length).OrderByDescending(g => g.Count()).First().Key;
                for (int i = 0; i < usable.Count; i++)
                {
                    var body = usable[i].Length > sync ? usable[i][sync..] : [];
                    if (body.Length == headerLength && distinct.Any(d => d.AsSpan().SequenceEqual(body)))
                    {
                        int j = i + 1;
                        while (j < usable.Count && usable[j].Length - sync == headerLength)
                        {
                            j++;
                        }

                        // The longest of the blocks up to the next header block: its copies lose frames to damage.
                        int longest = j;
                        for (int m = j; m < usable.Count && usable[m].Length - sync != headerLength; m++)
                        {
                            longest = usable[m].Length > usable[longest].Length ? m : longest;
                        }

                        if (j < usable.Count && (after.Count == 0 || !after[^2].AsSpan().SequenceEqual(body)))
                        {
                            after.Add(body);
                            after.Add(usable[longest][sync..]);
                        }
                    }
                }

                kinds = Kinds(after, checksum.Width, 3);
                approximate = kinds is not null;
            }

            if (kinds is null)
            {
                return null;
            }

            var (headerBody, name, length, files) = kinds.Value;
            var fields = new List<FoundField>();
            if (name is { } n)
            {
                fields.Add(new FoundField(sync + n.Item1, n.Item2, "file-name", false, $"{n.Item2} bytes of printable text in every header block"));
            }

            // The header kind's length field (or address pair) gives the next block's length, not its own: no role.
            string told = $"gives the length of the data block after it in {files} files";
            fields.AddRange(length.IsAddressPair
                ? [new FoundField(sync + length.Offset, 2, "other", length.BigEndian, "start address; " + told), new FoundField(sync + length.EndOffset!.Value, 2, "other", length.BigEndian, (length.InclusiveEnd ? "inclusive" : "exclusive") + " end address; " + told)]
                : [new FoundField(sync + length.Offset, length.Bytes, "other", length.BigEndian, told)]);
            fields.Sort((a, b) => a.Offset.CompareTo(b.Offset));
            var layout = new LayoutFinding(checksum.Name, big, sync, checksum.Width, usable.Count, holding.Count, sync + headerBody, fields, null,
                Math.Max(1, holding.Max(b => b.Length) - sync - checksum.Width), copies, share, holding);
            return new KindsFinding(perCopy ?? [values[0]], copies, share, checksum, big, usable.Count, holding.Count, headerBody, name, length, files, approximate) { Layout = layout };
        }

        return null;
    }

    /// <summary>The values (at most four, one per copy) that the first <paramref name="sync"/> bytes take in at least 85 % of blocks, or null.</summary>
    private static List<byte[]>? SyncValues(List<byte[]> blocks, int sync)
    {
        var groups = blocks.Where(b => b.Length > sync).GroupBy(b => Convert.ToHexString(b, 0, sync)).OrderByDescending(g => g.Count()).ToList();
        var values = new List<byte[]>();
        int covered = 0;
        foreach (var g in groups.Take(4))
        {
            if (g.Count() < Math.Max(2, 0.15 * blocks.Count))
            {
                break;
            }

            var value = g.First()[..sync];

            // One byte repeated proves nothing (a lead-in or a stuck line reads as such a run).
            if (sync > 1 && value.AsSpan().IndexOfAnyExcept(value[0]) < 0)
            {
                return null;
            }

            values.Add(value);
            covered += g.Count();
        }

        return values.Count > 0 && covered >= 0.85 * blocks.Count ? values : null;
    }

    /// <summary>
    /// How many copies of a block are written (runs of equal bodies), the share of blocks in runs of that length,
    /// and the sync before each copy where the copies' syncs differ (null where every copy has the same).
    /// </summary>
    private static (int Copies, double Share, List<byte[]>? PerCopy) Copies(List<byte[]> holding, int sync, List<byte[]> values)
    {
        var (copies, share, runs) = LayoutSearch.Copies([.. holding.Select(b => b[sync..])]);
        if (copies == 1)
        {
            return CopiesBySync(holding, sync, values, runs) is { } bySync ? bySync : (1, share, null);
        }

        // The sync of each copy: the value most full runs have in that place.
        var perCopy = new List<byte[]>();
        for (int k = 0; k < copies; k++)
        {
            var value = runs.Where(r => r.Length == copies).GroupBy(r => Convert.ToHexString(holding[r.Start + k], 0, sync)).OrderByDescending(g => g.Count()).First();
            perCopy.Add(holding[value.First().Start + k][..sync]);
        }

        return (copies, share, perCopy.Skip(1).All(p => p.AsSpan().SequenceEqual(perCopy[0])) ? null : perCopy);
    }

    /// <summary>
    /// Copies that differ in their sync, where damage left most blocks without their twin: the runs of alike blocks
    /// then count more lone blocks than pairs, yet a lone copy still says which copy it is by its sync. Where the first
    /// bytes take two values or more and every run of two alike blocks or more holds a different value in each place
    /// (the same order in every run), the copies are the longest such run, each copy's sync the value runs hold in its
    /// place, and the share the blocks whose syncs stand in that order (a lone block of any copy's sync counts).
    /// Null where no run of alike blocks shows it (a sync that differs between block kinds, written once each).
    /// </summary>
    private static (int Copies, double Share, List<byte[]> PerCopy)? CopiesBySync(List<byte[]> holding, int sync, List<byte[]> values, List<(int Start, int Length)> runs)
    {
        var repeated = runs.Where(r => r.Length >= 2).ToList();
        if (values.Count < 2 || repeated.Count == 0)
        {
            return null;
        }

        string Sync(int i) => Convert.ToHexString(holding[i], 0, sync);
        int copies = Math.Min(values.Count, repeated.Max(r => r.Length));
        var perCopy = new List<string>();
        for (int k = 0; k < copies; k++)
        {
            var inPlace = repeated.Where(r => r.Length > k).Select(r => Sync(r.Start + k)).Distinct().ToList();
            if (inPlace.Count != 1 || perCopy.Contains(inPlace[0]))
            {
                return null;
            }

            perCopy.Add(inPlace[0]);
        }

        // A run in order: its syncs are the per-copy values from some copy on, one after another.
        bool InOrder((int Start, int Length) run)
        {
            int first = perCopy.IndexOf(Sync(run.Start));
            return first >= 0 && first + run.Length <= copies && Enumerable.Range(0, run.Length).All(j => Sync(run.Start + j) == perCopy[first + j]);
        }

        double share = (double)runs.Where(InOrder).Sum(r => r.Length) / holding.Count;
        return (copies, share, [.. perCopy.Select(Convert.FromHexString)]);
    }

    /// <summary>
    /// A header block of one length followed by a data block of another, file after file: the header's size, its
    /// name field and where it gives the data's length (which must hold for every header and data block read in turn).
    /// </summary>
    private static (int HeaderBody, (int, int)? Name, LengthSource Length, int Files)? Kinds(List<byte[]> distinct, int checkBytes, int tolerance = 0)
    {
        // The header kind's length: the commonest, then the shortest (a header block lost to damage leaves its
        // file's data block with no header before it, so one header block read may be all there is).
        var byLength = distinct.GroupBy(b => b.Length).OrderByDescending(g => g.Count()).ThenBy(g => g.Key).ToList();
        foreach (var group in byLength)
        {
            int length = group.Key;
            var pairs = new List<(byte[] Header, int Payload)>();
            for (int i = 0; i + 1 < distinct.Count; i++)
            {
                if (distinct[i].Length == length && distinct[i + 1].Length != length)
                {
                    pairs.Add((distinct[i], distinct[i + 1].Length - checkBytes));
                }
            }

            if (pairs.Count == 0)
            {
                continue;
            }

            // One header and data block read in turn prove a length only in a field of two bytes or more (a
            // one-byte field matches by chance too often).
            int body = length - checkBytes;
            var source = LengthIn(pairs, body, tolerance);
            if (source is null || (pairs.Count == 1 && source.Bytes < 2))
            {
                continue;
            }

            return (body, NameIn([.. pairs.Select(p => p.Header)], body, source), source, pairs.Count);
        }

        return null;
    }

    private static LengthSource? LengthIn(List<(byte[] Header, int Payload)> pairs, int body, int tolerance)
    {
        // Exact: every pair. Approximate (damaged data blocks): within a few bytes and a per cent, in half the pairs.
        int needed = tolerance == 0 ? pairs.Count : Math.Max(1, (pairs.Count + 1) / 2);
        int Slack(int payload) => tolerance == 0 ? 0 : tolerance + (payload / 100);

        // Start and end addresses side by side first: with a start of 0 an exclusive end is also a length, and the
        // address pair says what the header holds.
        foreach (bool big in new[] { false, true })
        {
            for (int offset = 0; offset + 4 <= body; offset++)
            {
                foreach (bool inclusive in new[] { true, false })
                {
                    if (pairs.Count(p => Math.Abs((long)LayoutSearch.Read(p.Header.AsSpan(offset + 2, 2), big) - LayoutSearch.Read(p.Header.AsSpan(offset, 2), big) + (inclusive ? 1 : 0) - p.Payload) <= Slack(p.Payload)) >= needed)
                    {
                        return new LengthSource(offset, 2, big, offset + 2, inclusive);
                    }
                }
            }
        }

        foreach (int width in new[] { 2, 1 })
        {
            foreach (bool big in width == 1 ? new[] { false } : [false, true])
            {
                for (int offset = 0; offset + width <= body; offset++)
                {
                    if (pairs.Count(p => Math.Abs(LayoutSearch.Read(p.Header.AsSpan(offset, width), big) - (long)p.Payload) <= Slack(p.Payload)) >= needed && (tolerance == 0 || width == 2))
                    {
                        return new LengthSource(offset, width, big, null, false);
                    }
                }
            }
        }

        return null;
    }

    private static (int, int)? NameIn(List<byte[]> headers, int body, LengthSource length)
    {
        int lengthEnd = length.EndOffset is { } e ? e + 2 : length.Offset + length.Bytes;
        return LayoutSearch.FindName(headers, 0, body, i => i < length.Offset || i >= lengthEnd);
    }

    public static string Hex(byte[] bytes) => string.Join(' ', bytes.Select(b => b.ToString("X2", CultureInfo.InvariantCulture)));
}
