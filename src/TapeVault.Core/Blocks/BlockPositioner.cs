namespace TapeVault.Core.Blocks;

/// <summary>
/// Gives every candidate of one capture its position on the tape. Settings read the same capture, so their blocks
/// line up in time: a candidate whose header may be damaged takes the identity of a clean candidate that overlaps
/// it, and candidates with one identity share a position. Copies of a block written k times share it too.
/// </summary>
public static class BlockPositioner
{
    /// <param name="copies">How many times the format writes each block in a row (the layout's copies).</param>
    public static List<BlockCandidate> Place(IReadOnlyList<BlockCandidate> candidates, int copies = 1)
    {
        ArgumentNullException.ThrowIfNull(candidates);
        var trusted = new List<BlockCandidate>();
        foreach (var c in candidates)
        {
            if (c.Status == BlockStatus.Clean)
            {
                trusted.Add(c);
            }
        }

        trusted.Sort((a, b) => a.StartSeconds.CompareTo(b.StartSeconds));

        // Streams have no identity but their order: a stream block's key is the order of its start among all streams
        // found, merged across settings by overlap in time.
        var keyed = new List<(BlockCandidate Candidate, string Key)>(candidates.Count);
        var streamAnchors = new List<(double Start, double End, string Key)>();
        foreach (var c in candidates.OrderBy(c => c.StartSeconds))
        {
            string key;
            // A block cut short inside its header still belongs to a format with headers, even if no field was read whole.
            bool hasHeader = !c.Header.IsEmpty || c.Identity.FileName is not null || c.Identity.FileId is not null || c.Identity.BlockNumber is not null;
            if (!hasHeader)
            {
                int anchor = streamAnchors.FindLastIndex(a => Overlaps(a.Start, a.End, c.StartSeconds, c.EndSeconds));
                if (anchor < 0)
                {
                    streamAnchors.Add((c.StartSeconds, c.EndSeconds, $"#{streamAnchors.Count}"));
                    anchor = streamAnchors.Count - 1;
                }

                key = streamAnchors[anchor].Key;
            }
            else if (c.Status == BlockStatus.Clean)
            {
                key = c.Identity.Key;
            }
            else
            {
                key = FindOverlapping(trusted, c)?.Identity.Key
                    ?? (copies > 1 ? FindNeighbouringCopy(trusted, c)?.Identity.Key : null)
                    ?? (c.Truncated && c.Payload.IsEmpty && !NamesItself(c) ? FindNearest(trusted, c)?.Identity.Key : null)
                    ?? c.Identity.Key;
            }

            keyed.Add((c, key));
        }

        // A position is one identity over one stretch of tape: copies and other settings' readings overlap or follow
        // closely; the same identity much later (a block number reused by the next file) is a new position. Copies
        // are written back to back, so the same identity after a block read in between is a new position too, however
        // close: two short files whose headers carry only a block number both start at block 0.
        // Stretches are numbered in order of their first reading, which makes them the positions in tape order.
        var stretchEnd = new List<double>();
        var stretchesByKey = new Dictionary<string, List<int>>(StringComparer.Ordinal);
        var readings = new List<(double Start, double End, int Stretch)>();
        var positionOf = new int[keyed.Count];
        var wholeBySetting = new Dictionary<(int Stretch, int Setting), int>();
        for (int i = 0; i < keyed.Count; i++)
        {
            var (candidate, key) = keyed[i];
            double reach = Math.Max(1.0, 1.5 * (candidate.EndSeconds - candidate.StartSeconds));
            if (!stretchesByKey.TryGetValue(key, out var ofKey))
            {
                ofKey = [];
                stretchesByKey.Add(key, ofKey);
            }

            // One setting reads each copy of a block whole once: another whole reading of the same identity by the
            // same setting, after as many as the format writes, is another block whose header was misread alike.
            int found = ofKey.Count > 0 && candidate.StartSeconds < stretchEnd[ofKey[^1]] + reach && !ReadInBetween(ofKey[^1], candidate.StartSeconds)
                && (candidate.Truncated || wholeBySetting.GetValueOrDefault((ofKey[^1], candidate.SettingIndex)) < Math.Max(1, copies))
                ? ofKey[^1]
                : -1;
            if (found < 0)
            {
                stretchEnd.Add(candidate.EndSeconds);
                found = stretchEnd.Count - 1;
                ofKey.Add(found);
            }
            else
            {
                stretchEnd[found] = Math.Max(stretchEnd[found], candidate.EndSeconds);
            }

            if (!candidate.Truncated)
            {
                wholeBySetting[(found, candidate.SettingIndex)] = wholeBySetting.GetValueOrDefault((found, candidate.SettingIndex)) + 1;
            }

            // Candidates arrive in order of start (keyed was built so), so these starts ascend.
            readings.Add((candidate.StartSeconds, candidate.EndSeconds, found));
            positionOf[i] = found;
        }

        // Whether a block of another stretch was read wholly after stretch s ended and before `start` (only the last
        // few readings can have begun after s ended).
        bool ReadInBetween(int s, double start)
        {
            for (int r = readings.Count - 1; r >= 0 && readings[r].Start > stretchEnd[s]; r--)
            {
                if (readings[r].Stretch != s && readings[r].End <= start)
                {
                    return true;
                }
            }

            return false;
        }

        var placed = new List<BlockCandidate>(keyed.Count);
        for (int i = 0; i < keyed.Count; i++)
        {
            placed.Add(keyed[i].Candidate with { Position = positionOf[i] });
        }

        placed.Sort((a, b) => a.Position != b.Position ? a.Position.CompareTo(b.Position) : a.StartSeconds.CompareTo(b.StartSeconds));
        return placed;
    }

