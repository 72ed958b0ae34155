namespace TapeVault.Core.Blocks;

// Copies told apart by their sync: where a format writes each block k times with a sync that differs from copy to copy,
// the order of the syncs read says where one block's copies end and the next block's begin.
public static partial class BlockPositioner
{
    /// <summary>
    /// Where the format writes each block k times with a sync of its own for each copy (<see cref="BlockCandidate.SyncCopy"/>),
    /// the copies of one block are read at syncs of ascending copy, one after the other, and the next block starts again
    /// at the first copy's sync. A header that only carries the sync (a countdown every block repeats) cannot tell a
    /// block's second copy from the next block's first; the sync read can. So, after the places are found:
    /// the readings of one sync are one copy of one block, and take the position of the clean reading among them or
    /// else of most of them; a failed reading's sync whose copy no reading tells, lying inside a copy that another sync
    /// begins, is that copy read from within (a resync after a dropout); a position is cut before a sync whose copy
    /// does not come after the copies before it in the position; and a position that holds only earlier copies is
    /// joined with the next position on the tape that holds only later ones, where no sync whose copy is read lies
    /// between them, they hold no clean readings of two identities, and the later starts within the copy spacing of
    /// the earlier (<see cref="WithinCopies"/>).
    /// </summary>
    private static void OrderCopiesBySync(List<(BlockCandidate Candidate, string Key)> keyed, int[] positionOf, bool[] stray, int copies, double? copyGap)
    {
        if (copies < 2 || !keyed.Exists(k => k.Candidate.SyncCopy is not null))
        {
            return;
        }

        // Syncs: readings (in order of start) that start within SyncSeconds of the first of them. Stray readings are no
        // block and say nothing of the copy.
        var groupOf = Syncs(keyed, out int count);
        var groups = new List<SyncPlace>(count);
        for (int i = 0; i < keyed.Count; i++)
        {
            if (groups.Count == groupOf[i])
            {
                groups.Add(new SyncPlace(i, keyed[i].Candidate.StartSeconds));
            }

            groups[^1].Readings.Add(i);
        }

        foreach (var g in groups)
        {
            g.Settle(keyed, positionOf, stray);
        }

        var label = (int[])positionOf.Clone();
        int labels = 0;
        foreach (int p in positionOf)
        {
            labels = Math.Max(labels, p + 1);
        }

        // The readings of one sync share its position.
        foreach (var g in groups)
        {
            if (g.Position < 0)
            {
                continue;
            }

            foreach (int i in g.Readings)
            {
                if (!stray[i])
                {
                    label[i] = g.Position;
                }
            }
        }

        // A sync of failed readings that tells no copy, inside a copy another sync began: that copy, read from within.
        for (int gi = 0, lastKnown = -1; gi < groups.Count; gi++)
        {
            var g = groups[gi];
            if (g.Copy is not null && g.Position >= 0)
            {
                lastKnown = gi;
                continue;
            }

            if (lastKnown < 0 || g.Position < 0 || g.AnyClean)
            {
                continue;
            }

            var h = groups[lastKnown];
            if (g.Start > h.Start + SyncSeconds && g.Start < h.ProvenEnd)
            {
                g.Position = h.Position;
                foreach (int i in g.Readings)
                {
                    if (!stray[i])
                    {
                        label[i] = h.Position;
                    }
                }
            }
        }

        // Cut a position before a sync whose copy does not follow those before it in the position.
        var partOf = new int[groups.Count];
        Array.Fill(partOf, -1);
        var lastCopy = new Dictionary<int, int>();
        var partOfPosition = new Dictionary<int, int>();
        for (int gi = 0; gi < groups.Count; gi++)
        {
            var g = groups[gi];
            if (g.Position < 0)
            {
                continue;
            }

            if (!partOfPosition.TryGetValue(g.Position, out int part))
            {
                // Every part takes a label of its own: the readings of a sync left as it is keep their position's.
                part = labels++;
            }

            if (g.Copy is { } copy)
            {
                if (lastCopy.TryGetValue(g.Position, out int before) && copy <= before)
                {
                    part = labels++;
                }

                lastCopy[g.Position] = copy;
            }

            partOfPosition[g.Position] = part;
            partOf[gi] = part;
        }

        // Parts in order of their first sync: join one that holds only earlier copies with the next that holds only later.
        var parts = new Dictionary<int, Part>();
        var order = new List<int>();
        for (int gi = 0; gi < groups.Count; gi++)
        {
            if (partOf[gi] < 0)
            {
                continue;
            }

            if (!parts.TryGetValue(partOf[gi], out var part))
            {
                parts[partOf[gi]] = part = new Part(gi);
                order.Add(partOf[gi]);
            }

            part.Add(gi, groups[gi]);
        }

        var joinedTo = new Dictionary<int, int>();
        for (int a = 0; a + 1 < order.Count; a++)
        {
            var first = parts[order[a]];
            var next = parts[order[a + 1]];
            if (first.MaxCopy is not { } earlier || next.MinCopy is not { } later || earlier >= later || first.Last >= next.First
                || (first.Clean is { } x && next.Clean is { } y && !SyncPlace.Agree(x, y)))
            {
                continue;
            }

            bool readBetween = false;
            for (int gi = first.LastKnown + 1; gi < next.FirstKnown && !readBetween; gi++)
            {
                readBetween = groups[gi].Copy is not null;
            }

            if (readBetween)
            {
                continue;
            }

            double? length = first.CleanLength ?? next.CleanLength ?? groups[first.LastKnown].ShortestWhole;
            double apart = groups[next.FirstKnown].Start - groups[first.LastKnown].Start;
            bool near = length is { } l && apart <= ((later - earlier) * (l + (1.25 * (copyGap ?? l)) + SyncSeconds)) + SyncSeconds;
            if (!near && !SpacedAsCopies(groups, first.LastKnown, next.FirstKnown, earlier, later, copies))
            {
                continue;
            }

            // The two are one block: the later part takes the earlier's label, and may take the part after it in turn.
            joinedTo[order[a + 1]] = joinedTo.GetValueOrDefault(order[a], order[a]);
            next.Absorb(first);
        }

        for (int i = 0; i < keyed.Count; i++)
        {
            if (stray[i])
            {
                continue;
            }

            int gi = groupOf[i];
            if (groups[gi].Position >= 0 && label[i] == groups[gi].Position && partOf[gi] >= 0)
            {
                label[i] = joinedTo.GetValueOrDefault(partOf[gi], partOf[gi]);
            }
        }

        // A stray reading follows the reading before it; positions are numbered in tape order of their first reading.
        for (int i = 0, last = -1; i < keyed.Count; i++)
        {
            if (stray[i] && last >= 0)
            {
                label[i] = label[last];
            }
            else if (!stray[i])
            {
                last = i;
            }
        }

        var number = new Dictionary<int, int>();
        for (int i = 0; i < keyed.Count; i++)
        {
            if (!number.TryGetValue(label[i], out int n))
            {
                number[label[i]] = n = number.Count;
            }

            positionOf[i] = n;
        }
    }

