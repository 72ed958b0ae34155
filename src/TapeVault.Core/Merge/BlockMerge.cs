using System.Collections.Immutable;
using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;

namespace TapeVault.Core.Merge;

/// <summary>
/// The merge of a format with block headers: the readings of every pass are grouped into tape positions by identity
/// and by time, and each position is resolved from its valid readings, else by vote and repair, else left missing.
/// </summary>
internal sealed class BlockMerge
{
    /// <summary>Slack when comparing stretches of tape from different passes, in nominal seconds.</summary>
    private const double OverlapSlack = 0.1;

    /// <summary>The error odds given to the bytes of a reading after the point where it was more likely wrong than right.</summary>
    private const float SlippedByteError = 0.3f;

    /// <summary>A voted or repaired block less likely right than this is listed as missing.</summary>
    private const double MinimumRepairConfidence = 0.5;

    private readonly FormatProfile _profile;
    private readonly IReadOnlyList<MergePass> _passes;
    private readonly PassTimeline[] _timelines;
    private readonly MergeOptions _options;
    private readonly IBlockChecksum? _checksum;

    public BlockMerge(FormatProfile profile, IReadOnlyList<MergePass> passes, PassTimeline[] timelines, MergeOptions options)
    {
        _profile = profile;
        _passes = passes;
        _timelines = timelines;
        _options = options;
        _checksum = BlockLayoutCodec.For(profile.Layout).Checksum;
    }

    private BlockLayout Layout => _profile.Layout;

    private bool BridgesOnCellClock => _profile.Family == FormatFamily.Biphase;

    /// <summary>
    /// Anchors for aligning passes: each clean block's bytes at its start, in nominal tape seconds. The bytes, not
    /// only the identity: headers that carry just a block number repeat it in every file.
    /// </summary>
    public static List<(long Feature, double Time)> Anchors(MergePass pass, double speed)
    {
        // One anchor per copy on tape: the settings that read one copy agree on its start; a format that writes each
        // block twice has two anchors per block, told apart by the copy's sync where the copies' syncs differ; where
        // they do not, the pairs of first with first and second with second outvote the crossed ones.
        var anchors = new List<(long Feature, double Time)>();
        foreach (var c in pass.Candidates)
        {
            if (c.Status != BlockStatus.Clean)
            {
                continue;
            }

            // The header keeps the first copy's sync whatever copy was read (BlockCandidate.SyncCopy), so the copy read
            // is part of the feature: a pass that read only one copy of a block clean would otherwise pair it with
            // either copy of the others, and the crossed pair lines it up a block off.
            long feature = StableHash(Convert.ToHexString(c.Header.AsSpan()) + c.PayloadHex + (c.SyncCopy is { } copy ? $"#{copy}" : string.Empty));
            double time = speed * c.StartSeconds;
            if (!anchors.Exists(a => a.Feature == feature && Math.Abs(a.Time - time) < 0.05))
            {
                anchors.Add((feature, time));
            }
        }

        return anchors;
    }

    /// <summary>
    /// The places of a pass for lining it up by the rhythm of its blocks, where it has no anchor in common with the
    /// others: the start of each of its positions (its earliest reading's, where a block's readings start at its sync),
    /// in nominal tape seconds (what is read there may be garbled; where it lies is not).
    /// </summary>
    public static List<double> Places(MergePass pass, double speed) =>
        [.. pass.Candidates.GroupBy(c => c.Position).Select(g => speed * g.Min(c => c.StartSeconds))];

    public List<ImageBlock> Resolve()
    {
        var groups = GroupEntries();
        var odds = Odds(groups);
        var blocks = new List<ImageBlock>(groups.Count);
        foreach (var group in groups)
        {
            if (ResolvePosition(group, odds) is { } block)
            {
                blocks.Add(block);
            }
        }

        // With several block kinds, a voted block is read in the first kind's layout and numbered by kind, so its
        // identity need not be its header's fields: right voted positions of such a format break their proven
        // neighbours' identities far more often than the proven ones break each other's (WeighByNeighbours).
        var filled = FillNumberGaps(blocks);
        return _profile.BlockKinds.Count > 1 ? filled : WeighByNeighbours(filled);
    }

    /// <summary>
    /// A position no check proved is as sure as its readings, whose confidence is how often such readings are right,
    /// header and payload, over many tapes; where it lies says more of its header. Between two proven positions, the
    /// identity of a block that is there fits theirs as the tape's proven identities fit each other: at every
    /// character where the names before and after it agree (a file's name, or the stem of numbered files' names) its
    /// name agrees too, and within one file its block number lies between theirs (or is one of theirs: a second position of a block is no
    /// misread header). A misread header breaks that at the
    /// character it misread. How often a block that is there breaks it anyway is the tape's own share of proven
    /// positions that break their proven neighbours' (with one that does and one that does not added, so that a tape of
    /// few proven positions says little), against at most always for a misread one: by Bayes, the odds of a position
    /// that breaks it are multiplied by that share.
    /// </summary>
    private static List<ImageBlock> WeighByNeighbours(List<ImageBlock> blocks)
    {
        var proven = new List<int>();
        for (int i = 0; i < blocks.Count; i++)
        {
            if (blocks[i].Status == RecoveryStatus.Clean)
            {
                proven.Add(i);
            }
        }

        int between = 0;
        int breaking = 0;
        for (int k = 1; k + 1 < proven.Count; k++)
        {
            between++;
            if (!FitsBetween(blocks[proven[k - 1]], blocks[proven[k]], blocks[proven[k + 1]]))
            {
                breaking++;
            }
        }

        double share = (breaking + 1.0) / (between + 2.0);
        var weighed = new List<ImageBlock>(blocks.Count);
        int before = -1;
        int next = 0;
        for (int i = 0; i < blocks.Count; i++)
        {
            var block = blocks[i];

            // The proven position after this one: the first of the proven indices beyond it, found in one pass over both.
            while (next < proven.Count && proven[next] <= i)
            {
                next++;
            }

            if (block.Status == RecoveryStatus.Clean)
            {
                before = i;
            }
            else if (block.Status != RecoveryStatus.Missing && before >= 0 && next < proven.Count
                && !FitsBetween(blocks[before], block, blocks[proven[next]]))
            {
                double right = block.Confidence * share;
                block = block with { Confidence = right / (right + (1 - block.Confidence)) };
            }

            weighed.Add(block);
        }

        return weighed;
    }

