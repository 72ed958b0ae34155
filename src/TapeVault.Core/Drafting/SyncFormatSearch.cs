using TapeVault.Core.Formats;

namespace TapeVault.Core.Drafting;

/// <summary>A way of turning a family's symbols into bits: the symbol of a 0 and of a 1 (−1 for a symbol that is no bit).</summary>
public sealed record BitMapping(string Name, int ZeroSymbol, int OneSymbol)
{
    public int Bit(int symbol) => symbol == ZeroSymbol ? 0 : symbol == OneSymbol ? 1 : -1;
}

/// <summary>The reading of a synchronous format the search settled on: sync, mapping, framing, bit order, and the layout it found.</summary>
public sealed record SyncReading(
    int[] Sync,
    BitMapping Mapping,
    ByteFraming Framing,
    double FramingShare,
    LayoutFinding Layout,
    int CommonPrefix,
    int Candidates,
    bool OrderAmbiguous,
    int AbsorbedBytes = 0)
{
    /// <summary>
    /// Whether a reading with the other mapping of symbols to bits (and its own sync length) holds as well as this one,
    /// with as many header fields and as much text: a check such as a one-byte XOR still holds on every byte
    /// complemented (an even number of bytes in its coverage) and on the bits shifted by one where bytes have no start
    /// or stop bits, so the check alone tells neither the mapping nor where the sync ends.
    /// </summary>
    public bool MappingAmbiguous { get; init; }
}

/// <summary>
/// For formats whose bytes follow a sync back to back (pulse-width and biphase): every block's symbols after its
/// lead-in are tried with each sync length the blocks share, each mapping of symbols to bits, each byte framing and
/// bit order. A framing holds when its start, stop and parity bits come out right in nearly every byte; among those
/// that hold, the reading whose bytes carry a check value of the catalogue wins (the check proves sync, framing and
/// bit order at once); without one, the most constrained framing after the shortest sync is proposed, as a guess.
/// </summary>
public static class SyncFormatSearch
{
    /// <summary>The framings tried, most constrained first: start/stop pairs with and without parity, then plain bytes.</summary>
    public static IReadOnlyList<(string Start, string Stop)> StartStop { get; } = [("0", "11"), ("0", "1"), ("1", "0"), (string.Empty, string.Empty)];

    /// <summary>A framing holds when at least this share of bytes has its start, stop and parity bits right.</summary>
    public const double FramingHolds = 0.95;

    private const int MaximumSync = 32;
    private const int MaximumLayoutSearches = 120;