    /// <summary>Per position: a clean candidate of highest confidence, else the most confident of any status.</summary>
    public static List<BlockCandidate> BestPerPosition(IReadOnlyList<BlockCandidate> placed)
    {
        ArgumentNullException.ThrowIfNull(placed);
        var best = new SortedDictionary<int, BlockCandidate>();
        foreach (var c in placed)
        {
            if (!best.TryGetValue(c.Position, out var current) || Better(c, current))
            {
                best[c.Position] = c;
            }
        }

        return [.. best.Values];
    }

    private static bool Better(BlockCandidate a, BlockCandidate b)
    {
        int rank(BlockCandidate c) => c.Status switch
        {
            BlockStatus.Clean => 2,
            BlockStatus.Unchecked => 1,
            _ => 0,
        };

        if (rank(a) != rank(b))
        {
            return rank(a) > rank(b);
        }

        return a.Confidence > b.Confidence || (a.Confidence == b.Confidence && a.Payload.Length > b.Payload.Length);
    }

    /// <summary>A trusted candidate (sorted by start) overlapping <paramref name="c"/> in time, by binary search.</summary>
    private static BlockCandidate? FindOverlapping(List<BlockCandidate> trusted, BlockCandidate c)
    {
        int lo = 0, hi = trusted.Count;
        while (lo < hi)
        {
            int mid = (lo + hi) / 2;
            if (trusted[mid].StartSeconds < c.EndSeconds)
            {
                lo = mid + 1;
            }
            else
            {
                hi = mid;
            }
        }

        // Candidates before lo start before c ends; blocks are short, so only the last few can still overlap it.
        for (int i = lo - 1; i >= 0 && i >= lo - 64; i--)
        {
            if (Overlaps(trusted[i].StartSeconds, trusted[i].EndSeconds, c.StartSeconds, c.EndSeconds))
            {
                return trusted[i];
            }
        }

        return null;
    }

    /// <summary>
    /// A clean copy of the same block next to a failed candidate: within two block lengths of it on the tape, with a
    /// header that differs from the candidate's in at most two of the bytes both have. Only formats that write each block more than
    /// once have such neighbours; elsewhere the block next door is a different block.
    /// </summary>
    private static BlockCandidate? FindNeighbouringCopy(List<BlockCandidate> trusted, BlockCandidate c)
    {
        double length = Math.Max(c.EndSeconds - c.StartSeconds, 0.1);
        BlockCandidate? best = null;
        int bestDifference = 3;
        foreach (var t in trusted)
        {
            double reach = 2 * Math.Max(length, t.EndSeconds - t.StartSeconds) + 0.5;
            if (t.StartSeconds > c.EndSeconds + reach)
            {
                break;
            }

            if (t.EndSeconds < c.StartSeconds - reach || c.Header.IsEmpty)
            {
                continue;
            }

            // A header cut short is compared over the bytes it has.
            int shared = Math.Min(t.Header.Length, c.Header.Length);
            int difference = 0;
            for (int i = 0; i < shared && difference < bestDifference; i++)
            {
                if (t.Header[i] != c.Header[i])
                {
                    difference++;
                }
            }

            if (difference < bestDifference)
            {
                best = t;
                bestDifference = difference;
            }
        }

        return best;
    }

    /// <summary>Whether a reading's header was read far enough to give a field of its identity: then it keeps that identity rather than a neighbour's.</summary>
    private static bool NamesItself(BlockCandidate c) => c.Identity.BlockNumber is not null || c.Identity.FileId is not null || c.Identity.FileName is not null;

    /// <summary>
    /// For a reading cut off inside its header (so it has no identity to go by, and no payload to offer): the clean
    /// block nearest to it in time, within two block lengths.
    /// </summary>
    private static BlockCandidate? FindNearest(List<BlockCandidate> trusted, BlockCandidate c)
    {
        BlockCandidate? best = null;
        double bestGap = double.PositiveInfinity;
        foreach (var t in trusted)
        {
            double gap = Math.Max(t.StartSeconds - c.EndSeconds, c.StartSeconds - t.EndSeconds);
            double reach = 2 * (t.EndSeconds - t.StartSeconds) + 0.5;
            if (gap <= reach && gap < bestGap)
            {
                best = t;
                bestGap = gap;
            }
        }

        return best;
    }

    private static bool Overlaps(double aStart, double aEnd, double bStart, double bEnd) =>
        aStart < bEnd && bStart < aEnd;
}