    /// <summary>
    /// Whether a position's identity fits between those of the positions before and after it: its name agrees with
    /// theirs at every character where theirs agree (names padded with spaces, as the field holds them), its file id is
    /// theirs where they share one, and within one file its block number lies between theirs or is one of them. What one of the three
    /// does not carry is not judged.
    /// </summary>
    private static bool FitsBetween(ImageBlock before, ImageBlock block, ImageBlock after)
    {
        if (before.FileName is { } a && block.FileName is { } m && after.FileName is { } z)
        {
            int length = Math.Max(a.Length, Math.Max(m.Length, z.Length));
            for (int i = 0; i < length; i++)
            {
                char x = At(a, i);
                if (x == At(z, i) && At(m, i) != x)
                {
                    return false;
                }
            }
        }

        if (before.FileId is { } id && after.FileId == id && block.FileId is { } own && own != id)
        {
            return false;
        }

        bool oneFile = before.FileName == after.FileName && before.FileId == after.FileId
            && block.FileName == before.FileName && block.FileId == before.FileId;
        return !(oneFile && before.BlockNumber is long first && after.BlockNumber is long last && last > first
            && block.BlockNumber is long n && (n < first || n > last));

        static char At(string name, int i) => i < name.Length ? name[i] : ' ';
    }

    private sealed class Entry(int pass, List<BlockCandidate> readings, double start, double end)
    {
        public int Pass { get; } = pass;

        public List<BlockCandidate> Readings { get; } = readings;

        public double Start { get; } = start;

        public double End { get; } = end;

        /// <summary>The identity of the entry's most confident clean reading, if it has one.</summary>
        public string? TrustedKey { get; init; }

        /// <summary>The header and payload of that reading, in hex.</summary>
        public string? TrustedContent { get; init; }

        /// <summary>The identity most of its readings carry (which may be damaged when none is clean).</summary>
        public required BlockIdentity Identity { get; init; }

        /// <summary>The key of <see cref="Identity"/>.</summary>
        public string Key => Identity.Key;

        /// <summary>How many of the entry's readings carry <see cref="Identity"/> (a clean one counts for all).</summary>
        public required int Support { get; init; }

        /// <summary>
        /// The block numbers the entry names: its clean reading's; with none, its identity's and each number that as
        /// many of its readings carry as any other (a tie names each); empty where no reading carries one.
        /// </summary>
        public required IReadOnlySet<long> Numbers { get; init; }
    }

    private sealed class Group(Entry first)
    {
        public List<Entry> Entries { get; } = [first];

        public double Start { get; set; } = first.Start;

        public double End { get; set; } = first.End;

        public string? TrustedKey { get; } = first.TrustedKey;

        /// <summary>The identity key of the group's first entry: its clean reading's, or for a group of entries with none, its strongest entry's.</summary>
        public string Key { get; } = first.TrustedKey ?? first.Key;

        public bool Has(int pass) => Entries.Exists(e => e.Pass == pass);

        public HashSet<string> Contents { get; } = first.TrustedContent is null ? [] : [first.TrustedContent];

        public void Add(Entry entry)
        {
            Entries.Add(entry);
            if (entry.TrustedContent is not null)
            {
                Contents.Add(entry.TrustedContent);
            }

            Start = Math.Min(Start, entry.Start);
            End = Math.Max(End, entry.End);
        }

        public double Overlap(Entry e) => Overlapping(Start, End, e);

        public bool Shares(Entry e) => SharesStretch(Start, End, e);
    }

    /// <summary>How far an entry's stretch of tape overlaps the stretch from start to end (negative: the gap between them).</summary>
    private static double Overlapping(double start, double end, Entry e) => Math.Min(end, e.End) - Math.Max(start, e.Start);

    /// <summary>
    /// Whether the entry shares most of the stretch of tape from start to end, as readings of one block in different
    /// passes do: more than a quarter of the shorter stretch (the gap to the next block can be shorter than the slack
    /// that same bytes are allowed, and a short block's stretch shorter than that gap).
    /// </summary>
    private static bool SharesStretch(double start, double end, Entry e) => Overlapping(start, end, e) > 0.25 * Math.Min(e.End - e.Start, end - start);

