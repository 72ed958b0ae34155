using TapeVault.Core.Formats;

namespace TapeVault.Core.Drafting;

/// <summary>
/// A pulse-width reading in which a bit is a pair of pulses and every byte begins with a marker pair: the marker's
/// classes, the end marker's, the pairs of a 0 and of a 1, the frame (data bits and parity), the bit order, and the
/// block structure the bytes then show.
/// </summary>
public sealed record PairReading(
    int Marker,
    int MarkerSecond,
    int? EndSecond,
    (int First, int Second) Zero,
    (int First, int Second) One,
    int FrameBits,
    int DataBits,
    Parity Parity,
    double ParityShare,
    BitOrder Order,
    bool Told,
    double MarkerShare,
    double PairShare,
    int Frames,
    KindsFinding Kinds);

/// <summary>
/// Finds pairs of pulses with byte markers in the symbols after each lead-in: a class that comes at one fixed spacing
/// (an even number of pulses) is the first half of a marker before every byte, the class after it most often is the
/// marker's second half, and a different class after a block's last marker ends the block. The pulses between two
/// markers go in pairs; the two commonest pairs are the bits, the pairs a frame holds are its data bits and maybe a
/// parity bit (which holds in nearly every frame, odd or even). Which pair is 0 and the bit order are tried both ways,
/// and the blocks' bytes go to <see cref="BlockKindSearch"/>: the reading whose check holds on most blocks wins, and
/// among those the one with the most printable text (names), which the other mapping (complemented bytes) and the
/// other order (reversed bits) break.
/// </summary>
public static class PulsePairs
{
    /// <summary>The marker's spacing must be the same in at least this share of its occurrences.</summary>
    public const double SpacingHolds = 0.8;