    /// <summary>
    /// Whether the syncs of groups <paramref name="a"/> (copy <paramref name="earlier"/>) and <paramref name="b"/> (copy
    /// <paramref name="later"/>) lie as far apart as copies that many apart, by the capture's own timing where no length
    /// tells the spacing (no clean reading, and failed readings end where their misread length or a lost marker says):
    /// the copies of a block are one length and each follows the one before after the same lead-in, so the span from one
    /// copy's sync to the next copy's (or, from the block's last copy, to the next block's first) is the same for every
    /// copy. The span from <paramref name="b"/> to the next sync read, which reads the copy after <paramref name="later"/>,
    /// is one such step.
    /// </summary>
    private static bool SpacedAsCopies(List<SyncPlace> groups, int a, int b, int earlier, int later, int copies)
    {
        for (int gi = b + 1; gi < groups.Count; gi++)
        {
            var g = groups[gi];
            if (g.Position < 0)
            {
                continue;
            }

            double step = g.Start - groups[b].Start;
            return g.Copy == (later + 1) % copies && SyncSpansAlike(groups[b].Start - groups[a].Start, (later - earlier) * step);
        }

        return false;
    }

    /// <summary>The readings of one sync: the copy they read, the position they take, and how far the copy is proven to reach.</summary>
    private sealed class SyncPlace(int first, double start)
    {
        public List<int> Readings { get; } = [first];

        public double Start { get; } = start;

        /// <summary>The copy the sync read names: a clean reading's, else the one most readings name (null where none or a tie).</summary>
        public int? Copy { get; private set; }

        /// <summary>The position of its clean reading, else the one most of its readings have; -1 where clean readings lie in two.</summary>
        public int Position { get; set; } = -1;

        public bool AnyClean { get; private set; }

        /// <summary>The identity of its clean readings (one that names its file where any does); null without one.</summary>
        public BlockIdentity? Clean { get; private set; }

        public double? CleanLength { get; private set; }

        /// <summary>The shortest length of its readings that ran to their end (a misread length runs on; none stops short).</summary>
        public double? ShortestWhole { get; private set; }

        /// <summary>Where the copy read here ends as far as the readings prove it: a clean reading's end, else the shortest whole reading's, else the furthest cut one's.</summary>
        public double ProvenEnd { get; private set; }