    /// <summary>
    /// Positions across passes. Entries with a clean reading go first: they join a group of the same identity whose
    /// stretch of tape they overlap. The rest go strongest first (see <see cref="Best"/>) and join the group they overlap
    /// most (an equal identity counting for more), or start a group of their own, which will be resolved by vote or
    /// left missing.
    /// </summary>
    private List<Group> GroupEntries()
    {
        var entries = new List<Entry>();
        for (int p = 0; p < _passes.Count; p++)
        {
            var timeline = _timelines[p];
            foreach (var position in _passes[p].Candidates.GroupBy(c => c.Position))
            {
                var readings = position.ToList();
                var trusted = readings.Where(c => c.Status == BlockStatus.Clean).MaxBy(c => c.Confidence);
                // With no clean reading, the identity most of its readings carry; of those alike in number, one read to
                // the length most readings have (a header whose length field was misread runs on over the next blocks),
                // then the one whose header's bytes the reading was surest of: never merely the first (a misframed
                // reading carries a header no other setting read).
                int usualLength = readings.GroupBy(c => c.Payload.Length).OrderByDescending(g => g.Count()).ThenBy(g => g.Key).First().Key;
                var carried = readings.Where(c => !c.Header.IsEmpty).GroupBy(c => c.Identity.Key)
                    .OrderByDescending(g => g.Count())
                    .ThenByDescending(g => g.Any(c => c.Payload.Length == usualLength))
                    .ThenBy(g => g.Min(HeaderError))
                    .ThenBy(g => g.Key, StringComparer.Ordinal)
                    .FirstOrDefault();
                var identity = trusted?.Identity ?? carried?.First().Identity ?? readings[0].Identity;
                // The position's stretch of tape is what its clean readings and those that agree with its identity
                // prove: a reading with another header (a stray one that joined the stretch it follows, a misread that
                // ran on) would stretch it over the next block and draw other passes' readings of that block in.
                // Nor does a failed reading that starts after every clean reading of the position has ended: a block's
                // readings start at its sync, so it is a reading of tape further on (the next block, where headers
                // that carry only a block number give every file's block the same identity), which the pass's
                // positioner put here.
                var span = ProvenSpan.Empty;
                string agreed = identity.Key;
                double cleanEnd = readings.Where(c => c.Status == BlockStatus.Clean).Select(c => c.EndSeconds).DefaultIfEmpty(double.PositiveInfinity).Max();
                foreach (var c in readings)
                {
                    if (c.Status == BlockStatus.Clean || (c.Identity.Key == agreed && c.StartSeconds < cleanEnd))
                    {
                        span = span.With(c);
                    }
                }

                entries.Add(new Entry(p, readings, timeline.Map(span.Start), timeline.Map(span.End))
                {
                    TrustedKey = trusted?.Identity.Key,
                    TrustedContent = trusted is null ? null : Convert.ToHexString(trusted.Header.AsSpan()) + trusted.PayloadHex,
                    Identity = identity,
                    Support = trusted is not null ? readings.Count : carried?.Count() ?? 0,
                    Numbers = trusted is not null
                        ? trusted.Identity.BlockNumber is long n ? new HashSet<long> { n } : []
                        : [.. LeadingNumbers(readings), .. identity.BlockNumber is long m ? [m] : Array.Empty<long>()],
                });
            }
        }

        var groups = new List<Group>();
        foreach (var entry in entries.Where(e => e.TrustedKey is not null).OrderBy(e => e.Start))
        {
            // The same identity over the same stretch of tape is the same position. Close by but apart, it is the
            // same position only with the same bytes (the copies of a block written twice, which one pass may have
            // placed apart): headers that carry only a block number repeat it in the next file, with other bytes.
            var match = groups.LastOrDefault(g => g.TrustedKey == entry.TrustedKey);
            if (match is not null && !SamePosition(match, entry))
            {
                match = null;
            }

            if (match is null)
            {
                // A block of a later kind read without the block that names it carries no file of its own: over the
                // same stretch of tape with the same bytes, it is the named readings' position (and the reverse).
                match = groups.LastOrDefault(g => g.Contents.Contains(entry.TrustedContent!) && g.Overlap(entry) > -OverlapSlack
                    && (Unnamed(entry.TrustedKey!) || Unnamed(g.TrustedKey!)));
            }

            if (match is null)
            {
                groups.Add(new Group(entry));
            }
            else
            {
                match.Add(entry);
            }
        }

        // Then the entries with no clean reading, strongest evidence first: those whose identity most of their readings
        // carry (a reading garbled alone names a block no other reading does), then in tape order. Each joins a group
        // judged by the stretch of tape the group had when it was made (its clean readings', or its first entry's), so
        // what an entry joins depends on its own readings and the groups' evidence, not on the entries that joined
        // before it; what joins none is a group of its own.
        var stretches = groups.Select(g => (Group: g, g.Start, g.End)).ToList();
        foreach (var entry in entries.Where(e => e.TrustedKey is null).OrderByDescending(e => e.Support).ThenBy(e => e.Start).ThenBy(e => e.Pass))
        {
            if (Best(stretches, entry) is { } g)
            {
                g.Add(entry);
            }
            else
            {
                var group = new Group(entry);
                groups.Add(group);
                stretches.Add((group, entry.Start, entry.End));
            }
        }

        // Tape order by the median start of a group's entries: one entry that spans two blocks (a pass whose
        // readings ran together) must not pull its group ahead of the block before it.
        return [.. groups.OrderBy(g => Median(g.Entries.Select(e => e.Start)))];
    }

    /// <summary>
    /// The group an entry with no clean reading joins, of <paramref name="groups"/> judged by the stretch of tape each
    /// had before such entries joined: readings of one block in different passes share most of its stretch; the gap to
    /// the next block can be shorter than the slack that identities are allowed. A pass whose timeline drifts lies over
    /// the next block: an entry whose readings mostly carry another block number is that block, not this one. Of
    /// those it may join, the one it overlaps most, an equal identity counting for more; null for none.
    /// </summary>
    private Group? Best(List<(Group Group, double Start, double End)> groups, Entry entry)
    {
        Group? best = null;
        double bestScore = double.NegativeInfinity;
        foreach (var (g, start, end) in groups)
        {
            if (!SharesStretch(start, end, entry) || !SameNumber(g.Entries[0], entry))
            {
                continue;
            }

            double score = Overlapping(start, end, entry) + (g.Key == entry.Key ? 10 : 0);
            if (score > bestScore)
            {
                best = g;
                bestScore = score;
            }
        }

        // A format that writes each block more than once: a reading of one copy may lie beside a position
        // whose readings are of the other copy; it joins it when it carries the same identity, and only an
        // identity that names a file tells which block it is: one without (a header read without its name, a
        // block of a later kind read without the block that names it) is every file's block of that kind, and
        // would chain the neighbouring files' blocks into one position.
        if (best is null && Layout.Copies > 1 && NamesFile(entry.Identity))
        {
            double reach = (entry.End - entry.Start) + 0.5;
            double most = -reach;
            foreach (var (g, start, end) in groups)
            {
                double overlap = Overlapping(start, end, entry);
                if (g.Key == entry.Key && overlap > most)
                {
                    best = g;
                    most = overlap;
                }
            }
        }

        return best;
    }

    /// <summary>
    /// Whether a trusted entry is the position of a group with its identity. With the same bytes: over the same stretch
    /// of tape give or take <see cref="OverlapSlack"/>, or a little apart (the copies of a block written twice, which one
    /// pass may have placed apart). With other bytes, only over a shared stretch: the two cannot both be right, and
    /// headers that carry only a block number repeat it in every file, so the next file's block (a block gap later,
    /// which the slack can reach) is another position, not a conflicting reading of this one.
    /// </summary>
    private static bool SamePosition(Group group, Entry entry)
    {
        if (!group.Contents.Contains(entry.TrustedContent!))
        {
            return group.Shares(entry);
        }

        double reach = Math.Max(1.0, 1.5 * (entry.End - entry.Start));
        return group.Overlap(entry) > -OverlapSlack || entry.Start <= group.End + reach;
    }