    public static PairReading? Read(IReadOnlyList<int[]> blocks, int classCount, int leadIn, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(blocks);
        if (classCount < 3)
        {
            return null;
        }

        // The marker class: one that comes at a fixed, even spacing.
        int marker = -1;
        int spacing = 0;
        double markerShare = 0;
        for (int c = 0; c < classCount; c++)
        {
            if (c == leadIn)
            {
                continue;
            }

            var gaps = new Dictionary<int, int>();
            int total = 0;
            foreach (var block in blocks)
            {
                int last = -1;
                for (int i = 0; i < block.Length; i++)
                {
                    if (block[i] == c)
                    {
                        if (last >= 0)
                        {
                            gaps[i - last] = gaps.GetValueOrDefault(i - last) + 1;
                            total++;
                        }

                        last = i;
                    }
                }
            }

            if (total < 16)
            {
                continue;
            }

            var top = gaps.MaxBy(g => g.Value);
            double share = (double)top.Value / total;
            if (share >= SpacingHolds && top.Key % 2 == 0 && top.Key is >= 12 and <= 40 && share > markerShare)
            {
                (marker, spacing, markerShare) = (c, top.Key, share);
            }
        }

        if (marker < 0)
        {
            return null;
        }

        // The marker's second half, and the end marker's: what follows the marker most often, and what follows a
        // block's last marker instead.
        var after = new long[classCount];
        var afterLast = new long[classCount];
        foreach (var block in blocks)
        {
            int lastAt = -1;
            for (int i = 0; i + 1 < block.Length; i++)
            {
                if (block[i] == marker && block[i + 1] >= 0)
                {
                    after[block[i + 1]]++;
                    lastAt = i;
                }
            }

            // A block ends where the next lead-in begins: an end marker whose second half is of the lead-in class
            // is cut off with the lead-in's run, and the block's last pulse is the marker's first half.
            if (block.Length > 0 && block[^1] == marker)
            {
                afterLast[leadIn]++;
            }
            else if (lastAt >= 0 && block[lastAt + 1] >= 0)
            {
                afterLast[block[lastAt + 1]]++;
            }
        }

        int second = Array.IndexOf(after, after.Max());
        afterLast[second] = 0;
        int? end = afterLast.Max() >= Math.Max(2, blocks.Count / 2) ? Array.IndexOf(afterLast, afterLast.Max()) : null;
        if (end == marker || second == marker)
        {
            return null;
        }

        // The bit pairs inside frames: each block's frames walked once, and what follows read from them.
        int pairsPerFrame = (spacing - 2) / 2;
        var framed = blocks.Select(block => Frames(block, marker, second, spacing)).ToList();
        var pairCounts = new Dictionary<(int, int), int>();
        int frames = 0;
        int pairs = 0;
        foreach (var blockFrames in framed)
        {
            foreach (var frame in blockFrames)
            {
                frames++;
                foreach (var pair in frame)
                {
                    pairCounts[pair] = pairCounts.GetValueOrDefault(pair) + 1;
                    pairs++;
                }
            }
        }

        var commonest = pairCounts.OrderByDescending(p => p.Value).Take(2).ToList();
        if (commonest.Count < 2 || frames < 16)
        {
            return null;
        }

        double pairShare = (double)(commonest[0].Value + commonest[1].Value) / pairs;
        var (a, b) = (commonest[0].Key, commonest[1].Key);
        if (pairShare < 0.9 || a.Item1 < 0 || a.Item2 < 0 || b.Item1 < 0 || b.Item2 < 0 || a.Item1 == marker || b.Item1 == marker)
        {
            return null;
        }

        // Which pair is 0 and the bit order, tried all four ways: an XOR over an even count of bytes holds on every
        // block complemented and on its bits reversed, so the check alone rarely tells them. A header field giving the
        // next block's length exactly (BlockKindSearch) does: complemented or bit-reversed, the length or addresses
        // read as other numbers, and the search finds the kinds only within a few bytes of damaged blocks, if at all.
        // Then the printable text (names), which a few header bytes among a capture's data bytes move only a little.
        PairReading? best = null;
        (int Holding, bool Exact, double Printable) bestScore = (-1, false, -1);
        (int Holding, bool Exact, double Printable) runnerUp = (-1, false, -1);
        foreach (var (zero, one) in new[] { (a, b), (b, a) })
        {
            var (parity, parityShare) = ParityOf(framed, zero, one);
            int dataBits = parity == Parity.None ? pairsPerFrame : pairsPerFrame - 1;
            if (dataBits is < 5 or > 8)
            {
                continue;
            }

            foreach (var order in new[] { BitOrder.LsbFirst, BitOrder.MsbFirst })
            {
                cancellation.ThrowIfCancellationRequested();
                var bytes = framed.Select(blockFrames => Bytes(blockFrames, zero, one, dataBits, order)).Where(x => x.Length > 0).ToList();
                var kinds = BlockKindSearch.Search(bytes);
                if (kinds is null)
                {
                    continue;
                }

                var score = (kinds.BlocksHolding, !kinds.LengthApproximate, CommonSections.PrintableShare(bytes));
                if (Better(score, bestScore))
                {
                    runnerUp = bestScore;
                    bestScore = score;
                    best = new PairReading(marker, second, end, zero, one, pairsPerFrame, dataBits, parity, parityShare, order, true, markerShare, pairShare, frames, kinds);
                }
                else if (Better(score, runnerUp))
                {
                    runnerUp = score;
                }
            }
        }

        // The mapping and order are told only where the winner holds on more blocks, or gives the next block's length
        // exactly where no other reading does, or its text stands out from every other reading's.
        bool told = bestScore.Holding > runnerUp.Holding || (bestScore.Exact && !runnerUp.Exact) || bestScore.Printable - runnerUp.Printable >= 0.1;
        return best is null ? null : best with { Told = told };
    }

    /// <summary>More blocks holding, then the next block's length given exactly, then more printable text.</summary>
    private static bool Better((int Holding, bool Exact, double Printable) a, (int Holding, bool Exact, double Printable) b) =>
        a.Holding != b.Holding ? a.Holding > b.Holding : a.Exact != b.Exact ? a.Exact : a.Printable > b.Printable;