    public static SyncReading? Search(IReadOnlyList<int[]> blocks, IReadOnlyList<BitMapping> mappings, int leadInSymbol, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(blocks);
        ArgumentNullException.ThrowIfNull(mappings);
        var usable = blocks.Where(b => b.Length >= 24).ToList();
        if (usable.Count == 0)
        {
            return null;
        }

        int prefix = CommonPrefix(usable);
        var framings = new List<ByteFraming>();
        foreach (var (start, stop) in StartStop)
        {
            foreach (var parity in new[] { Parity.Odd, Parity.Even, Parity.None })
            {
                framings.Add(new ByteFraming(8, BitOrder.LsbFirst, start, stop, parity));
            }
        }

        // Every (sync, mapping, framing) whose framing bits hold, most constrained first, then the shortest sync.
        var holding = new List<(int Sync, BitMapping Mapping, ByteFraming Framing, double Share, int Constraints)>();
        foreach (var mapping in mappings)
        {
            for (int sync = 1; sync <= Math.Min(prefix, MaximumSync); sync++)
            {
                foreach (var framing in framings)
                {
                    double share = FramingShare(usable, sync, mapping, framing);
                    int constraints = framing.BitsPerByte - framing.DataBits;
                    if (constraints == 0 || share >= FramingHolds)
                    {
                        holding.Add((sync, mapping, framing, share, constraints));
                    }
                }
            }
        }

        var ordered = holding.OrderByDescending(h => h.Constraints).ThenBy(h => h.Sync).ToList();
        (int Sync, BitMapping Mapping, ByteFraming Framing, double Share, int Constraints)? first = null;
        int searches = 0;
        foreach (var candidate in ordered)
        {
            first ??= candidate;
            if (searches >= MaximumLayoutSearches)
            {
                break;
            }

            var found = Readings(candidate.Sync, candidate.Framing);
            if (found.Count == 0)
            {
                continue;
            }

            // A CRC that starts from zero and xors nothing out holds as well when the sync's last 0 bits are read as
            // leading data bits (leading zeros leave it unchanged, and the 0 bit after a block ends its check): the
            // longer syncs the blocks share, up to a byte more, are weighed too, and the one whose reading has the
            // most header fields, then the most text, wins; on a tie the shorter.
            // A longer sync is read with a framing that holds there: with start and stop bits a sync a pulse short
            // holds the complemented framing (the stop bit before each byte read as its start, and a data bit that is
            // 0 in every byte, such as text's top bit, as its stop), and a sync a pulse longer reads the right bytes
            // whatever the framing says of the bits around them, so a framing taken over unchecked would be drafted
            // with bytes the read path never frames.
            int sync = candidate.Sync;
            var framing = candidate.Framing;
            for (int longer = candidate.Sync + 1; longer < candidate.Sync + candidate.Framing.BitsPerByte && longer <= Math.Min(prefix, MaximumSync) && searches < MaximumLayoutSearches; longer++)
            {
                var framingsThere = candidate.Constraints == 0 ? [candidate.Framing]
                    : holding.Where(h => h.Sync == longer && h.Mapping == candidate.Mapping && h.Constraints == candidate.Constraints).Select(h => h.Framing).ToList();
                foreach (var longerFraming in framingsThere)
                {
                    var more = Readings(longer, longerFraming);
                    if (more.Count > 0 && Score(more).CompareTo(Score(found)) > 0)
                    {
                        (sync, found, framing) = (longer, more, longerFraming);
                    }
                }
            }

            // The other mappings, at the syncs from this one up to a byte longer: a check invariant under complement
            // (a one-byte XOR over an even count of bytes) holds with the bits the other way round, and where bytes
            // have no start or stop bits a one-bit shift (a sync one pulse shorter or longer) may hold too. Other
            // evidence decides (blocks holding, then header fields such as a counter that counts up, then text); where
            // nothing does, the mapping and the sync are marked as not told.
            var mapping = candidate.Mapping;
            bool mappingAmbiguous = false;
            var framingFound = framing;
            foreach (var other in mappings.Where(m => m != candidate.Mapping))
            {
                foreach (var otherFraming in new[] { framingFound, Complemented(framingFound) }.Distinct())
                {
                    for (int alternative = Math.Max(1, candidate.Sync - 1); alternative < candidate.Sync + otherFraming.BitsPerByte && alternative <= Math.Min(prefix, MaximumSync) && searches < MaximumLayoutSearches; alternative++)
                    {
                        if (candidate.Constraints > 0 && FramingShare(usable, alternative, other, otherFraming) < FramingHolds)
                        {
                            continue;
                        }

                        var more = Readings(alternative, otherFraming, other);
                        if (more.Count == 0)
                        {
                            continue;
                        }

                        int compared = Score(more).CompareTo(Score(found));
                        if (compared > 0)
                        {
                            (sync, found, mapping, framing) = (alternative, more, other, otherFraming);
                            mappingAmbiguous = false;
                        }
                        else if (compared == 0 && mapping != other)
                        {
                            mappingAmbiguous = true;
                        }
                    }
                }
            }

            var best = found.OrderByDescending(f => f.Layout.Fields.Count).ThenByDescending(f => CommonSections.PrintableShare(f.Layout.Blocks)).First();
            bool ambiguous = found.Count == 2
                && found[0].Layout.Fields.Count == found[1].Layout.Fields.Count
                && Math.Abs(CommonSections.PrintableShare(found[0].Layout.Blocks) - CommonSections.PrintableShare(found[1].Layout.Blocks)) < 0.3;
            double share = framing == candidate.Framing && sync == candidate.Sync ? candidate.Share : FramingShare(usable, sync, mapping, framing);
            return Absorb(usable, sync, mapping, best.Framing, share, best.Layout, prefix, ordered.Count, leadInSymbol, ambiguous) with { MappingAmbiguous = mappingAmbiguous };

            // Both bit orders: a reflected CRC over bit-reversed bytes can hold as well as the plain one over the
            // bytes as written, so a check holding in one order proves the order only when it fails in the other.
            List<(ByteFraming Framing, LayoutFinding Layout)> Readings(int syncLength, ByteFraming framing, BitMapping? with = null)
            {
                var readings = new List<(ByteFraming Framing, LayoutFinding Layout)>();
                foreach (var order in new[] { BitOrder.LsbFirst, BitOrder.MsbFirst })
                {
                    searches++;
                    cancellation.ThrowIfCancellationRequested();
                    var framed = framing with { BitOrder = order };
                    var layout = LayoutSearch.Search(Blocks(usable, syncLength, with ?? candidate.Mapping, framed, leadInSymbol));
                    if (layout.HasChecksum)
                    {
                        readings.Add((framed, layout));
                    }
                }

                return readings;
            }
        }

        if (first is not { } f)
        {
            return null;
        }

        var plain = LayoutSearch.Search(Blocks(usable, f.Sync, f.Mapping, f.Framing, leadInSymbol));
        return new SyncReading(Majority(usable, f.Sync), f.Mapping, f.Framing, f.Share, plain, prefix, ordered.Count, OrderAmbiguous: true);
    }