    /// <summary>The block numbers that as many readings with a header carry as any other number does (empty where none carries one).</summary>
    private static HashSet<long> LeadingNumbers(List<BlockCandidate> readings)
    {
        var counts = readings.Where(c => !c.Header.IsEmpty && c.Identity.BlockNumber is not null)
            .GroupBy(c => c.Identity.BlockNumber!.Value)
            .Select(g => (Number: g.Key, Count: g.Count()))
            .ToList();
        int most = counts.Count == 0 ? 0 : counts.Max(c => c.Count);
        return [.. counts.Where(c => c.Count == most).Select(c => c.Number)];
    }

    /// <summary>A reading's mean header byte error odds (1 with none kept).</summary>
    private static double HeaderError(BlockCandidate c) => c.HeaderErrorOdds.IsEmpty ? 1 : c.HeaderErrorOdds.Average();

    /// <summary>Whether an identity names its file (by name or id): one that does not is alike in every file.</summary>
    private static bool NamesFile(BlockIdentity identity) => identity.FileName is not null || identity.FileId is not null;

    /// <summary>
    /// Whether two entries may be one block by their block numbers: not when each names numbers (<see cref="Entry.Numbers"/>)
    /// and none is named by both.
    /// </summary>
    private static bool SameNumber(Entry a, Entry b) => a.Numbers.Count == 0 || b.Numbers.Count == 0 || a.Numbers.Overlaps(b.Numbers);

    /// <summary>An identity key with neither file name nor file id (a block of a later kind read without its header).</summary>
    private static bool Unnamed(string key) => key.StartsWith(':');

    /// <summary>
    /// How the passes read this tape's blocks, as the tape shows it. <paramref name="ReadsClean"/>: per pass, the chance
    /// that it reads a block clean, of the positions some pass read clean the share that this pass read clean too (with
    /// one position read and one missed added, so that a tape of few positions says little either way).
    /// <paramref name="MissedWithAnother"/>: the chance that a pass misses a block that another pass missed, of the
    /// positions some pass read clean, over every pair of a pass that missed one and another pass, starting from
    /// <see cref="SharedMissesBefore"/> (a tape whose passes missed few blocks says little of how often they miss one
    /// together, and none seen in a pair or two is no sign that they never do).
    /// </summary>
    private sealed record PassOdds(double[] ReadsClean, double MissedWithAnother);

    /// <summary>
    /// The shared misses <see cref="PassOdds.MissedWithAnother"/> starts from before a tape shows its own: one in four
    /// pairs (<see cref="PairsBefore"/>). Over the trust benchmark's saved readings of tuning seeds (12000, 15000 and
    /// 16000 onwards: the blocks written that some pass read clean, three passes a tape), a pass missed a block another
    /// pass missed in 0.29 of the pairs for one-cycle-bits, 0.37 for bench-pulse-blocks, 0.36 for three-class-pairs and
    /// 0.15 for orrin-80; a quarter lies below the formats of weak checks, whose unproven positions this weighs.
    /// </summary>
    private const double SharedMissesBefore = 1;

    /// <summary>The pairs <see cref="SharedMissesBefore"/> is worth.</summary>
    private const double PairsBefore = 4;

    /// <summary>The passes' odds on this tape (<see cref="PassOdds"/>).</summary>
    private PassOdds Odds(List<Group> groups)
    {
        var hits = new int[_passes.Count];
        int tries = 0;
        int pairs = 0;
        int both = 0;
        foreach (var group in groups)
        {
            var clean = group.Entries.Where(e => e.Readings.Exists(c => c.Status == BlockStatus.Clean)).Select(e => e.Pass).ToHashSet();
            if (clean.Count == 0)
            {
                continue;
            }

            tries++;
            foreach (int pass in clean)
            {
                hits[pass]++;
            }

            // Each pass that missed this proven position, paired with every other pass: both missed it where the
            // tape's own damage, which every capture shares, made them.
            int missed = _passes.Count - clean.Count;
            pairs += missed * (_passes.Count - 1);
            both += missed * (missed - 1);
        }

        return new PassOdds([.. hits.Select(h => (h + 1.0) / (tries + 2.0))], (both + SharedMissesBefore) / (pairs + PairsBefore));
    }

    /// <summary>
    /// The chance that a content no two captures proved is right, given the other passes, none of which read it with a
    /// check that holds. Its witnesses' confidence is the rate at which such readings are right over all readings, most
    /// of them of positions that another capture then proved; a block that is there is read by most passes, a wrong or
    /// phantom one by none, so each pass that missed the content weighs against it by Bayes, at the odds that it misses
    /// a block that is there. The witnesses did not read it clean either: where the tape's own damage made them miss, it
    /// makes the others miss too, so a pass misses such a block at least as often as it missed, on this tape, the blocks
    /// another pass missed (<see cref="PassOdds.MissedWithAnother"/>), not only at its share of all blocks.
    /// </summary>
    private static double Unconfirmed(double confidence, IEnumerable<int> witnessPasses, PassOdds odds)
    {
        var witnesses = witnessPasses.ToHashSet();
        double logMissed = 0;
        for (int pass = 0; pass < odds.ReadsClean.Length; pass++)
        {
            if (!witnesses.Contains(pass))
            {
                logMissed += Math.Log(Math.Max(1 - odds.ReadsClean[pass], odds.MissedWithAnother));
            }
        }

        double right = Math.Clamp(confidence, 0, 1) * Math.Exp(logMissed);
        double wrong = 1 - Math.Clamp(confidence, 0, 1);
        return right + wrong <= 0 ? 0 : right / (right + wrong);
    }

