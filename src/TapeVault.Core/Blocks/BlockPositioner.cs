namespace TapeVault.Core.Blocks;

/// <summary>
/// Gives every candidate of one capture its position on the tape. Settings read the same capture, so their blocks
/// line up in time: a candidate whose header may be damaged takes the identity of a clean candidate that overlaps
/// it, and candidates with one identity share a position. Copies of a block written k times share it too.
/// Where a reading starts is where its sync was read; where it ends is proven only by a checksum that holds (a
/// misread length runs on over the blocks after it). So a failed reading belongs to the block whose sync it starts at
/// before the one it overlaps most, and claims other readings only at its own sync.
/// </summary>
public static partial class BlockPositioner
{
    /// <param name="copies">How many times the format writes each block in a row (the layout's copies).</param>
    public static List<BlockCandidate> Place(IReadOnlyList<BlockCandidate> candidates, int copies = 1)
    {
        var order = PlaceInOrder(candidates, copies);
        var placed = new List<BlockCandidate>(order.Length);
        foreach (var (reading, position) in order)
        {
            placed.Add(candidates[reading] with { Position = position });
        }

        return placed;
    }

    /// <summary>
    /// What <see cref="Place"/> does, told as each placed reading's index in <paramref name="candidates"/> and its
    /// position, in the placed order (by position, then start), for a caller that keeps the readings elsewhere.
    /// </summary>
    public static (int Reading, int Position)[] PlaceInOrder(IReadOnlyList<BlockCandidate> candidates, int copies = 1)
    {
        ArgumentNullException.ThrowIfNull(candidates);
        var asRead = candidates;
        candidates = WithoutUnreadNumbers(candidates, copies);
        var trusted = new List<BlockCandidate>();
        foreach (var c in candidates)
        {
            if (c.Status == BlockStatus.Clean)
            {
                trusted.Add(c);
            }
        }

        trusted.Sort((a, b) => a.StartSeconds.CompareTo(b.StartSeconds));
        double? copyGap = copies > 1 ? GapBetweenCopies(trusted) : null;

        // Streams have no identity but their order: a stream block's key is the order of its start among all streams
        // found, merged across settings by overlap in time.
        var keyed = new List<(BlockCandidate Candidate, string Key)>(candidates.Count);
        var streamAnchors = new List<(double Start, double End, string Key)>();
        var inputOf = new List<int>(candidates.Count);
        var anchors = new List<(int Reading, BlockCandidate Clean)>();
        var headersRead = copies > 1 ? HeadersRead(candidates) : null;
        var named = NamedStarts(candidates);
        foreach (int index in Enumerable.Range(0, candidates.Count).OrderBy(i => candidates[i].StartSeconds))
        {
            var c = candidates[index];
            inputOf.Add(index);
            string key;
            // A block cut short inside its header still belongs to a format with headers, even if no field was read whole.
            var read = asRead[index].Identity;
            bool hasHeader = !c.Header.IsEmpty || read.FileName is not null || read.FileId is not null || read.BlockNumber is not null;
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
                var overlapping = FindOverlapping(trusted, c, AlikeAtSync(named, c));
                if (overlapping is not null)
                {
                    anchors.Add((keyed.Count, overlapping));
                }

                // A header that another setting read alike at the same sync names its own block: it does not take
                // the identity of a clean neighbour whose header differs from it in a byte or two (the next file's
                // name, the next block number). Nor does a reading that names nothing where two other settings'
                // readings from the same sync name one block alike: it is a reading of that place, whatever is clean
                // nearby.
                bool placeNamed = !NamesItself(c) && AlikeAtSync(named, c) is not null;
                key = overlapping?.Identity.Key
                    ?? (copies > 1 ? FindCopyOfPartial(trusted, c, copies, copyGap)?.Identity.Key : null)
                    ?? (copies > 1 && !placeNamed && !(NamesItself(c) && ReadAlikeElsewhere(c, headersRead)) ? FindNeighbouringCopy(trusted, c, copies, copyGap)?.Identity.Key : null)
                    ?? (c.Truncated && c.Payload.IsEmpty && !NamesItself(c) && !placeNamed ? FindNearest(trusted, c, copies, copyGap)?.Identity.Key : null)
                    ?? string.Empty;
            }

            keyed.Add((c, key));
        }

        if (copies > 1)
        {
            KeyCopiesMisreadAlike(keyed, anchors, copies, copyGap);
        }

        var stray = KeyUnanchoredReadings(keyed, copies, out var inLeadIn);

        // A position is one identity over one stretch of tape: copies and other settings' readings overlap or follow
        // closely; the same identity much later (a block number reused by the next file) is a new position. Copies
        // are written back to back, so the same identity after a block read in between is a new position too, however
        // close: two short files whose headers carry only a block number both start at block 0.
        // Stretches are numbered in order of their first reading, which makes them the positions in tape order.
        var stretchEnds = new List<ProvenSpan>();
        var stretchesByKey = new Dictionary<string, List<int>>(StringComparer.Ordinal);
        var readings = new List<(double Start, double End, int Stretch)>();
        var positionOf = new int[keyed.Count];
        var wholeBySetting = new Dictionary<(int Stretch, int Setting), int>();
        var cleanOf = new Dictionary<int, List<BlockCandidate>>();
        int lastStretch = -1;
        bool anyBlock = Array.IndexOf(stray, false) >= 0;
        for (int i = 0; i < keyed.Count; i++)
        {
            var (candidate, key) = keyed[i];
            if (stray[i] && (lastStretch >= 0 || anyBlock))
            {
                // No block: it joins the stretch it follows (before the first, the first, which the next reading that
                // is a block makes: stretch 0), and neither ends that stretch nor stands between its copies.
                positionOf[i] = Math.Max(lastStretch, 0);
                if (inLeadIn[i])
                {
                    // A lead-in lies here: a reading after it keyed by a neighbour is of a copy of its own (ReadInBetween).
                    readings.Add((candidate.StartSeconds, candidate.EndSeconds, -1));
                }

                continue;
            }

            double reach = Math.Max(1.0, 1.5 * (candidate.EndSeconds - candidate.StartSeconds));
            if (!stretchesByKey.TryGetValue(key, out var ofKey))
            {
                ofKey = [];
                stretchesByKey.Add(key, ofKey);
            }

            // One setting reads each copy of a block whole once: another whole reading of the same identity by the
            // same setting, after as many as the format writes, is another block whose header was misread alike. And
            // a clean reading is another block than a clean reading of other bytes that it does not overlap on the
            // tape, whichever setting read them: headers that carry only a block number repeat from file to file.
            int found = ofKey.Count > 0 && candidate.StartSeconds < stretchEnds[ofKey[^1]].End + reach && !ReadInBetween(ofKey[^1], candidate.StartSeconds, !KeyReadAtSync(i))
                && (candidate.Truncated || wholeBySetting.GetValueOrDefault((ofKey[^1], candidate.SettingIndex)) < Math.Max(1, copies))
                && !(candidate.Status == BlockStatus.Clean && cleanOf.TryGetValue(ofKey[^1], out var cleanThere) && cleanThere.Exists(t => OtherBlock(t, candidate)))
                ? ofKey[^1]
                : -1;
            if (found < 0)
            {
                stretchEnds.Add(ProvenSpan.Empty.With(candidate));
                found = stretchEnds.Count - 1;
                ofKey.Add(found);
            }
            else
            {
                stretchEnds[found] = stretchEnds[found].With(candidate);
            }

            if (candidate.Status == BlockStatus.Clean)
            {
                if (!cleanOf.TryGetValue(found, out var cleanHere))
                {
                    cleanOf.Add(found, cleanHere = []);
                }

                cleanHere.Add(candidate);
            }

            if (!candidate.Truncated)
            {
                wholeBySetting[(found, candidate.SettingIndex)] = wholeBySetting.GetValueOrDefault((found, candidate.SettingIndex)) + 1;
            }

            // Candidates arrive in order of start (keyed was built so), so these starts ascend.
            readings.Add((candidate.StartSeconds, candidate.EndSeconds, found));
            positionOf[i] = found;
            lastStretch = found;
        }

        // Whether a reading at reading i's sync (its own or another setting's) reads i's key in its own header: else
        // i took the key from a neighbour, which may be the block before.
        bool KeyReadAtSync(int i)
        {
            double start = keyed[i].Candidate.StartSeconds;
            for (int j = i; j >= 0 && start - keyed[j].Candidate.StartSeconds <= SyncSeconds; j--)
            {
                if (keyed[j].Candidate.Identity.Key == keyed[i].Key)
                {
                    return true;
                }
            }

            for (int j = i + 1; j < keyed.Count && keyed[j].Candidate.StartSeconds - start <= SyncSeconds; j++)
            {
                if (keyed[j].Candidate.Identity.Key == keyed[i].Key)
                {
                    return true;
                }
            }

            return false;
        }

        // Whether a block of another stretch was read wholly after stretch s ended and before `start` (only the last
        // few readings can have begun after s ended). For a reading whose key no reading at its sync reads in its own
        // header (it took the key from a neighbour), a lead-in read after s ended counts too: the reading starts a copy
        // of its own there, and the neighbour's header may be the block's before it.
        bool ReadInBetween(int s, double start, bool keyedByNeighbour)
        {
            for (int r = readings.Count - 1; r >= 0 && readings[r].Start > stretchEnds[s].End; r--)
            {
                if (readings[r].Stretch != s && readings[r].End <= start && (readings[r].Stretch >= 0 || keyedByNeighbour))
                {
                    return true;
                }
            }

            return false;
        }