    /// <summary>
    /// The framing that reads the same frames with every bit complemented: start and stop bits flipped, and the parity
    /// the other way where data and parity bits together are an odd count.
    /// </summary>
    internal static ByteFraming Complemented(ByteFraming framing)
    {
        static string Flip(string bits) => new([.. bits.Select(c => c == '0' ? '1' : '0')]);
        var parity = framing.Parity == Parity.None || (framing.DataBits + 1) % 2 == 0 ? framing.Parity : framing.Parity == Parity.Odd ? Parity.Even : Parity.Odd;
        return framing with { StartBits = Flip(framing.StartBits), StopBits = Flip(framing.StopBits), Parity = parity };
    }

    /// <summary>How well the readings of one sync length hold: blocks the check holds on, then header fields, then text.</summary>
    private static (int Holding, int Fields, double Text) Score(List<(ByteFraming Framing, LayoutFinding Layout)> readings)
    {
        var best = readings.OrderByDescending(r => r.Layout.BlocksHolding).ThenByDescending(r => r.Layout.Fields.Count).ThenByDescending(r => CommonSections.PrintableShare(r.Layout.Blocks)).First().Layout;
        return (best.BlocksHolding, best.Fields.Count, Math.Round(CommonSections.PrintableShare(best.Blocks), 1));
    }

    /// <summary>
    /// Bytes at the start of every block that are all alike and outside the check are more of the sync: the sync
    /// grows by their frames, and the search runs again on what follows, where the header begins.
    /// </summary>
    private static SyncReading Absorb(List<int[]> blocks, int sync, BitMapping mapping, ByteFraming framing, double share, LayoutFinding layout, int prefix, int candidates, int leadInSymbol, bool ambiguous)
    {
        int constant = 0;
        while (constant < layout.CoverageStart && layout.Blocks.Count >= 2 && layout.Blocks.All(b => b.Length > constant && b[constant] == layout.Blocks[0][constant]))
        {
            constant++;
        }

        int longer = sync + (constant * framing.BitsPerByte);
        if (constant > 0 && longer <= Math.Min(prefix, 64))
        {
            var again = LayoutSearch.Search(Blocks(blocks, longer, mapping, framing, leadInSymbol));
            if (again.HasChecksum)
            {
                return new SyncReading(Majority(blocks, longer), mapping, framing, share, again, prefix, candidates, ambiguous, constant);
            }
        }

        return new SyncReading(Majority(blocks, sync), mapping, framing, share, layout, prefix, candidates, ambiguous);
    }

    /// <summary>The symbol most blocks have at each of the first <paramref name="length"/> places.</summary>
    private static int[] Majority(IReadOnlyList<int[]> blocks, int length)
    {
        var result = new int[length];
        for (int i = 0; i < length; i++)
        {
            result[i] = blocks.Where(b => b.Length > i).GroupBy(b => b[i]).OrderByDescending(g => g.Count()).First().Key;
        }

        return result;
    }