    /// <summary>
    /// Every reading whose weak check held unproven, at its place: whether it was read by one setting only (<see
    /// cref="ReadByOneSettingOnly"/>) and whether a check proved the place. What <see cref="AloneShares"/> is counted from.
    /// </summary>
    public List<WeakReading> WeakReadings()
    {
        var weak = new List<WeakReading>();
        foreach (var group in GroupEntries())
        {
            var readings = Readings(group);
            bool proven = Proven(readings).Count > 0;
            foreach (var r in readings.Where(r => IsOnlyUncorroborated(r.Candidate)))
            {
                weak.Add(new WeakReading(StrengthOf(_checksum), r.Candidate.Header, r.Candidate.Payload, ReadByOneSettingOnly(r, readings), proven));
            }
        }

        return weak;
    }

    /// <summary>The readings of every pass at one position, each with its pass.</summary>
    private static List<(BlockCandidate Candidate, int Pass)> Readings(Group group)
    {
        var readings = new List<(BlockCandidate Candidate, int Pass)>();
        foreach (var e in group.Entries)
        {
            foreach (var c in e.Readings)
            {
                readings.Add((c, e.Pass));
            }
        }

        return readings;
    }

    /// <summary>
    /// The readings a check proves: the clean ones; where there are none, those whose weak check holds and that two
    /// captures read alike (their damage is independent, so both passing the check with the same wrong bytes is far
    /// beyond its false-match odds).
    /// </summary>
    private List<(BlockCandidate Candidate, int Pass)> Proven(List<(BlockCandidate Candidate, int Pass)> readings)
    {
        var valid = readings.Where(r => r.Candidate.Status == BlockStatus.Clean).ToList();
        if (valid.Count == 0)
        {
            valid = readings
                .Where(r => IsOnlyUncorroborated(r.Candidate))
                .GroupBy(r => Convert.ToHexString(r.Candidate.Header.AsSpan()) + ":" + r.Candidate.PayloadHex)
                .Where(g => g.Select(r => _passes[r.Pass].Capture.CaptureSha256).Distinct(StringComparer.Ordinal).Count() >= 2)
                .SelectMany(g => g)
                .ToList();
        }

        return valid;
    }

    private ImageBlock? ResolvePosition(Group group, PassOdds odds)
    {
        var readings = Readings(group);
        var valid = Proven(readings);
        if (valid.Count > 0)
        {
            return ResolveClean(valid, RecoveryStatus.Clean);
        }

        // Nothing proven and no vote that holds: a reading whose weak check holds is still the likeliest content, kept
        // as voted at its own confidence rather than listed missing.
        var voted = ResolveByVote(readings, odds);
        var weak = readings.Where(r => IsOnlyUncorroborated(r.Candidate)).ToList();
        if (voted is { Status: not RecoveryStatus.Missing } || weak.Count == 0)
        {
            return voted;
        }

        var kept = ResolveClean(weak, RecoveryStatus.Voted);
        var witnesses = weak.Where(r => SameBytes(r.Candidate, kept.Header, kept.Payload)).ToList();
        double confidence = witnesses.Count == 1 && ReadByOneSettingOnly(witnesses[0], readings) ? AloneAmongSettings(kept.Confidence) : kept.Confidence;
        return kept with { Confidence = Unconfirmed(confidence, witnesses.Select(r => r.Pass), odds) };
    }

    /// <summary>
    /// Whether <paramref name="reading"/> was read by one detector setting only: no other reading of its place has its
    /// bytes, and another setting of its capture read the place. The settings of one capture saw one signal, so their
    /// agreement proves nothing; a reading no other setting could repeat from that signal is one whose decisions a
    /// small change in the detector turns. Where no other setting of the capture read the place, nothing is known.
    /// </summary>
    private bool ReadByOneSettingOnly((BlockCandidate Candidate, int Pass) reading, List<(BlockCandidate Candidate, int Pass)> readings)
    {
        string capture = _passes[reading.Pass].Capture.CaptureSha256;
        bool othersRead = false;
        foreach (var r in readings)
        {
            if (r.Pass == reading.Pass && ReferenceEquals(r.Candidate, reading.Candidate))
            {
                continue;
            }

            if (SameBytes(r.Candidate, reading.Candidate.Header, reading.Candidate.Payload))
            {
                return false;
            }

            othersRead |= string.Equals(_passes[r.Pass].Capture.CaptureSha256, capture, StringComparison.Ordinal);
        }

        return othersRead;
    }

    /// <summary>
    /// P(a weak reading right | it was read by one setting only, <see cref="ReadByOneSettingOnly"/>), by Bayes: its
    /// odds multiplied by the share of right weak readings of this check's strength that were read so over the share of
    /// wrong ones (<see cref="AloneShares"/>).
    /// </summary>
    private double AloneAmongSettings(double confidence)
    {
        var (right, wrong) = AloneShares(StrengthOf(_checksum));
        double c = Math.Clamp(confidence, 0, 1);
        double r = c * right;
        double w = (1 - c) * wrong;
        return r + w <= 0 ? 0 : r / (r + w);
    }

    /// <summary>
    /// The strength of a block check, by which a weak reading's shares are counted: weak where its false-match odds
    /// make a holding check prove a block only beside decisions that vouch for it (<see cref="BlockScorer.WeakCheckFalseMatch"/>:
    /// an additive sum or an xor), else strong (a CRC, whose readings are weak only across a framing error).
    /// </summary>
    private static CheckStrength StrengthOf(IBlockChecksum? checksum) =>
        checksum is null ? CheckStrength.None : checksum.FalseMatchProbability > BlockScorer.WeakCheckFalseMatch ? CheckStrength.Weak : CheckStrength.Strong;

    /// <summary>
    /// Of the weak readings of a check's strength that were right, and of those that were wrong, the shares read by one
    /// setting only, each with one case of either added (Laplace's rule: few wrong readings say little, none nothing).
    /// The right ones are counted where no check proved the place, the readings this weighs: where one did, the signal
    /// was good enough for most settings to read it alike, and right readings stand alone far less often there. The
    /// wrong ones are counted at every place: a weak check holds over a misread only by a chance cancellation that one
    /// setting's decisions make, which the others, reading the same signal, do not repeat wherever the place lies.
    /// Counted by <c>merge-replay --candidates DIR --weak-shares</c> on the trust benchmark's saved readings of tuning
    /// seeds 10000–10031 and 11000–11016 (one-cycle-bits, a 16-bit sum; three-class-pairs, an xor; orrin-80, a CRC):
    /// weak checks, 5 of the 52 right readings at unproven places and all 5 wrong ones; the sum's and the xor's apart
    /// (3 of 14 and 4 of 4; 2 of 38 and 1 of 1) are too few to tell them apart. Strong checks: no such reading, and the
    /// odds stand.
    /// </summary>
    private static (double Right, double Wrong) AloneShares(CheckStrength checkStrength) => checkStrength switch
    {
        CheckStrength.Weak => (Laplace(5, 52), Laplace(5, 5)),
        _ => (Laplace(0, 0), Laplace(0, 0)),
    };