    /// <summary>Where each frame begins (its marker) in a block: frame after frame at the marker's spacing, from the first marker.</summary>
    public static IEnumerable<int> FrameStarts(int[] block, int marker, int second, int spacing)
    {
        ArgumentNullException.ThrowIfNull(block);
        int at = 0;
        while (at + 1 < block.Length && !(block[at] == marker && block[at + 1] == second))
        {
            at++;
        }

        while (at + spacing <= block.Length)
        {
            if (!(block[at] == marker && block[at + 1] == second))
            {
                // A pulse lost or split by damage: the frames go on from the next marker nearby, so that a damaged
                // block keeps about its length (its check fails all the same).
                int next = -1;
                for (int d = 1; d <= spacing + 4 && next < 0; d++)
                {
                    foreach (int c in new[] { at - d, at + d })
                    {
                        if (c >= 0 && c + spacing <= block.Length && block[c] == marker && block[c + 1] == second && next < 0 && (d <= 3 || c > at))
                        {
                            next = c;
                        }
                    }
                }

                if (next < 0)
                {
                    yield break;
                }

                at = next;
            }

            yield return at;
            at += spacing;
        }
    }

    /// <summary>The bit pairs of each frame of a block (the marker left out), frame after frame as <see cref="FrameStarts"/> finds them.</summary>
    public static (int First, int Second)[][] Frames(int[] block, int marker, int second, int spacing)
    {
        ArgumentNullException.ThrowIfNull(block);
        int pairsPerFrame = (spacing - 2) / 2;
        var frames = new List<(int, int)[]>();
        foreach (int at in FrameStarts(block, marker, second, spacing))
        {
            var frame = new (int, int)[pairsPerFrame];
            for (int k = 0; k < pairsPerFrame; k++)
            {
                frame[k] = (block[at + 2 + (2 * k)], block[at + 3 + (2 * k)]);
            }

            frames.Add(frame);
        }

        return [.. frames];
    }

    /// <summary>The bytes of one block's frames: a byte from each frame, its first <paramref name="dataBits"/> pairs in the order given (a parity bit after them left out).</summary>
    public static byte[] Bytes(IReadOnlyList<(int First, int Second)[]> frames, (int, int) zero, (int, int) one, int dataBits, BitOrder order)
    {
        ArgumentNullException.ThrowIfNull(frames);
        var result = new byte[frames.Count];
        for (int f = 0; f < frames.Count; f++)
        {
            int value = 0;
            for (int d = 0; d < dataBits; d++)
            {
                if (frames[f][d] == one)
                {
                    value |= 1 << (order == BitOrder.LsbFirst ? d : dataBits - 1 - d);
                }
            }

            result[f] = (byte)value;
        }

        return result;
    }

    /// <summary>The parity that the frames' ones hold in nearly every frame (95 %), or none, with the share of frames that have it; frames with a pair that is no bit are left out.</summary>
    private static (Parity Parity, double Share) ParityOf(List<(int First, int Second)[][]> framed, (int, int) zero, (int, int) one)
    {
        int odd = 0;
        int frames = 0;
        foreach (var blockFrames in framed)
        {
            foreach (var frame in blockFrames)
            {
                int ones = 0;
                bool whole = true;
                foreach (var pair in frame)
                {
                    ones += pair == one ? 1 : 0;
                    whole &= pair == one || pair == zero;
                }

                if (whole)
                {
                    frames++;
                    odd += ones % 2;
                }
            }
        }

        if (frames == 0)
        {
            return (Parity.None, 0);
        }

        double share = (double)odd / frames;
        return share >= 0.95 ? (Parity.Odd, share) : share <= 0.05 ? (Parity.Even, 1 - share) : (Parity.None, Math.Max(share, 1 - share));
    }
}