        public void Settle(List<(BlockCandidate Candidate, string Key)> keyed, int[] positionOf, bool[] stray)
        {
            var votes = new Dictionary<int, int>();
            var positions = new Dictionary<int, int>();
            int cleanPosition = -1;
            int? cleanCopy = null;
            BlockIdentity cleanIdentity = default;
            bool cleanCopiesDiffer = false;
            double cutEnd = double.NegativeInfinity;
            foreach (int i in Readings)
            {
                if (stray[i])
                {
                    continue;
                }

                var c = keyed[i].Candidate;
                positions[positionOf[i]] = positions.GetValueOrDefault(positionOf[i]) + 1;
                if (c.SyncCopy is { } copy)
                {
                    votes[copy] = votes.GetValueOrDefault(copy) + 1;
                }

                if (c.Status == BlockStatus.Clean)
                {
                    // Clean readings of one sync are one copy: where they lie in two positions, their identities must
                    // agree (a setting that read no header before a data block names no file), and the position of one
                    // that names its file is theirs; identities that disagree leave the sync as it is.
                    if (AnyClean && !Agree(cleanIdentity, c.Identity))
                    {
                        cleanPosition = -2;
                    }
                    else if (cleanPosition != -2 && (!AnyClean || (cleanIdentity.FileName is null && c.Identity.FileName is not null)))
                    {
                        cleanPosition = positionOf[i];
                        cleanIdentity = c.Identity;
                    }

                    if (c.SyncCopy is { } read)
                    {
                        cleanCopiesDiffer |= cleanCopy is not null && cleanCopy != read;
                        cleanCopy = read;
                    }

                    AnyClean = true;
                    double length = c.EndSeconds - c.StartSeconds;
                    CleanLength = Math.Max(CleanLength ?? 0, length);
                    ProvenEnd = Math.Max(ProvenEnd, c.EndSeconds);
                }
                else if (c.Truncated)
                {
                    cutEnd = Math.Max(cutEnd, c.EndSeconds);
                }
                else
                {
                    ShortestWhole = Math.Min(ShortestWhole ?? double.PositiveInfinity, c.EndSeconds - c.StartSeconds);
                }
            }

            if (positions.Count == 0)
            {
                return;
            }

            if (AnyClean)
            {
                Position = cleanPosition;
                Clean = cleanIdentity;
                Copy = cleanCopiesDiffer ? null : cleanCopy;
            }
            else
            {
                Position = Mode(positions, earliestOnTie: true) ?? -1;
                Copy = Mode(votes);
                ProvenEnd = ShortestWhole is { } whole ? Start + whole : cutEnd;
            }

            if (Copy is null && AnyClean && !cleanCopiesDiffer)
            {
                Copy = Mode(votes);
            }
        }

        /// <summary>Whether two clean readings' identities may be one block's: alike, or alike but for a file name one of them lacks.</summary>
        public static bool Agree(BlockIdentity a, BlockIdentity b) =>
            a.Key == b.Key || (a.BlockNumber == b.BlockNumber && a.FileId == b.FileId && (a.FileName is null || b.FileName is null));

        /// <summary>The key with the most votes; null when there is none, or a tie unless the lowest of the tied keys is asked for.</summary>
        private static int? Mode(Dictionary<int, int> votes, bool earliestOnTie = false)
        {
            int? best = null;
            int bestVotes = 0;
            bool tie = false;
            foreach (var (key, count) in votes)
            {
                if (count > bestVotes || (count == bestVotes && best is { } b && key < b))
                {
                    tie = count == bestVotes;
                    best = key;
                    bestVotes = count;
                }
                else if (count == bestVotes)
                {
                    tie = true;
                }
            }

            return tie && !earliestOnTie ? null : best;
        }
    }

    /// <summary>The syncs of one part of a position: the copies they read and its clean readings.</summary>
    private sealed class Part(int first)
    {
        public int First { get; } = first;

        public int Last { get; private set; } = first;

        public int FirstKnown { get; private set; } = -1;

        public int LastKnown { get; private set; } = -1;

        public int? MinCopy { get; private set; }

        public int? MaxCopy { get; private set; }

        public BlockIdentity? Clean { get; private set; }

        public double? CleanLength { get; private set; }

        public void Add(int gi, SyncPlace g)
        {
            Last = gi;
            if (g.Copy is { } copy)
            {
                FirstKnown = FirstKnown < 0 ? gi : FirstKnown;
                LastKnown = gi;
                MinCopy = Math.Min(MinCopy ?? copy, copy);
                MaxCopy = Math.Max(MaxCopy ?? copy, copy);
            }

            Clean ??= g.Clean;
            CleanLength = g.CleanLength is { } l ? Math.Max(CleanLength ?? 0, l) : CleanLength;
        }

        /// <summary>Takes in an earlier part joined to this one (its syncs all before this part's).</summary>
        public void Absorb(Part earlier)
        {
            FirstKnown = earlier.FirstKnown;
            MinCopy = earlier.MinCopy;
            Clean ??= earlier.Clean;
            CleanLength ??= earlier.CleanLength;
        }
    }
}