    /// <summary>A share of <paramref name="count"/> in <paramref name="of"/>, with one case of either added.</summary>
    private static double Laplace(int count, int of) => (count + 1.0) / (of + 2.0);

    /// <summary>Whether <paramref name="reading"/> read these header and payload bytes.</summary>
    private static bool SameBytes(BlockCandidate reading, ImmutableArray<byte> header, ImmutableArray<byte> payload) =>
        reading.Header.AsSpan().SequenceEqual(header.AsSpan()) && reading.Payload.AsSpan().SequenceEqual(payload.AsSpan());

    /// <summary>A reading whose weak check holds and that nothing but a want of corroboration keeps from being clean.</summary>
    private static bool IsOnlyUncorroborated(BlockCandidate c) =>
        c.Status == BlockStatus.Failed
        && c.Doubts.HasFlag(BlockDoubts.Uncorroborated)
        && (c.Doubts & ~(BlockDoubts.Uncorroborated | BlockDoubts.FramingErrors)) == 0;

    /// <summary>
    /// Valid readings grouped by their bytes. Each capture's most confident reading of a content is one independent
    /// witness. Witnesses that agree byte for byte are all right or all wrong; they are all wrong only if each is, so
    /// a content's chance is 1 − Π(1 − c) over its witnesses (agreement raises it, never lowers it). Contents that
    /// differ cannot both be right: each content's chance is then weighed against the others' being wrong. The
    /// winner has the most captures, then the highest probability.
    /// </summary>
    private ImageBlock ResolveClean(List<(BlockCandidate Candidate, int Pass)> valid, RecoveryStatus status)
    {
        var contents = valid
            .GroupBy(r => Convert.ToHexString(r.Candidate.Header.AsSpan()) + ":" + r.Candidate.PayloadHex)
            .Select(g =>
            {
                var witnesses = CaptureWitnesses(g);
                return (Witnesses: witnesses, Chance: AnyRight(witnesses.Select(w => w.Candidate.Confidence)));
            })
            .OrderByDescending(c => c.Witnesses.Count)
            .ThenBy(c => c.Chance.LogWrong)
            .ToList();

        var winner = contents[0];
        double confidence = OneOf([.. contents.Select(c => c.Chance)], 0);

        var top = winner.Witnesses[0].Candidate;

        // A witness read without the block that names it carries no file: the position takes a named witness's identity.
        var identity = winner.Witnesses.Select(w => (BlockIdentity?)w.Candidate.Identity).FirstOrDefault(i => i!.Value.FileName is not null || i.Value.FileId is not null) ?? top.Identity;
        var conflicts = contents.Skip(1)
            .Select(c => new ConflictingReading(c.Witnesses[0].Candidate.Payload, Provenance(c.Witnesses[0].Candidate, c.Witnesses[0].Pass), c.Witnesses.Count))
            .ToImmutableArray();
        return Block(
            top.Header,
            top.Payload,
            status,
            confidence,
            [.. winner.Witnesses.Select(w => Provenance(w.Candidate, w.Pass))],
            winner.Witnesses.Count,
            identity) with
        {
            ConflictingPayloads = conflicts,
        };
    }

    /// <summary>Each capture's most confident reading among <paramref name="readings"/> (of one content), most confident first.</summary>
    private List<(BlockCandidate Candidate, int Pass)> CaptureWitnesses(IEnumerable<(BlockCandidate Candidate, int Pass)> readings) =>
        readings.GroupBy(r => _passes[r.Pass].Capture.CaptureSha256)
            .Select(w => w.MaxBy(r => r.Candidate.Confidence))
            .OrderByDescending(r => r.Candidate.Confidence)
            .ToList();