        JoinPlacesOfOneBlock(keyed, positionOf, stray, stretchEnds.Count, copies, copyGap);
        OrderCopiesBySync(keyed, positionOf, stray, copies, copyGap);

        var placed = new (int Reading, int Position, double Start)[keyed.Count];
        for (int i = 0; i < keyed.Count; i++)
        {
            placed[i] = (inputOf[i], positionOf[i], keyed[i].Candidate.StartSeconds);
        }

        placed.AsSpan().Sort((a, b) => a.Position != b.Position ? a.Position.CompareTo(b.Position) : a.Start.CompareTo(b.Start));
        var order = new (int Reading, int Position)[placed.Length];
        for (int i = 0; i < placed.Length; i++)
        {
            order[i] = (placed[i].Reading, placed[i].Position);
        }

        return order;
    }

    /// <summary>
    /// A setting that misreads a block misreads its copies alike (a bit slip, an inverted level: the same wrong header
    /// bytes each time). Where one copy's misread lies on a clean reading of another setting, and so took its identity,
    /// a failed reading that no clean reading anchors, with the very same header bytes and starting where another copy
    /// of that clean block can start (<see cref="WithinCopies"/>, and within two block lengths), is that block's other
    /// copy, not a block of its own.
    /// </summary>
    private static void KeyCopiesMisreadAlike(List<(BlockCandidate Candidate, string Key)> keyed, List<(int Reading, BlockCandidate Clean)> anchors, int copies, double? copyGap)
    {
        var byHeader = new Dictionary<string, List<(int Reading, BlockCandidate Clean)>>(StringComparer.Ordinal);
        foreach (var anchor in anchors)
        {
            var c = keyed[anchor.Reading].Candidate;
            if (NamesItself(c) && c.Identity.Key != keyed[anchor.Reading].Key)
            {
                string header = Convert.ToHexString(c.Header.AsSpan());
                if (!byHeader.TryGetValue(header, out var list))
                {
                    byHeader.Add(header, list = []);
                }

                list.Add(anchor);
            }
        }

        if (byHeader.Count == 0)
        {
            return;
        }

        for (int i = 0; i < keyed.Count; i++)
        {
            var c = keyed[i].Candidate;
            if (keyed[i].Key.Length > 0 || !NamesItself(c) || !byHeader.TryGetValue(Convert.ToHexString(c.Header.AsSpan()), out var alike))
            {
                continue;
            }

            foreach (var (reading, clean) in alike)
            {
                double reach = 2 * Math.Max(c.EndSeconds - c.StartSeconds, clean.EndSeconds - clean.StartSeconds) + 0.5;
                if (!SameSync(c, keyed[reading].Candidate) && Math.Abs(c.StartSeconds - clean.StartSeconds) <= reach && WithinCopies(clean, c, copies, copyGap))
                {
                    keyed[i] = (c, keyed[reading].Key);
                    break;
                }
            }
        }
    }

    /// <summary>Each header read, as hexadecimal, with the starts and settings of the readings that carry it.</summary>
    private static Dictionary<string, List<(double Start, int Setting)>> HeadersRead(IReadOnlyList<BlockCandidate> candidates)
    {
        var read = new Dictionary<string, List<(double Start, int Setting)>>(StringComparer.Ordinal);
        foreach (var c in candidates)
        {
            string header = Convert.ToHexString(c.Header.AsSpan());
            if (!read.TryGetValue(header, out var list))
            {
                read.Add(header, list = []);
            }

            list.Add((c.StartSeconds, c.SettingIndex));
        }

        return read;
    }

    /// <summary>Whether another setting read the very header of <paramref name="c"/> at its sync.</summary>
    private static bool ReadAlikeElsewhere(BlockCandidate c, Dictionary<string, List<(double Start, int Setting)>>? headersRead)
    {
        if (headersRead is null || !headersRead.TryGetValue(Convert.ToHexString(c.Header.AsSpan()), out var list))
        {
            return false;
        }

        foreach (var (start, setting) in list)
        {
            if (setting != c.SettingIndex && Math.Abs(start - c.StartSeconds) <= SyncSeconds)
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>
    /// For a reading cut short inside its header after a field that names its block but before its block number: the
    /// clean block within reach of a copy of it whose identity agrees with every field the reading has, where only one
    /// block does. Such a reading names its file, not which block of the file; the clean copy beside it does.
    /// </summary>
    private static BlockCandidate? FindCopyOfPartial(List<BlockCandidate> trusted, BlockCandidate c, int copies, double? copyGap)
    {
        var read = c.Identity;
        if (!c.Truncated || !c.Payload.IsEmpty || read.BlockNumber is not null || (read.FileName is null && read.FileId is null))
        {
            return null;
        }

        BlockCandidate? found = null;
        double length = Math.Max(c.EndSeconds - c.StartSeconds, 0.1);
        foreach (var t in trusted)
        {
            double reach = 2 * Math.Max(length, t.EndSeconds - t.StartSeconds) + 0.5;
            if (t.StartSeconds > c.EndSeconds + reach)
            {
                break;
            }

            bool agrees = t.Identity.BlockNumber is not null
                && (read.FileName is null || read.FileName == t.Identity.FileName)
                && (read.FileId is null || read.FileId == t.Identity.FileId);
            if (!agrees || t.EndSeconds < c.StartSeconds - reach || !WithinCopies(t, c, copies, copyGap))
            {
                continue;
            }

            if (found is not null && found.Identity.Key != t.Identity.Key)
            {
                return null;
            }

            found = t;
        }

        return found;
    }

    /// <summary>The readings that name a block, in order of start.</summary>
    private static List<BlockCandidate> NamedStarts(IReadOnlyList<BlockCandidate> candidates)
    {
        var named = new List<BlockCandidate>();
        foreach (var c in candidates)
        {
            if (NamesItself(c))
            {
                named.Add(c);
            }
        }

        named.Sort((a, b) => a.StartSeconds.CompareTo(b.StartSeconds));
        return named;
    }

    /// <summary>
    /// A reading that starts at the sync of <paramref name="c"/> and names a block as another setting's reading from
    /// there names it, where there is one (one setting's garbled header names nothing that anyone can vouch for).
    /// </summary>
    private static BlockCandidate? AlikeAtSync(List<BlockCandidate> named, BlockCandidate c)
    {
        int from = LowerBound(named.Count, i => named[i].StartSeconds >= c.StartSeconds - SyncSeconds);
        for (int i = from; i < named.Count && named[i].StartSeconds <= c.StartSeconds + SyncSeconds; i++)
        {
            for (int j = i + 1; j < named.Count && named[j].StartSeconds <= c.StartSeconds + SyncSeconds; j++)
            {
                if (named[j].SettingIndex != named[i].SettingIndex && ReadAlike(named[j], named[i]))
                {
                    return named[i];
                }
            }
        }

        return null;
    }

    /// <summary>Starts closer than this are one sync, read by several settings (blocks and copies are whole lead-ins apart).</summary>
    private const double SyncSeconds = 0.03;

    /// <summary>
    /// The latest a setting's reading may start after the others' at one sync and still be of it, where it starts inside
    /// theirs. Our choice: settings with fixed thresholds were seen locking on 30 to 60 ms late; copies are written back
    /// to back with a lead-in before each, several times this apart, so a reading this late is not the next copy's.
    /// </summary>
    private const double LateSyncSeconds = 0.07;

    /// <summary>
    /// The longest span from a sync to the next that is taken for one copy's, over the median of all such spans of a
    /// capture (most are one copy's): half again. Our choice, from one capture where two spans over several unread
    /// copies added up by chance to a third.
    /// </summary>
    private const double MostOneCopySpan = 1.5;

    /// <summary>
    /// Joins stretches that are one block on the tape, where identities could not say so (garbled headers, no clean
    /// reading to vouch for the place). A sync is a place where readings start: readings of different settings that
    /// start at one sync are one copy of one block, so stretches that share a sync are one position, as long as that
    /// position spans no more syncs than the format writes copies and holds no two clean blocks. Where the format writes
    /// each block k times, a run of places read at one sync each, none clean, between positions that hold all k copies
    /// of their block (or the capture's ends), whose length is a multiple of k, is k copies of each block in turn,
    /// unless two of the places that would be joined hold headers that two settings or more read alike and that name
    /// different blocks.
    /// </summary>
    private static void JoinPlacesOfOneBlock(List<(BlockCandidate Candidate, string Key)> keyed, int[] positionOf, bool[] stray, int stretches, int copies, double? copyGap)
    {
        if (keyed.Count < 2)
        {
            return;
        }

        // The sync each reading starts at (readings are in order of start), and each stretch's syncs and cleanliness.
        int limit = Math.Max(1, copies);
        var syncOf = new int[keyed.Count];
        var syncList = new List<List<int>>();
        var cleanList = new List<bool>();
        for (int s = 0; s < stretches; s++)
        {
            syncList.Add([]);
            cleanList.Add(false);
        }

        // A setting that locks on the sync later than the others (a fixed threshold needs more of the sync's pulses)
        // starts a little after them, inside the copy they read from it. Bounded by time only (the overlap is not
        // checked): a reading that starts within LateSyncSeconds of the sync, and within a quarter of the longest whole
        // reading from it (blocks may be shorter than the lead-ins of others), read that sync too.
        int sync = -1;
        double syncStart = double.NegativeInfinity, syncWhole = 0;
        for (int i = 0; i < keyed.Count; i++)
        {
            var c = keyed[i].Candidate;
            double late = c.StartSeconds - syncStart;
            if (late > SyncSeconds && !(late <= Math.Min(LateSyncSeconds, 0.25 * syncWhole)))
            {
                sync++;
                syncStart = c.StartSeconds;
                syncWhole = 0;
            }

            if (!c.Truncated && c.StartSeconds - syncStart <= SyncSeconds)
            {
                syncWhole = Math.Max(syncWhole, c.EndSeconds - c.StartSeconds);
            }

            syncOf[i] = sync;
            if (!stray[i])
            {
                var own = syncList[positionOf[i]];
                if (own.Count == 0 || own[^1] != sync)
                {
                    own.Add(sync);
                }

                cleanList[positionOf[i]] |= c.Status == BlockStatus.Clean;
            }
        }

        int count = syncList.Count;
        var syncs = syncList.ToArray();
        var clean = cleanList.ToArray();
        var parent = new int[count];
        for (int s = 0; s < count; s++)
        {
            parent[s] = s;
        }

        int Root(int s)
        {
            while (parent[s] != s)
            {
                parent[s] = parent[parent[s]];
                s = parent[s];
            }

            return s;
        }

        void Join(int a, int b)
        {
            int low = Math.Min(a, b), high = Math.Max(a, b);
            parent[high] = low;
            foreach (int k in syncs[high])
            {
                if (!syncs[low].Contains(k))
                {
                    syncs[low].Add(k);
                }
            }

            syncs[low].Sort();
            clean[low] |= clean[high];
        }

        // Stretches that share a sync: each reading's stretch joins the first stretch read at that sync that it may join
        // (not only the first reading's: where that one may not, because it reaches other syncs, the rest are still
        // one copy).
        var atSync = new List<int>();
        for (int i = 0, current = -1; i < keyed.Count; i++)
        {
            if (stray[i])
            {
                continue;
            }

            if (syncOf[i] != current)
            {
                current = syncOf[i];
                atSync.Clear();
            }

            int b = Root(positionOf[i]);
            foreach (int seen in atSync)
            {
                int a = Root(seen);
                if (a != b && !(clean[a] && clean[b]) && syncs[a].Union(syncs[b]).Count() <= limit)
                {
                    Join(a, b);
                    b = Root(b);
                }
            }

            atSync.Add(positionOf[i]);
        }

        if (copies > 1)
        {
            PairLoneCopies(keyed, positionOf, stray, syncOf, syncs, clean, Root, Join, copies, copyGap);
        }

        // Positions in tape order of their first reading (readings are in order of start).
        var number = new int[count];
        Array.Fill(number, -1);
        int next = 0;
        for (int i = 0; i < keyed.Count; i++)
        {
            int r = Root(positionOf[i]);
            if (number[r] < 0)
            {
                number[r] = next++;
            }

            positionOf[i] = number[r];
        }
    }

    /// <summary>
    /// The second half of <see cref="JoinPlacesOfOneBlock"/>: a run of places read at one sync each, none clean, between
    /// positions that hold all copies of their block (or the capture's ends), taken k at a time as the copies of one
    /// block when the run's length is a multiple of k.
    /// </summary>
    private static void PairLoneCopies(
        List<(BlockCandidate Candidate, string Key)> keyed, int[] positionOf, bool[] stray, int[] syncOf, List<int>[] syncs, bool[] clean,
        Func<int, int> root, Action<int, int> join, int copies, double? copyGap)
    {
        int syncCount = keyed.Count == 0 ? 0 : syncOf[^1] + 1;

        // Where each sync is: the start of its first reading (readings are in order of start).
        var syncStart = new double[syncCount];
        for (int i = keyed.Count - 1; i >= 0; i--)
        {
            syncStart[syncOf[i]] = keyed[i].Candidate.StartSeconds;
        }

        // Per sync in order: the position that alone reads there (-1 where several do or none).
        var owner = new int[syncCount];
        Array.Fill(owner, -2);
        var readingsOf = new Dictionary<int, List<int>>();
        for (int i = 0; i < keyed.Count; i++)
        {
            if (stray[i])
            {
                continue;
            }

            int r = root(positionOf[i]);
            int k = syncOf[i];
            owner[k] = owner[k] == -2 || owner[k] == r ? r : -1;
            if (!readingsOf.TryGetValue(r, out var list))
            {
                readingsOf[r] = list = [];
            }

            list.Add(i);
        }

        // Units along the tape: a lone place (one sync, not clean), a whole block (all its copies at consecutive
        // syncs), or anything else, which bounds no run.
        const int Lone = 0, Whole = 1, Other = 2;
        var units = new List<(int Kind, int Root, int Sync)>();
        for (int k = 0; k < syncCount; k++)
        {
            int r = owner[k];
            if (r == -2)
            {
                continue;
            }

            if (r < 0)
            {
                units.Add((Other, -1, k));
                continue;
            }

            if (units.Count > 0 && units[^1].Root == r)
            {
                continue;
            }

            var own = syncs[r];
            int kind = own.Count == 1 && !clean[r] ? Lone
                : own.Count == copies && own[^1] - own[0] == copies - 1 ? Whole
                : Other;
            units.Add((kind, r, k));
        }

        // How many settings read each identity: a setting misreads the copies of one block alike, so only other settings' agreement vouches for a header.
        var settingsOf = new Dictionary<string, HashSet<int>>(StringComparer.Ordinal);
        foreach (var (candidate, _) in keyed)
        {
            string key = AlikeKey(candidate);
            if (!settingsOf.TryGetValue(key, out var settings))
            {
                settingsOf[key] = settings = [];
            }

            settings.Add(candidate.SettingIndex);
        }

        var support = new Dictionary<string, int>(StringComparer.Ordinal);
        foreach (var (key, settings) in settingsOf)
        {
            support[key] = settings.Count;
        }

        double? oneCopyBound = null;
        for (int u = 0; u < units.Count;)
        {
            if (units[u].Kind != Lone)
            {
                u++;
                continue;
            }

            int end = u;
            while (end < units.Count && units[end].Kind == Lone)
            {
                end++;
            }

            // A run bounded by whole blocks whose length is a multiple of k is k copies of each block in turn, unless
            // the places' timing says otherwise (below).
            bool bounded = (u == 0 || units[u - 1].Kind == Whole) && (end == units.Count || units[end].Kind == Whole);
            bool timed = true;
            for (int first = u; first + copies <= end && timed; first += copies)
            {
                timed = first + copies >= units.Count || SpansAlike(first);
            }

            if (bounded && timed && (end - u) % copies == 0 && !AnyNamesTwoBlocks(keyed, readingsOf, units, u, end, copies, support))
            {
                for (int first = u; first < end; first += copies)
                {
                    JoinCopies(first);
                }

                u = end;
                continue;
            }

            // Otherwise (a copy nobody read, a place that is no block, the run's first place not a first copy), the
            // places' timing tells the copies: copies of one block are one length and follow each other after the
            // same gap, so the k spans from each of its copies' syncs to the next sync read are alike. From the run's
            // first place, k places whose spans are alike are one block's copies; a place whose span is not that of the
            // places after it stands alone. Where the place before has that span too and is not known to end a block
            // (consecutive blocks of one length), the place may as well be its block's last copy: it stands alone.
            // Where the next block's first copy was not read, the last copy's span runs on over it to that block's
            // second copy: it is the copies' span and the next block's together, and the places after that block's
            // first copy are its other copies. The capture's last k places, where a block ended just before them, have
            // no sync after the last to give its span: they are the last block's copies where the spans between them are
            // alike and each is one copy's.
            for (int first = u, groupEnd = u; first + copies <= end;)
            {
                bool startsBlock = first == groupEnd || units[first - 1].Kind == Whole || !Alike(first - 1, first);
                if (first + copies < units.Count && startsBlock && SpansAlike(first) && !AnyNamesTwoBlocks(keyed, readingsOf, units, first, first + copies, copies, support))
                {
                    JoinCopies(first);
                    first += copies;
                    groupEnd = first;
                }
                else if (startsBlock && first == groupEnd && first + copies == end && end == units.Count && LastCopiesAlike(first) && !AnyNamesTwoBlocks(keyed, readingsOf, units, first, end, copies, support))
                {
                    JoinCopies(first);
                    first += copies;
                    groupEnd = first;
                }
                else if (startsBlock && NextFirstCopyUnread(first, end) && !AnyNamesTwoBlocks(keyed, readingsOf, units, first, first + copies, copies, support))
                {
                    JoinCopies(first);
                    int rest = first + copies;
                    for (int other = rest + 1; other < rest + copies - 1; other++)
                    {
                        join(root(units[rest].Root), root(units[other].Root));
                    }

                    first = rest + copies - 1;
                    groupEnd = first;
                }
                else if (startsBlock && FirstCopiesUnreadAfter(first, end) is int closing && !AnyNamesTwoBlocks(keyed, readingsOf, units, first, first + copies, copies, support))
                {
                    JoinCopies(first);
                    first = closing + 1;
                    groupEnd = first;
                }
                else
                {
                    first++;
                }
            }

            u = end;
        }

        PairCleanCopiesWithTwins();

        // A block whose copies were read at one sync each, one clean and the other only failed: the clean copy's place
        // stands alone and is no lone place, so the runs above leave its twin alone too. Copies are written back to
        // back, each one length long with the capture's gap between copies after it, so the twin of a clean copy spans
        // the clean copy's length and that gap to the sync after it: the sync just before the clean copy's, or the sync
        // after it where that one follows the clean copy by the same span. A lone place there is the twin, where the
        // timing points to one side only (blocks of one length in a row point to both), no other clean copy claims it,
        // and none of its readings names another block: a header two settings read alike, or one a clean reading of the
        // capture carries.
        void PairCleanCopiesWithTwins()
        {
            double? gap = copyGap ?? GapAfterCleanReadings();
            if (gap is null)
            {
                return;
            }

            var cleanKeys = new HashSet<string>(StringComparer.Ordinal);
            foreach (var (candidate, _) in keyed)
            {
                if (candidate.Status == BlockStatus.Clean)
                {
                    cleanKeys.Add(candidate.Identity.Key);
                }
            }

            var twinOf = new Dictionary<int, int>();
            var claimed = new Dictionary<int, int>();
            for (int c = 0; c < units.Count; c++)
            {
                if (units[c].Root < 0 || !clean[root(units[c].Root)] || syncs[root(units[c].Root)].Count >= copies || CleanCopy(units[c].Root) is not { } copy)
                {
                    continue;
                }

                double spacing = copy.Length + gap.Value;
                int before = c - 1, after = c + 1;
                // A copy's span to the sync read after it is its length and the gap after it, whether its twin or the next
                // block follows. So the twin is the neighbour that spans the clean copy's length and gap itself: the sync
                // before where it spans up to this one, the sync after where it spans up to the one after it (which
                // follows this one by that span too). Both spans are measured, or neither side is taken.
                int k = units[c].Sync;
                if (k < 1 || k + 2 >= syncCount)
                {
                    continue;
                }

                bool fitsBefore = SyncSpansNear(syncStart[k] - syncStart[k - 1], spacing);
                bool fitsAfter = SyncSpansNear(syncStart[k + 1] - syncStart[k], spacing) && SyncSpansNear(syncStart[k + 2] - syncStart[k + 1], spacing);
                int previous = k - 1, next = k + 1;
                int twin = fitsBefore ? before : after;
                if (fitsBefore == fitsAfter || twin < 0 || twin >= units.Count || units[twin].Sync != (fitsBefore ? previous : next) || !IsLone(twin) || NamesAnotherBlock(units[twin].Root, copy.Key))
                {
                    continue;
                }

                twinOf[c] = twin;
                claimed[twin] = claimed.GetValueOrDefault(twin) + 1;
            }

            foreach (var (c, twin) in twinOf)
            {
                if (claimed[twin] == 1)
                {
                    join(root(units[c].Root), root(units[twin].Root));
                }
            }

            bool IsLone(int n) => units[n].Kind == Lone && syncs[root(units[n].Root)].Count == 1 && !clean[root(units[n].Root)];

            // The key the clean readings of a place agree on and their median length; null where they disagree.
            (string Key, double Length)? CleanCopy(int r)
            {
                string? key = null;
                var lengths = new List<double>();
                foreach (int i in readingsOf[r])
                {
                    var x = keyed[i].Candidate;
                    if (x.Status != BlockStatus.Clean)
                    {
                        continue;
                    }

                    if (key is not null && key != x.Identity.Key)
                    {
                        return null;
                    }

                    key = x.Identity.Key;
                    lengths.Add(x.EndSeconds - x.StartSeconds);
                }

                lengths.Sort();
                return key is null ? null : (key, lengths[lengths.Count / 2]);
            }

            bool NamesAnotherBlock(int r, string key)
            {
                foreach (int i in readingsOf[r])
                {
                    var x = keyed[i].Candidate;
                    bool other = (NamesItself(x) && x.Identity.Key != key && (cleanKeys.Contains(x.Identity.Key) || (support[AlikeKey(x)] > 1 && x.Identity.FileName?.Contains('?', StringComparison.Ordinal) != true)))
                        || (keyed[i].Key.Length > 0 && keyed[i].Key != key && cleanKeys.Contains(keyed[i].Key));
                    if (other)
                    {
                        return true;
                    }
                }

                return false;
            }
        }

        // Where no setting read two copies of a block clean: the median from a clean whole reading's end to the next sync read after it.
        double? GapAfterCleanReadings()
        {
            var gaps = new List<double>();
            foreach (var (candidate, _) in keyed)
            {
                if (candidate.Status != BlockStatus.Clean || candidate.Truncated)
                {
                    continue;
                }

                int next = Array.BinarySearch(syncStart, candidate.EndSeconds);
                next = next < 0 ? ~next : next + 1;
                if (next < syncStart.Length)
                {
                    gaps.Add(syncStart[next] - candidate.EndSeconds);
                }
            }

            gaps.Sort();
            return gaps.Count == 0 ? null : gaps[gaps.Count / 2];
        }

        void JoinCopies(int first)
        {
            for (int other = first + 1; other < first + copies; other++)
            {
                join(root(units[first].Root), root(units[other].Root));
            }
        }

        // The capture's last k places: the spans between them alike and each no longer than one copy's.
        bool LastCopiesAlike(int first)
        {
            for (int u = first; u < first + copies - 1; u++)
            {
                if (Span(u) > OneCopyBound() || !Alike(first, u))
                {
                    return false;
                }
            }

            return true;
        }

        // Whether the spans from the syncs of units first..first+k-1 to each next unit's sync are alike.
        bool SpansAlike(int first)
        {
            for (int u = first + 1; u < first + copies; u++)
            {
                if (!Alike(first, u))
                {
                    return false;
                }
            }

            return true;
        }

        // Whether units first..first+k-1 are one block's copies and the next block's first copy was not read: the
        // copies but the last span alike, the last one's span is the first's and the next unit's together (the next
        // block's copy read after the unread one, whose span is that block's), and the next block's other k-1 copies
        // lie in the run, with spans alike but the last.
        bool NextFirstCopyUnread(int first, int end)
        {
            int last = first + copies - 1, rest = first + copies, restLast = rest + copies - 2;
            if (restLast >= end || restLast + 1 >= units.Count)
            {
                return false;
            }

            for (int u = first + 1; u < last; u++)
            {
                if (!Alike(first, u))
                {
                    return false;
                }
            }

            for (int u = rest + 1; u < restLast; u++)
            {
                if (!Alike(rest, u))
                {
                    return false;
                }
            }

            return Span(first) <= OneCopyBound() && Span(rest) <= OneCopyBound() && SyncSpansAlike(Span(last), Span(first) + Span(rest));
        }

        // Where the format writes each block twice: whether units first and first+1 are one block's copies and the first
        // copies of the blocks after it, one or more in a row, were not read. Each block's copies span one length and the
        // gap, so from its second copy's sync the next sync read lies its own span and the next block's later; the next
        // block's span is what is left over, and so on along the second copies read, until one's span to the next sync is
        // its block's own (the next block's first copy was read): the closing unit, or null. The spans left over must each
        // be one copy's (no longer than OneCopyBound, no shorter than half the median span). Two second copies in a row
        // whose spans are alike are as likely one block's two copies: the chain is not followed through them (blocks of
        // like lengths make leftovers match by chance).
        int? FirstCopiesUnreadAfter(int first, int end)
        {
            if (copies != 2 || first + 2 >= end)
            {
                return null;
            }

            double least = OneCopyBound() / MostOneCopySpan / 2;
            double span = Span(first);
            if (span > OneCopyBound() || span < least)
            {
                return null;
            }

            // Unit first+1 is the block's second copy; each unit after it in the run is a second copy whose first was not read.
            for (int u = first + 1; u < end && u + 2 < units.Count; u++)
            {
                double next = Span(u) - span;
                if (next > OneCopyBound() || next < least || (u > first + 1 && Alike(u, u + 1)))
                {
                    return null;
                }

                if (u + 1 < end && SyncSpansAlike(Span(u + 1), next))
                {
                    return u + 1;
                }

                span = next;
            }

            return null;
        }

        // The longest span from a sync to the next that is taken for one copy's: half again the median of all such
        // spans read (most are one copy's). A span over several unread copies may add up with another by chance.
        double OneCopyBound()
        {
            if (oneCopyBound is null)
            {
                var spans = new double[Math.Max(0, units.Count - 1)];
                for (int a = 0; a < spans.Length; a++)
                {
                    spans[a] = Span(a);
                }

                Array.Sort(spans);
                oneCopyBound = spans.Length == 0 ? 0 : MostOneCopySpan * spans[spans.Length / 2];
            }

            return oneCopyBound.Value;
        }

        double Span(int a) => syncStart[units[a + 1].Sync] - syncStart[units[a].Sync];

        // Whether the spans from the syncs of units a and b to the next unit's sync are alike.
        bool Alike(int a, int b) => SyncSpansAlike(Span(a), Span(b));
    }

    /// <summary>
    /// Whether two spans between syncs are alike: within 1 % (wow and flutter, common practice) and 10 ms (where
    /// settings' readings of one sync start).
    /// </summary>
    private static bool SyncSpansAlike(double x, double y) => Math.Abs(x - y) <= (0.01 * Math.Max(x, y)) + 0.01;

    /// <summary>
    /// Whether a span between syncs is near the one a copy's length and the gap after it foretell: within 1 % (wow and
    /// flutter, common practice) and <see cref="SyncSeconds"/> (a length and a gap each measured from readings whose
    /// starts and ends settings place a few milliseconds apart).
    /// </summary>
    private static bool SyncSpansNear(double span, double foretold) => Math.Abs(span - foretold) <= (0.01 * Math.Max(span, foretold)) + SyncSeconds;

    /// <summary>
    /// Whether two places that would be taken for copies of one block hold readings that name different blocks and are
    /// to be believed: headers read far enough to name a block, each read alike by two settings or more.
    /// </summary>
    private static bool AnyNamesTwoBlocks(
        List<(BlockCandidate Candidate, string Key)> keyed, Dictionary<int, List<int>> readingsOf, List<(int Kind, int Root, int Sync)> units, int from, int to, int copies,
        Dictionary<string, int> support)
    {
        for (int first = from; first < to; first += copies)
        {
            for (int a = first; a < first + copies; a++)
            {
                for (int b = a + 1; b < first + copies; b++)
                {
                    foreach (int i in readingsOf[units[a].Root])
                    {
                        foreach (int j in readingsOf[units[b].Root])
                        {
                            var x = keyed[i].Candidate;
                            var y = keyed[j].Candidate;
                            if (Believed(x) && Believed(y) && x.Identity.Key != y.Identity.Key)
                            {
                                return true;
                            }
                        }
                    }
                }
            }
        }

        return false;

        // A name with a byte it cannot print ('?') was garbled there, however many settings garbled it alike (settings
        // that read the same edges misread alike).
        bool Believed(BlockCandidate c) => NamesItself(c) && support[AlikeKey(c)] > 1 && c.Identity.FileName?.Contains('?', StringComparison.Ordinal) != true;
    }

    /// <summary>
    /// Failed readings that no clean reading anchors (the empty key) are places on the tape all the same: readings of
    /// different settings that start at the same sync are one place. A header that another setting read alike at the
    /// same place keeps its identity; a header no other setting read there is a misread, not a block of its own (a
    /// setting that does not suit the capture misreads every block alike, so its own readings elsewhere vouch for
    /// nothing), and takes the identity of its place, or, when none names it, that of the place it overlaps: such a
    /// setting garbles headers and may run past a block's end on a misread length, and neither makes a new block. A
    /// place is named by an identity only where that identity is read at no more syncs of the capture than the format
    /// writes copies, or another setting read it alike there: an identity read all along the capture (a kind's number
    /// with no file, one setting's garble of every header) names no one place, and would carry the place into the
    /// position of another block. Where the format writes each block more than once, a block number with no file, or a
    /// name with a byte it cannot print, read at more syncs than that names no place even where settings read it alike
    /// (<c>NumberOfEveryPlace</c>).
    /// </summary>
    /// <returns>
    /// Per reading, whether it is no block at all: a place that only failed readings of identities nobody else read
    /// make, overlapping no other reading, whose headers agree with no header read near it over even half their bytes.
    /// A misread of a real block keeps most of its header (the file's name, a block number near its neighbours'); such
    /// a place is noise read as data, typically in the lead-in between two blocks or two copies of one. A place that
    /// claims nothing (whole failed readings with no payload: the lead-in's run read as an empty header) may also lie
    /// between places where two settings or more read a sync, vouched for or not: no block reads as nothing alone.
    /// </returns>
    /// <param name="inLeadIn">Per reading, whether it is no block because it lies in the lead-in of the sync read next (<see cref="InLeadInOfNextSync"/>).</param>
    private static bool[] KeyUnanchoredReadings(List<(BlockCandidate Candidate, string Key)> keyed, int copies, out bool[] inLeadIn)
    {
        var stray = new bool[keyed.Count];
        inLeadIn = new bool[keyed.Count];
        var vouched = new bool[keyed.Count];
        var vouchedSync = new bool[keyed.Count];
        var starts = new double[keyed.Count];
        var byEnd = new int[keyed.Count];
        var syncOf = Syncs(keyed, out int syncCount);

        // Whether more than one setting read each sync (a sync's readings follow one another in order of start).
        var severalSettings = new bool[syncCount];
        for (int i = 1, first = 0; i < keyed.Count; i++)
        {
            if (syncOf[i] != syncOf[first])
            {
                first = i;
            }

            severalSettings[syncOf[i]] |= keyed[i].Candidate.SettingIndex != keyed[first].Candidate.SettingIndex;
        }

        for (int i = 0; i < keyed.Count; i++)
        {
            vouched[i] = keyed[i].Key.Length > 0;
            vouchedSync[i] = vouched[i] || severalSettings[syncOf[i]];
            starts[i] = keyed[i].Candidate.StartSeconds;
            byEnd[i] = i;
        }

        // By end, and among equal ends the later reading first, so that the last of a run of equal ends is the first read.
        Array.Sort(byEnd, (a, b) =>
        {
            int order = keyed[a].Candidate.EndSeconds.CompareTo(keyed[b].Candidate.EndSeconds);
            return order != 0 ? order : b.CompareTo(a);
        });

        var index = new ReadingIndex(keyed);
        var near = new List<int>();
        double? leadIn = LeadInBeforeSync(keyed, starts);
        var support = new Dictionary<string, int>(StringComparer.Ordinal);
        foreach (var (candidate, key) in keyed)
        {
            string own = candidate.Identity.Key;
            support[own] = support.GetValueOrDefault(own) + 1;
        }

        // How many syncs of the capture each identity is read at.
        var placesOfKey = new Dictionary<string, int>(StringComparer.Ordinal);
        {
            var lastSyncOf = new Dictionary<string, int>(StringComparer.Ordinal);
            for (int i = 0; i < keyed.Count; i++)
            {
                string own = keyed[i].Candidate.Identity.Key;
                if (lastSyncOf.GetValueOrDefault(own, -1) != syncOf[i])
                {
                    lastSyncOf[own] = syncOf[i];
                    placesOfKey[own] = placesOfKey.GetValueOrDefault(own) + 1;
                }
            }
        }

        // Places in order of start: the first reading of each, and the readings that joined it.
        var places = new List<List<int>>();
        var placeOf = new int[keyed.Count];
        Array.Fill(placeOf, -1);
        for (int i = 0; i < keyed.Count; i++)
        {
            if (keyed[i].Key.Length > 0)
            {
                continue;
            }

            var c = keyed[i].Candidate;
            List<int>? joined = null;
            for (int p = places.Count - 1; p >= 0 && p >= places.Count - 16; p--)
            {
                var first = keyed[places[p][0]].Candidate;
                if (SameSync(first, c))
                {
                    joined = places[p];
                    break;
                }
            }

            if (joined is null)
            {
                places.Add([i]);
                placeOf[i] = places.Count - 1;
            }
            else
            {
                joined.Add(i);
                placeOf[i] = placeOf[joined[0]];
            }
        }

        // Each place's identity: the one most readings of the capture carry; then the most confident reading's. A
        // reading cut short inside the first field of its header names no block (its identity is its setting's count
        // of readings, which other settings' counts match by chance): it vouches for nothing, and a place where no
        // reading names a block is known by itself alone, vouched for by the readings that start at its sync.
        var placeKey = new string[places.Count];
        var placeSupport = new int[places.Count];
        for (int p = 0; p < places.Count; p++)
        {
            int best = places[p][0];
            foreach (int i in places[p])
            {
                var c = keyed[i].Candidate;
                var b = keyed[best].Candidate;
                int sc = Support(c);
                int sb = Support(b);
                if (sc > sb || (sc == sb && c.Confidence > b.Confidence))
                {
                    best = i;
                }
            }

            var named = keyed[best].Candidate;
            bool namesThisPlace = placesOfKey[named.Identity.Key] <= Math.Max(1, copies) || (ReadAlikeAtPlace(best) && !NumberOfEveryPlace(named));
            placeKey[p] = NamesItself(named) && namesThisPlace ? named.Identity.Key : $"place {p}";
            placeSupport[p] = NamesItself(named) ? Support(named) : places[p].Count;
        }

        int Support(BlockCandidate c) => NamesItself(c) ? support[c.Identity.Key] : 0;

        // Whether a reading's identity is a block number alone (no file), or a name with a byte it cannot print, that the
        // capture reads at more syncs than the format writes copies, where it writes more than one: a format of several
        // kinds numbers each block by its kind's place in the file, so every block of one kind carries that number, and
        // settings that read the kind alike read it alike at every place; two settings that read the same edges garble
        // every block's header alike, so one garbled name stands at every place they read. Read alike at a place, it
        // still tells that block from none of its neighbours: it names no place, and the place keeps its own identity.
        bool NumberOfEveryPlace(BlockCandidate c) =>
            copies > 1 && (c.Identity is { FileName: null, FileId: null, BlockNumber: not null } || c.Identity.FileName?.Contains('?', StringComparison.Ordinal) == true)
            && placesOfKey[c.Identity.Key] > copies;

        // Whether another setting read reading i's header alike at its place: a setting misreads every block alike (an
        // inverted level, a slipped bit), so only another setting's reading there vouches for it.
        bool ReadAlikeAtPlace(int i)
        {
            var c = keyed[i].Candidate;
            return places[placeOf[i]].Exists(j => keyed[j].Candidate.SettingIndex != c.SettingIndex && ReadAlike(keyed[j].Candidate, c));
        }

        for (int p = 0; p < places.Count; p++)
        {
            string key = placeKey[p];
            int alikeAt = places[p].FindIndex(i => NamesItself(keyed[i].Candidate) && ReadAlikeAtPlace(i));
            var alike = alikeAt >= 0 ? keyed[places[p][alikeAt]].Candidate : null;
            string? overlapped = OverlappedKey(keyed, index, near, p, placeOf, placeKey, placeSupport, places[p][0], alike, out bool anchored);
            if (anchored)
            {
                // A stretch of tape that an anchored reading covers is that block's place: readings of other settings
                // there are misreads of it, whatever identity their garbled headers share with misreads elsewhere.
                foreach (int i in places[p])
                {
                    keyed[i] = (keyed[i].Candidate, overlapped!);
                }

                continue;
            }

            // Whole failed readings that claim no payload (a false mark in a lead-in or a gap, then the lead-in's run
            // read as an empty block's header) offer nothing: that settings read such a header alike, or one setting at several
            // places, vouches for no block. At the capture's start there is no block before them to bound them.
            bool claimsNothing = places[p].TrueForAll(i => keyed[i].Candidate is { Status: BlockStatus.Failed, Truncated: false, Payload.IsEmpty: true });
            if (placeSupport[p] <= 1 || claimsNothing)
            {
                // A header read at a sync of its own that resembles its neighbours' (the file's name, a block number
                // near theirs) names a block that a failed reading from another sync ran over on a misread length:
                // it keeps its identity. Where the format writes each block more than once, such a header is as
                // likely the other copy of the block run over as the next block's first copy: it keeps its place, and
                // the syncs' timing tells whose copy it is (JoinPlacesOfOneBlock). A place that claims nothing is no
                // copy of either, and goes with the reading that runs over it.
                bool ownBlock = copies <= 1 && !claimsNothing
                    && places[p].Exists(i => NamesItself(keyed[i].Candidate) && ResemblesANeighbour(keyed, index, near, i, placeOf, onlyClaims: false));
                key = ownBlock || (copies > 1 && !claimsNothing) ? key : overlapped ?? key;
                bool leadInRead = claimsNothing && InLeadInOfNextSync(keyed, starts, places[p], leadIn);
                if (leadInRead || (overlapped is null && BetweenVouchedBlocks(keyed, claimsNothing ? vouchedSync : vouched, starts, byEnd, places[p], atStartToo: claimsNothing) && places[p].TrueForAll(i => !ResemblesANeighbour(keyed, index, near, i, placeOf, onlyClaims: claimsNothing))))
                {
                    foreach (int i in places[p])
                    {
                        stray[i] = true;
                        inLeadIn[i] = leadInRead;
                    }
                }
            }

            foreach (int i in places[p])
            {
                // A header that other readings share is read right as far as anyone can tell: it keeps its identity.
                // A reading cut short before its payload offers no bytes and names no block of its own, however many
                // settings garbled its header alike: it belongs to the place it starts at.
                var c = keyed[i].Candidate;
                string own = c.Identity.Key;
                bool nothingRead = c.Truncated && c.Payload.IsEmpty;
                keyed[i] = (c, ReadAlikeAtPlace(i) && !nothingRead && !NumberOfEveryPlace(c) ? own : key);
            }
        }

        return stray;
    }

    /// <summary>
    /// The lead-in a sync follows, as this capture shows it: the median time from the end of a whole reading that offers
    /// bytes to the next reading's start (a copy read whole ends where its lead-in to the next copy begins; a length
    /// misread short ends earlier, one misread long runs over the next sync and is not counted). Null where fewer than
    /// three readings show it.
    /// </summary>
    private static double? LeadInBeforeSync(List<(BlockCandidate Candidate, string Key)> keyed, double[] starts)
    {
        var spans = new List<double>();
        for (int i = 0; i < keyed.Count; i++)
        {
            var c = keyed[i].Candidate;
            if (c.Truncated || !ClaimsBytes(c))
            {
                continue;
            }

            int after = LowerBound(starts.Length, j => starts[j] >= c.EndSeconds);
            if (after < starts.Length)
            {
                spans.Add(starts[after] - c.EndSeconds);
            }
        }

        if (spans.Count < 3)
        {
            return null;
        }

        spans.Sort();
        return spans[spans.Count / 2];
    }

    /// <summary>
    /// Whether a place of whole readings that claim nothing lies in the lead-in of the sync read next: a reading that
    /// offers bytes starts after the place ends, sooner than half the lead-in a sync follows (<paramref name="leadIn"/>),
    /// and later than a setting that locks late on one sync starts (<see cref="LateSyncSeconds"/>). A copy read whole,
    /// or with its length misread short, is followed by the whole lead-in of the next copy; a false mark in that lead-in
    /// and the lead-in's run read after it as an empty block's header end inside it. Such a place is no block, whatever
    /// its neighbours are.
    /// </summary>
    private static bool InLeadInOfNextSync(List<(BlockCandidate Candidate, string Key)> keyed, double[] starts, List<int> place, double? leadIn)
    {
        if (leadIn is not { } lead)
        {
            return false;
        }

        double start = keyed[place[0]].Candidate.StartSeconds;
        double end = double.NegativeInfinity;
        foreach (int i in place)
        {
            end = Math.Max(end, keyed[i].Candidate.EndSeconds);
        }

        int after = LowerBound(starts.Length, i => starts[i] >= end);
        if (after >= starts.Length || starts[after] - end >= 0.5 * lead || starts[after] - start <= LateSyncSeconds)
        {
            return false;
        }

        // The sync read next offers bytes: some reading from it does.
        for (int i = after; i < starts.Length && starts[i] - starts[after] <= SyncSeconds; i++)
        {
            if (ClaimsBytes(keyed[i].Candidate))
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>
    /// Whether the place lies in the gap between two readings that clean readings vouch for (keyed before any place
    /// was): the last reading to end before it and the first to start after it. Where its neighbours are not vouched
    /// for (a capture no setting suits), the place may be a block that only one setting read, however garbled.
    /// Both neighbours are found by binary search: <paramref name="starts"/> holds the readings' starts in their order
    /// (ascending), <paramref name="byEnd"/> the readings' indices by end, and among equal ends the first reading last.
    /// </summary>
    private static bool BetweenVouchedBlocks(
        List<(BlockCandidate Candidate, string Key)> keyed, bool[] vouched, double[] starts, int[] byEnd, List<int> place, bool atStartToo)
    {
        double start = keyed[place[0]].Candidate.StartSeconds;
        double end = double.NegativeInfinity;
        foreach (int i in place)
        {
            end = Math.Max(end, keyed[i].Candidate.EndSeconds);
        }

        // The first reading to start at or after the place's end.
        int after = LowerBound(starts.Length, i => starts[i] >= end);
        if (after >= starts.Length)
        {
            return false;
        }

        // The reading that ends last at or before the place's start (the first such in order of start).
        int firstEndingLater = LowerBound(byEnd.Length, i => keyed[byEnd[i]].Candidate.EndSeconds > start);
        if (firstEndingLater == 0)
        {
            // Nothing read before it: the capture's start bounds it, where the caller allows it.
            return atStartToo && vouched[after];
        }

        int before = byEnd[firstEndingLater - 1];
        return vouched[before] && vouched[after];
    }

    /// <summary>
    /// The readings in order of start, for finding those near one reading without a scan from the first. Most readings
    /// are about a block long; a reading longer than <see cref="LongBound"/> (a misread length that ran on) is kept in a
    /// short list of its own and offered to every look-up, so a look-up reads only the readings that start within the
    /// bound of where it asks, and the long ones.
    /// </summary>
    private sealed class ReadingIndex
    {
        private readonly double[] _starts;
        private readonly List<int> _long = [];

        public ReadingIndex(List<(BlockCandidate Candidate, string Key)> keyed)
        {
            _starts = new double[keyed.Count];
            var lengths = new double[keyed.Count];
            for (int i = 0; i < keyed.Count; i++)
            {
                _starts[i] = keyed[i].Candidate.StartSeconds;
                lengths[i] = keyed[i].Candidate.EndSeconds - keyed[i].Candidate.StartSeconds;
            }

            // Twice the length that nine readings in ten stay within, and a second at least: run-ons are far fewer.
            Array.Sort(lengths);
            LongBound = Math.Max(1.0, lengths.Length == 0 ? 0 : 2 * lengths[(int)(0.9 * (lengths.Length - 1))]);
            for (int i = 0; i < keyed.Count; i++)
            {
                if (keyed[i].Candidate.EndSeconds - keyed[i].Candidate.StartSeconds > LongBound)
                {
                    _long.Add(i);
                }
            }
        }

        /// <summary>No reading outside the long list is longer than this (seconds).</summary>
        public double LongBound { get; }

        /// <summary>
        /// Into <paramref name="near"/> (cleared first), in ascending order: every reading before <paramref name="before"/>
        /// that starts at or after <paramref name="earliest"/> or is a long one.
        /// </summary>
        public void Near(int before, double earliest, List<int> near)
        {
            near.Clear();
            int from = LowerBound(before, i => _starts[i] >= earliest);
            foreach (int i in _long)
            {
                if (i >= from || i >= before)
                {
                    break;
                }

                near.Add(i);
            }

            for (int i = from; i < before; i++)
            {
                near.Add(i);
            }
        }
    }

    /// <summary>The first index in [0, count) at which <paramref name="atOrPast"/> holds, for a predicate false and then true.</summary>
    private static int LowerBound(int count, Func<int, bool> atOrPast)
    {
        int lo = 0, hi = count;
        while (lo < hi)
        {
            int mid = lo + ((hi - lo) / 2);
            if (atOrPast(mid))
            {
                hi = mid;
            }
            else
            {
                lo = mid + 1;
            }
        }

        return lo;
    }

    /// <summary>
    /// Whether reading <paramref name="index"/>'s header agrees over at least half the bytes both have with the header
    /// of a reading of another place within two block lengths of it (with <paramref name="onlyClaims"/>, of a reading
    /// that offers bytes: lead-in runs read as headers agree with each other in their zeros, and vouch for nothing). The readings before it come from the index (only
    /// those near enough, and the few long ones); after it, the scan stops at the first reading out of reach.
    /// </summary>
    private static bool ResemblesANeighbour(List<(BlockCandidate Candidate, string Key)> keyed, ReadingIndex readings, List<int> near, int index, int[] placeOf, bool onlyClaims)
    {
        var c = keyed[index].Candidate;
        double length = Math.Max(c.EndSeconds - c.StartSeconds, 0.1);

        // A reading before this one is in reach when its end is no more than twice the longer length (and half a
        // second) before this start; one no longer than the index's long bound starts at most that bound before its end.
        double bound = readings.LongBound;
        readings.Near(index, c.StartSeconds - bound - (2 * Math.Max(length, bound)) - 0.5, near);
        foreach (int i in near)
        {
            if ((!onlyClaims || ClaimsBytes(keyed[i].Candidate)) && Resembles(c, keyed[i].Candidate, length, index, i, placeOf) is true)
            {
                return true;
            }
        }

        for (int i = index; i < keyed.Count; i++)
        {
            switch (onlyClaims && !ClaimsBytes(keyed[i].Candidate) ? false : Resembles(c, keyed[i].Candidate, length, index, i, placeOf))
            {
                case true: return true;
                case null: return false;
            }
        }

        return false;
    }

    /// <summary>Whether a reading offers bytes as a block's: clean, or with a payload read (a lead-in read as an empty block's header does not).</summary>
    private static bool ClaimsBytes(BlockCandidate c) => c.Status == BlockStatus.Clean || !c.Payload.IsEmpty;

    /// <summary>Whether <paramref name="other"/>'s header agrees with <paramref name="c"/>'s as <see cref="ResemblesANeighbour"/> asks; null once <paramref name="other"/> starts out of reach after it.</summary>
    private static bool? Resembles(BlockCandidate c, BlockCandidate other, double length, int index, int i, int[] placeOf)
    {
        double reach = 2 * Math.Max(length, other.EndSeconds - other.StartSeconds) + 0.5;
        if (other.StartSeconds > c.EndSeconds + reach)
        {
            return null;
        }

        if (other.EndSeconds < c.StartSeconds - reach || (placeOf[i] >= 0 && placeOf[i] == placeOf[index]))
        {
            return false;
        }

        return HeadersAgreeMostly(c, other);
    }

    /// <summary>
    /// The key of the best-supported reading that lies on the place's first reading: an anchored reading's key, or
    /// another place's. A reading's start is where its sync was read; its end is proven only by a checksum that holds
    /// (a misread length runs on over the blocks after it, a loss of signal stops short). So a clean reading claims
    /// the readings that overlap most of it or most of which it overlaps, as other places do; a failed reading keyed by
    /// a clean copy nearby claims only the readings that start at its sync: the same copy of that block, however its
    /// header was garbled.
    /// </summary>
    private static string? OverlappedKey(
        List<(BlockCandidate Candidate, string Key)> keyed, ReadingIndex readings, List<int> near, int place, int[] placeOf, string[] placeKey, int[] placeSupport,
        int first, BlockCandidate? alike, out bool anchored)
    {
        var c = keyed[first].Candidate;
        string? best = null;
        int bestSupport = 1;

        // The readings that start before this one ends and may end after it starts, in order of start.
        int before = LowerBound(keyed.Count, i => keyed[i].Candidate.StartSeconds >= c.EndSeconds);
        readings.Near(before, c.StartSeconds - readings.LongBound, near);
        foreach (int i in near)
        {
            var other = keyed[i].Candidate;
            if (placeOf[i] == place)
            {
                continue;
            }

            string key = keyed[i].Key;
            int otherSupport;
            if (placeOf[i] >= 0)
            {
                key = placeKey[placeOf[i]];
                otherSupport = placeSupport[placeOf[i]];
            }
            else if (other.Status == BlockStatus.Clean)
            {
                if (!MayClaim(other, c, alike))
                {
                    continue;
                }

                otherSupport = int.MaxValue;
            }
            else if (SameSync(c, other))
            {
                // A failed reading keyed by a clean copy nearby, read from this place's sync: it outweighs any place, but
                // claims less than a clean one.
                otherSupport = int.MaxValue - 1;
            }
            else
            {
                // The same failed reading from another sync: where it ends is its length field's word, not the tape's.
                continue;
            }

            if (otherSupport > bestSupport && MostlyOverlaps(c, other))
            {
                best = key;
                bestSupport = otherSupport;
            }
        }

        anchored = bestSupport >= int.MaxValue - 1;
        return best;
    }

    /// <summary>Two readings of one block by different settings start at the same sync: within a quarter of the shorter, and 50 ms.</summary>
    private static bool SameSync(BlockCandidate a, BlockCandidate b)
    {
        double shorter = Math.Min(a.EndSeconds - a.StartSeconds, b.EndSeconds - b.StartSeconds);
        return Math.Abs(a.StartSeconds - b.StartSeconds) <= Math.Min(0.05, 0.25 * Math.Max(shorter, 0));
    }

    /// <summary>
    /// Whether two clean readings are of two blocks: their bytes (header and payload) differ and they share no tape. Copies
    /// of a block agree byte for byte (a header keeps the first copy's sync whatever copy was read), and readings of
    /// one copy by several settings overlap.
    /// </summary>
    private static bool OtherBlock(BlockCandidate a, BlockCandidate b) =>
        !Overlaps(a.StartSeconds, a.EndSeconds, b.StartSeconds, b.EndSeconds)
        && !(a.Header.AsSpan().SequenceEqual(b.Header.AsSpan()) && a.Payload.AsSpan().SequenceEqual(b.Payload.AsSpan()));

    /// <summary>
    /// Whether the clean reading <paramref name="clean"/> may claim <paramref name="c"/>, a failed reading that overlaps
    /// it. It may where <paramref name="c"/> was read from its sync or from within it (a resync after a loss of signal).
    /// A reading from an earlier sync that runs over it does so on a length nobody proved; where two settings read the
    /// header at that sync alike (<paramref name="alike"/>) as another block of the clean block's file (a header that
    /// agrees with the clean one over half its bytes or more, not in all: the block before, or its other copy), that
    /// sync is that block's place, and the reading is of it. A header read alike that resembles no neighbour (payload
    /// read as a header after a resync) vouches for no place, and the reading goes where it overlaps most.
    /// </summary>
    private static bool MayClaim(BlockCandidate clean, BlockCandidate c, BlockCandidate? alike) =>
        SameSync(clean, c) || c.StartSeconds >= clean.StartSeconds || alike is null
        || alike.Identity.Key == clean.Identity.Key || !HeadersAgreeMostly(alike, clean);

    /// <summary>Whether two headers agree over at least half the bytes both have.</summary>
    private static bool HeadersAgreeMostly(BlockCandidate a, BlockCandidate b)
    {
        int shared = Math.Min(a.Header.Length, b.Header.Length);
        int agree = 0;
        for (int i = 0; i < shared; i++)
        {
            agree += a.Header[i] == b.Header[i] ? 1 : 0;
        }

        return shared > 0 && 2 * agree >= shared;
    }

    /// <summary>Whether the two readings overlap over at least half of the shorter one.</summary>
    private static bool MostlyOverlaps(BlockCandidate a, BlockCandidate b)
    {
        double overlap = Math.Min(a.EndSeconds, b.EndSeconds) - Math.Max(a.StartSeconds, b.StartSeconds);
        double shorter = Math.Min(a.EndSeconds - a.StartSeconds, b.EndSeconds - b.StartSeconds);
        return overlap > 0 && overlap >= 0.5 * shorter;
    }

    /// <summary>Per position: a clean candidate of highest confidence, else the most confident of any status.</summary>
    public static List<BlockCandidate> BestPerPosition(IReadOnlyList<BlockCandidate> placed)
    {
        var best = new List<BlockCandidate>();
        foreach (int i in BestIndexPerPosition(placed))
        {
            best.Add(placed[i]);
        }

        return best;
    }

    /// <summary>What <see cref="BestPerPosition"/> chooses, told as indices in <paramref name="placed"/>, in order of position.</summary>
    public static List<int> BestIndexPerPosition(IReadOnlyList<BlockCandidate> placed)
    {
        ArgumentNullException.ThrowIfNull(placed);
        return BestIndexPerPosition(placed, i => placed[i].Position);
    }

    /// <summary>
    /// What <see cref="BestPerPosition"/> chooses among <paramref name="readings"/> placed at <paramref name="positionOf"/>
    /// (of each reading's index), whatever their own <see cref="BlockCandidate.Position"/> says; indices in order of position.
    /// </summary>
    public static List<int> BestIndexPerPosition(IReadOnlyList<BlockCandidate> readings, Func<int, int> positionOf)
    {
        ArgumentNullException.ThrowIfNull(readings);
        ArgumentNullException.ThrowIfNull(positionOf);
        var best = new SortedDictionary<int, int>();
        for (int i = 0; i < readings.Count; i++)
        {
            var c = readings[i];
            int position = positionOf(i);
            if (!best.TryGetValue(position, out int current) || Better(c, readings[current]))
            {
                best[position] = i;
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

    /// <summary>
    /// A trusted candidate (sorted by start) overlapping <paramref name="c"/> in time, by binary search, that may claim
    /// it (<see cref="MayClaim"/>, with <paramref name="alike"/> the header two settings read alike at its sync, if any).
    /// </summary>
    private static BlockCandidate? FindOverlapping(List<BlockCandidate> trusted, BlockCandidate c, BlockCandidate? alike)
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

        // Candidates before lo start before c ends; blocks are short, so only the last few can still overlap it. A
        // misread that ran on past its block's end (a damaged length) overlaps the next block too: it belongs to the
        // block whose sync it starts at, and where it starts at none, to the one it shares the most tape with.
        BlockCandidate? best = null;
        double bestOverlap = double.NegativeInfinity;
        bool bestAtSync = false;
        for (int i = lo - 1; i >= 0 && i >= lo - 64; i--)
        {
            if (Overlaps(trusted[i].StartSeconds, trusted[i].EndSeconds, c.StartSeconds, c.EndSeconds) && MayClaim(trusted[i], c, alike))
            {
                bool atSync = SameSync(trusted[i], c);
                double overlap = Math.Min(trusted[i].EndSeconds, c.EndSeconds) - Math.Max(trusted[i].StartSeconds, c.StartSeconds);
                if ((atSync && !bestAtSync) || (atSync == bestAtSync && overlap > bestOverlap))
                {
                    best = trusted[i];
                    bestOverlap = overlap;
                    bestAtSync = atSync;
                }
            }
        }

        return best;
    }

    /// <summary>
    /// A clean copy of the same block next to a failed candidate: within two block lengths of it on the tape, with a
    /// header that differs from the candidate's in at most two of the bytes both have. Only formats that write each block more than
    /// once have such neighbours; elsewhere the block next door is a different block.
    /// </summary>
    private static BlockCandidate? FindNeighbouringCopy(List<BlockCandidate> trusted, BlockCandidate c, int copies, double? copyGap)
    {
        double length = Math.Max(c.EndSeconds - c.StartSeconds, 0.1);
        // The fewest differing bytes, then the nearest on the tape: a header of sync bytes alone (a countdown every
        // block of a kind repeats) matches every block of that kind, and the copy is the one next to the reading.
        BlockCandidate? best = null;
        int bestDifference = 3;
        double bestGap = double.PositiveInfinity;
        foreach (var t in trusted)
        {
            double reach = 2 * Math.Max(length, t.EndSeconds - t.StartSeconds) + 0.5;
            if (t.StartSeconds > c.EndSeconds + reach)
            {
                break;
            }

            if (t.EndSeconds < c.StartSeconds - reach || c.Header.IsEmpty || !WithinCopies(t, c, copies, copyGap))
            {
                continue;
            }

            // A header cut short is compared over the bytes it has.
            int shared = Math.Min(t.Header.Length, c.Header.Length);
            int difference = 0;
            for (int i = 0; i < shared && difference <= bestDifference; i++)
            {
                if (t.Header[i] != c.Header[i])
                {
                    difference++;
                }
            }

            double gap = Math.Max(t.StartSeconds - c.EndSeconds, c.StartSeconds - t.EndSeconds);
            if (difference < bestDifference || (difference == bestDifference && best is not null && gap < bestGap))
            {
                best = t;
                bestDifference = difference;
                bestGap = gap;
            }
        }

        return best;
    }

    /// <summary>
    /// Whether <paramref name="c"/> starts where a copy of the block that <paramref name="t"/> (clean) read can start:
    /// the format writes each block <paramref name="copies"/> times back to back, so every copy starts within k − 1 copy
    /// spacings of any other, a spacing being the block's length and the gap before the next copy. The gap is the one
    /// this capture shows between clean copies (<see cref="GapBetweenCopies"/>), with a quarter more and a sync's
    /// width for slack; where no two clean copies show it, any reading nearby may be a copy. A reading two spacings
    /// after a clean copy of a block written twice is the next block, however alike its header (the file's name, a
    /// block number one apart).
    /// </summary>
    private static bool WithinCopies(BlockCandidate t, BlockCandidate c, int copies, double? copyGap)
    {
        if (copyGap is not { } gap)
        {
            return true;
        }

        double spacing = (t.EndSeconds - t.StartSeconds) + (1.25 * gap) + SyncSeconds;
        return Math.Abs(c.StartSeconds - t.StartSeconds) <= (Math.Max(1, copies) - 1) * spacing + SyncSeconds;
    }

    /// <summary>
    /// The gap between the end of a copy and the start of the next, as this capture shows it: the median over clean
    /// readings of one identity by one setting that follow each other (the copies of a block; a block number reused by
    /// the next file lies many blocks later and barely moves the median). Null where no setting read two copies clean.
    /// </summary>
    private static double? GapBetweenCopies(List<BlockCandidate> trusted)
    {
        var last = new Dictionary<(int Setting, string Key), BlockCandidate>();
        var gaps = new List<double>();
        foreach (var t in trusted)
        {
            var at = (t.SettingIndex, t.Identity.Key);
            if (last.TryGetValue(at, out var before) && t.StartSeconds > before.EndSeconds)
            {
                gaps.Add(t.StartSeconds - before.EndSeconds);
            }

            last[at] = t;
        }

        if (gaps.Count == 0)
        {
            return null;
        }

        gaps.Sort();
        return gaps[gaps.Count / 2];
    }

    /// <summary>
    /// Where the format writes each block more than once, the readings cut short before their payload whose identity
    /// holds a block number and no file take the identity of a reading that named nothing (their ordinal): such a number
    /// was not read from a field that tells blocks apart (a format of several kinds numbers each kind by its place in the
    /// file, so every such reading of one kind carries the same number, whichever file it is of). Their places and the
    /// copies' timing tell them apart instead, as for readings cut inside their header's first field.
    /// </summary>
    private static IReadOnlyList<BlockCandidate> WithoutUnreadNumbers(IReadOnlyList<BlockCandidate> candidates, int copies)
    {
        if (copies <= 1)
        {
            return candidates;
        }

        List<BlockCandidate>? renamed = null;
        for (int i = 0; i < candidates.Count; i++)
        {
            var c = candidates[i];
            if (c is { Truncated: true, Payload.IsEmpty: true, Identity: { FileName: null, FileId: null, BlockNumber: not null } })
            {
                renamed ??= [.. candidates];
                renamed[i] = c with { Identity = new BlockIdentity(null, null, null, c.Identity.Ordinal) };
            }
        }

        return renamed ?? candidates;
    }

    /// <summary>
    /// Whether two readings name one block alike, byte for byte: an identity's file name shows every byte it cannot print
    /// as '?', so two settings that garble one byte of a name differently show the same name, and vouch for nothing.
    /// </summary>
    private static bool ReadAlike(BlockCandidate a, BlockCandidate b) => AlikeKey(a) == AlikeKey(b);

    /// <summary>
    /// A reading's identity as <see cref="ReadAlike"/> compares it: its key, and where its file name holds a byte shown as
    /// '?', its header's bytes too.
    /// </summary>
    private static string AlikeKey(BlockCandidate c) =>
        c.Identity.FileName is { } name && name.Contains('?', StringComparison.Ordinal) ? $"{c.Identity.Key}/{Convert.ToHexString(c.Header.AsSpan())}" : c.Identity.Key;

    /// <summary>Whether a reading's header was read far enough to give a field of its identity: then it keeps that identity rather than a neighbour's.</summary>
    private static bool NamesItself(BlockCandidate c) => c.Identity.BlockNumber is not null || c.Identity.FileId is not null || c.Identity.FileName is not null;

    /// <summary>
    /// For a reading cut off inside its header (so it has no identity to go by, and no payload to offer): the clean
    /// block nearest to it in time, within two block lengths.
    /// </summary>
    private static BlockCandidate? FindNearest(List<BlockCandidate> trusted, BlockCandidate c, int copies, double? copyGap)
    {
        BlockCandidate? best = null;
        double bestGap = double.PositiveInfinity;
        foreach (var t in trusted)
        {
            double gap = Math.Max(t.StartSeconds - c.EndSeconds, c.StartSeconds - t.EndSeconds);
            double reach = 2 * (t.EndSeconds - t.StartSeconds) + 0.5;
            if (gap <= reach && gap < bestGap && (copies <= 1 || WithinCopies(t, c, copies, copyGap)))
            {
                best = t;
                bestGap = gap;
            }
        }

        return best;
    }

    /// <summary>
    /// Each reading's sync, numbered in order (readings in order of start): readings that start within
    /// <see cref="SyncSeconds"/> of the first of them read one sync, whatever setting read them.
    /// </summary>
    private static int[] Syncs(List<(BlockCandidate Candidate, string Key)> keyed, out int count)
    {
        var syncOf = new int[keyed.Count];
        double first = double.NegativeInfinity;
        count = 0;
        for (int i = 0; i < keyed.Count; i++)
        {
            double start = keyed[i].Candidate.StartSeconds;
            if (start - first > SyncSeconds)
            {
                count++;
                first = start;
            }

            syncOf[i] = count - 1;
        }

        return syncOf;
    }

    private static bool Overlaps(double aStart, double aEnd, double bStart, double bEnd) =>
        aStart < bEnd && bStart < aEnd;
}