    /// <summary>How many symbols most blocks (seven in ten) begin with alike.</summary>
    public static int CommonPrefix(IReadOnlyList<int[]> blocks)
    {
        ArgumentNullException.ThrowIfNull(blocks);
        int length = 0;
        while (true)
        {
            var counts = new Dictionary<int, int>();
            foreach (var block in blocks)
            {
                if (block.Length > length)
                {
                    counts[block[length]] = counts.GetValueOrDefault(block[length]) + 1;
                }
            }

            if (counts.Count == 0 || counts.Values.Max() < 0.7 * blocks.Count || counts.MaxBy(c => c.Value).Key < 0)
            {
                return length;
            }

            // Blocks that disagree here are not the majority's; the prefix goes on over the others.
            length++;
            if (length >= 4 * MaximumSync)
            {
                return length;
            }
        }
    }

    private static double FramingShare(List<int[]> blocks, int sync, BitMapping mapping, ByteFraming framing)
    {
        int frames = 0;
        int good = 0;
        int size = framing.BitsPerByte;
        foreach (var block in blocks)
        {
            // A block that ends inside the sync holds no byte after it (a longer sync tried on short blocks).
            if (block.Length < sync)
            {
                continue;
            }

            int n = (block.Length - sync) / size;

            // The last frame may run into the next lead-in; it is left out.
            for (int f = 0; f < n - 1; f++)
            {
                frames++;
                if (FrameHolds(block, sync + (f * size), mapping, framing))
                {
                    good++;
                }
            }
        }

        return frames == 0 ? 0 : (double)good / frames;
    }

    private static bool FrameHolds(int[] symbols, int at, BitMapping mapping, ByteFraming framing)
    {
        int i = at;
        foreach (char c in framing.StartBits)
        {
            if (mapping.Bit(symbols[i++]) != c - '0')
            {
                return false;
            }
        }

        int ones = 0;
        for (int d = 0; d < framing.DataBits; d++)
        {
            ones += mapping.Bit(symbols[i++]) == 1 ? 1 : 0;
        }

        if (framing.Parity != Parity.None && !framing.ParityHolds(ones + (mapping.Bit(symbols[i++]) == 1 ? 1 : 0)))
        {
            return false;
        }

        foreach (char c in framing.StopBits)
        {
            if (mapping.Bit(symbols[i++]) != c - '0')
            {
                return false;
            }
        }

        return true;
    }

    /// <summary>
    /// Each block's bytes under one reading, with other readings of its end: a byte less (noise before the next
    /// lead-in), and one or two more made of lead-in bits (a block whose last bits look like the lead-in loses them to it).
    /// </summary>
    public static List<DraftBlock> Blocks(IReadOnlyList<int[]> blocks, int sync, BitMapping mapping, ByteFraming framing, int leadInSymbol)
    {
        ArgumentNullException.ThrowIfNull(blocks);
        ArgumentNullException.ThrowIfNull(mapping);
        ArgumentNullException.ThrowIfNull(framing);
        int pad = Math.Max(0, mapping.Bit(leadInSymbol));
        int size = framing.BitsPerByte;
        var result = new List<DraftBlock>();
        foreach (var block in blocks)
        {
            // A block that ends inside the sync holds no byte after it (a longer sync tried on short blocks).
            if (block.Length < sync)
            {
                continue;
            }

            int n = (block.Length - sync) / size;
            var bytes = new byte[n + 2];
            for (int f = 0; f < n + 2; f++)
            {
                int value = 0;
                int start = sync + (f * size) + framing.StartBits.Length;
                for (int d = 0; d < framing.DataBits; d++)
                {
                    int index = start + d;
                    int bit = index < block.Length ? mapping.Bit(block[index]) : pad;
                    if (bit == 1)
                    {
                        value |= 1 << framing.DataBitShift(d);
                    }
                }

                bytes[f] = (byte)value;
            }

            var readings = new List<byte[]>();
            foreach (int count in new[] { n, n - 1, n + 1, n + 2 })
            {
                if (count > 0)
                {
                    readings.Add(bytes[..count]);
                }
            }

            if (readings.Count > 0)
            {
                result.Add(new DraftBlock(readings));
            }
        }

        return result;
    }
}