    /// <summary>
    /// No valid reading: the payload length most complete readings agree on, a bit vote over the readings of that
    /// length (and the prefixes of readings cut short), then the repair search. Nothing that holds: missing.
    /// </summary>
    private ImageBlock? ResolveByVote(List<(BlockCandidate Candidate, int Pass)> readings, PassOdds odds)
    {
        var fallbackIdentity = readings.Select(r => r.Candidate).Where(c => !c.Header.IsEmpty).GroupBy(c => c.Identity.Key).MaxBy(g => g.Count())?.First().Identity
            ?? readings[0].Candidate.Identity;
        var allSources = readings.OrderByDescending(r => r.Candidate.Confidence).Select(r => Provenance(r.Candidate, r.Pass)).ToImmutableArray();
        var whole = readings.Where(r => !r.Candidate.Truncated && r.Candidate.StoredChecksum is not null && r.Candidate.Header.Length == Layout.HeaderBytes).ToList();
        if (_checksum is null || whole.Count == 0)
        {
            return IsEvidence(readings) ? Missing(fallbackIdentity, allSources) : null;
        }

        int payloadLength = whole.GroupBy(r => r.Candidate.Payload.Length).MaxBy(g => g.Sum(r => 1 - MeanError(r.Candidate)))!.Key;
        int width = _checksum.Width;
        int length = Layout.HeaderBytes + payloadLength + width;

        // Independent readings: each capture, and within it each copy of the block the format writes (copies lie a
        // block apart on the tape; the settings reading one copy saw the same signal).
        var voters = new List<VoteReading>();
        var used = new List<(BlockCandidate Candidate, int Pass)>();
        foreach (var (candidate, pass) in readings)
        {
            bool complete = !candidate.Truncated && candidate.Payload.Length == payloadLength && candidate.StoredChecksum is not null;
            if (!complete && !(candidate.Truncated && candidate.Payload.Length <= payloadLength))
            {
                continue;
            }

            var bytes = FullBytes(candidate, complete);
            var errors = new float[bytes.Length];
            float rest = (float)MeanError(candidate);
            bool lostStep = false;
            for (int i = 0; i < bytes.Length; i++)
            {
                errors[i] = ByteError(candidate, i, rest);

                // A byte more likely wrong than right is where a dropout broke the reading: a decoder that reads on
                // through it may have slipped a bit, so the bytes after it can be confidently wrong. They keep a
                // weak vote. The biphase decoder bridges a dropout on its cell clock instead (BiphaseDecoder), so its
                // bytes after one stay where they were written and keep their own odds.
                if (lostStep && !BridgesOnCellClock)
                {
                    errors[i] = Math.Max(errors[i], SlippedByteError);
                }

                lostStep |= errors[i] >= 0.5f;
            }

            voters.Add(new VoteReading(bytes, errors, (pass * 64) + CopyIndex(candidate, readings, pass)));
            used.Add((candidate, pass));
        }

        var best = whole.MaxBy(r => r.Candidate.Confidence + (1 - MeanError(r.Candidate)));
        var outcome = BitVote.Search(voters, length, FullBytes(best.Candidate, complete: true), Holds, _checksum.FalseMatchProbability, _options.RepairBits, _options.MaximumTrials, _options.TrialsAfterHit);
        var sources = used.OrderByDescending(r => r.Candidate.Confidence).Select(r => Provenance(r.Candidate, r.Pass)).ToImmutableArray();
        if (outcome is null)
        {
            return IsEvidence(used) ? Missing(fallbackIdentity, sources) : null;
        }

        var status = outcome.Trials == 1 ? RecoveryStatus.Voted : RecoveryStatus.Repaired;
        if (BlockLayoutCodec.For(Layout).CoveredAllAlike(outcome.Bytes, payloadLength))
        {
            // The check holds over bytes all alike for free (the scorer's AllAlikeCheck: a run of zeros from a lead-in
            // of zeros is block 0, length 0 and a zero CRC-16/XMODEM), so the search's odds, which count on the check,
            // say nothing. The bytes are only as likely as the readings of them say, each capture a witness, and never
            // likelier than the vote itself; and, as for any content no check proved, each pass that read none of
            // them weighs against them (a run of zeros inside a block's payload read as a block of its own by one
            // capture, where the others read the block it lies in).
            var alike = used.Where(r => !r.Candidate.Truncated && FullBytes(r.Candidate, complete: true).AsSpan().SequenceEqual(outcome.Bytes)).ToList();
            double chance = alike.Count == 0 ? 0 : Unconfirmed(
                Math.Min(outcome.Confidence, AnyRight(CaptureWitnesses(alike).Select(w => w.Candidate.Confidence)).Right),
                alike.Select(r => r.Pass),
                odds);
            return chance >= MinimumRepairConfidence
                ? ResolveClean(alike, status) with { Confidence = chance }
                : IsEvidence(used) ? Missing(fallbackIdentity, sources) : null;
        }

        // A pattern that holds is still more likely a false match than the block: keeping it would be filling in. Its
        // readings then show no more than readings for which no pattern holds, and are a position only as those are.
        if (outcome.Confidence < MinimumRepairConfidence)
        {
            return IsEvidence(used) ? Missing(fallbackIdentity, sources) : null;
        }

        var header = outcome.Bytes.AsSpan(0, Layout.HeaderBytes).ToArray();
        var payload = outcome.Bytes.AsSpan(Layout.HeaderBytes, payloadLength).ToArray();
        // The vote reads blocks of the first kind only (Layout); with several kinds, it is numbered as its readings are.
        var identity = _profile.BlockKinds.Count > 1
            ? BlockAssembler.KindIdentity(Layout, 0, header, fallbackIdentity.Ordinal)
            : BlockAssembler.ReadIdentity(Layout, header, fallbackIdentity.Ordinal);
        return Block([.. header], [.. payload], status, outcome.Confidence, sources, 0, identity);

        // The check value holds and the length field agrees (BlockLayoutCodec.CheckHolds).
        bool Holds(byte[] block) => BlockLayoutCodec.For(Layout).CheckHolds(block, payloadLength);
    }

    /// <summary>
    /// Whether failed readings that no position claims show a block: noise before a lead-in or a click can pass for
    /// the start of one, even read to a length its garbled header names. Readings cut off in their header show
    /// nothing; the rest must come from two captures, whose noise is not the same. (A block that only one pass saw
    /// at all is still found by its number, between its file's neighbours.)
    /// </summary>
    private static bool IsEvidence(List<(BlockCandidate Candidate, int Pass)> readings) =>
        readings.Where(r => !r.Candidate.Payload.IsEmpty).Select(r => r.Pass).Distinct().Count() >= 2;

    /// <summary>Which copy of the block a reading is, numbered by start within its pass (a new copy starts after half a block).</summary>
    private static int CopyIndex(BlockCandidate candidate, List<(BlockCandidate Candidate, int Pass)> readings, int pass)
    {
        var starts = readings.Where(r => r.Pass == pass).Select(r => r.Candidate).OrderBy(c => c.StartSeconds).ToList();
        int copy = 0;
        var first = starts[0];
        foreach (var c in starts)
        {
            if (c.StartSeconds > first.StartSeconds + (0.5 * Math.Max(0.05, first.EndSeconds - first.StartSeconds)))
            {
                copy++;
                first = c;
            }

            if (ReferenceEquals(c, candidate))
            {
                return copy;
            }
        }

        return copy;
    }

    /// <summary>Header, payload and (for a whole reading) the check value as it lies on tape.</summary>
    private byte[] FullBytes(BlockCandidate c, bool complete)
    {
        int width = complete ? _checksum!.Width : 0;
        var bytes = new byte[c.Header.Length + c.Payload.Length + width];
        c.Header.AsSpan().CopyTo(bytes);
        c.Payload.AsSpan().CopyTo(bytes.AsSpan(c.Header.Length));
        if (complete)
        {
            BlockLayoutCodec.For(Layout).WriteStoredCheck(bytes.AsSpan(c.Header.Length + c.Payload.Length, width), c.StoredChecksum ?? 0);
        }

        return bytes;
    }

    /// <summary>The error odds of byte <paramref name="index"/> of a reading laid out as on tape; <paramref name="rest"/> where the reading kept none.</summary>
    private static float ByteError(BlockCandidate c, int index, float rest)
    {
        int payloadStart = c.Header.Length;
        int checksumStart = payloadStart + c.Payload.Length;
        if (index < payloadStart)
        {
            return At(c.HeaderErrorOdds, index);
        }

        return index < checksumStart ? At(c.ByteErrorOdds, index - payloadStart) : At(c.ChecksumErrorOdds, index - checksumStart);

        float At(ImmutableArray<float> odds, int i) => i < odds.Length ? odds[i] : rest;
    }

    /// <summary>A reading's typical byte error: the mean of its payload's, standing in for header and check bytes of readings that kept none of their own.</summary>
    private static double MeanError(BlockCandidate c)
    {
        if (c.ByteErrorOdds.IsEmpty)
        {
            return 0.5;
        }

        double sum = 0;
        foreach (float e in c.ByteErrorOdds)
        {
            sum += e;
        }

        return Math.Clamp(sum / c.ByteErrorOdds.Length, 1e-4, 0.5);
    }

    /// <summary>
    /// Block numbers that a file's positions skip (and the first blocks of a file whose start was not read) are
    /// positions no pass saw at all: they are listed as missing, never closed up. Only a position read whole gives a
    /// number to count from or to: a missing one carries the identity most of its failed readings carry, which no check
    /// vouches for (a garbled name and number would make the first blocks of a file that was never written), and stands
    /// for its own number only, which a gap around it leaves out.
    /// </summary>
    private List<ImageBlock> FillNumberGaps(List<ImageBlock> blocks)
    {
        if (Layout.FieldWithRole(FieldRole.BlockNumber) is null)
        {
            return blocks;
        }

        const int MaximumGap = 64;
        var filled = new List<ImageBlock>(blocks.Count);
        ImageBlock? previous = null;
        var missingSince = new List<ImageBlock>();
        foreach (var block in blocks)
        {
            if (block.Status == RecoveryStatus.Missing)
            {
                missingSince.Add(block);
            }
            else if (block.BlockNumber is long number)
            {
                bool sameFile = previous is not null && SameFile(previous, block) && previous.BlockNumber is long p && number > p;
                long from = sameFile ? previous!.BlockNumber!.Value + 1 : 0;
                if (number - from is > 0 and <= MaximumGap)
                {
                    for (long n = from; n < number; n++)
                    {
                        if (!missingSince.Exists(m => SameFile(m, block) && m.BlockNumber == n))
                        {
                            filled.Add(Missing(new BlockIdentity(block.FileName, block.FileId, n, 0), []));
                        }
                    }
                }

                previous = block;
                missingSince.Clear();
            }

            filled.Add(block);
        }

        return filled;

        static bool SameFile(ImageBlock a, ImageBlock b) => a.FileName == b.FileName && a.FileId == b.FileId;
    }

    private ImageBlock Missing(BlockIdentity identity, ImmutableArray<BlockProvenance> sources) =>
        Block([], [], RecoveryStatus.Missing, 0, sources, 0, identity);

    private static ImageBlock Block(ImmutableArray<byte> header, ImmutableArray<byte> payload, RecoveryStatus status, double confidence, ImmutableArray<BlockProvenance> sources, int agreeing, BlockIdentity identity) => new()
    {
        Position = -1,
        Key = identity.Key,
        FileName = identity.FileName,
        FileId = identity.FileId,
        BlockNumber = identity.BlockNumber,
        Status = status,
        Confidence = Math.Clamp(confidence, 0, 1),
        Header = header,
        Payload = payload,
        Sources = sources,
        AgreeingCaptures = agreeing,
    };

    private BlockProvenance Provenance(BlockCandidate c, int pass) =>
        new(_passes[pass].Capture.CaptureSha256, c.SettingName, _passes[pass].CodeVersion, c.StartSeconds, c.Confidence);

    private static double Median(IEnumerable<double> values)
    {
        var sorted = values.Order().ToList();
        return sorted[sorted.Count / 2];
    }

    /// <summary>
    /// The chance that at least one of independent witnesses is right, as P(right) and, kept apart so that near-certain
    /// witnesses do not round to 1 too early, log P(wrong) = Σ log(1 − c).
    /// </summary>
    internal static (double Right, double LogWrong) AnyRight(IEnumerable<double> confidences)
    {
        double logWrong = 0;
        foreach (double c in confidences)
        {
            logWrong += Math.Log(Math.Max(1 - Math.Clamp(c, 0, 1), 1e-300));
        }

        return (1 - Math.Exp(logWrong), logWrong);
    }

    /// <summary>
    /// P(content <paramref name="index"/> right | at most one of the contents is right), each content right on its
    /// own with its chance: w_i Π_(j≠i)(1 − w_j) over the sum of the same for every content plus Π(1 − w_j).
    /// One content alone keeps its chance.
    /// </summary>
    internal static double OneOf(IReadOnlyList<(double Right, double LogWrong)> contents, int index)
    {
        if (contents.Count == 1)
        {
            return contents[0].Right;
        }

        // In logs relative to "all wrong": content i alone right weighs w_i / (1 − w_i).
        var logWeights = contents.Select(c => Math.Log(Math.Max(c.Right, 1e-300)) - c.LogWrong).ToArray();
        double max = Math.Max(0, logWeights.Max());
        double denominator = Math.Exp(-max) + logWeights.Sum(w => Math.Exp(w - max));
        return Math.Exp(logWeights[index] - max) / denominator;
    }

    /// <summary>A hash of a string that is the same in every run (string.GetHashCode is not).</summary>
    internal static long StableHash(string text)
    {
        // FNV-1a, 64-bit (common practice).
        ulong hash = 14695981039346656037UL;
        foreach (char ch in text)
        {
            hash = unchecked((hash ^ ch) * 1099511628211UL);
        }

        return unchecked((long)hash);
    }
}
