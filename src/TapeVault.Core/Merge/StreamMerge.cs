using System.Collections.Immutable;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;

namespace TapeVault.Core.Merge;

/// <summary>
/// The merge of a stream format (no headers, no checksum): every byte of every reading is put on the common tape
/// timeline, bytes within half a character of each other form one slot, and each slot is voted by the readers'
/// byte error odds. A capture's settings saw one signal and count as one witness; captures are independent.
/// A slot survives only where its vote is more likely right than not, and clearly so where a capture that read
/// that stretch of tape did not see it: a byte that framing invented inside one pass's dropout is neither.
/// Where no capture kept a byte the stream is split and the gap listed as missing, never closed up.
/// <para>
/// A segment's confidence is the probability that its whole payload is right: the product over its characters of
/// each one's vote, where every capture's reading of a character may be wrong in a way no margin shows
/// (<see cref="MergeOptions.StreamByteErrorFloor"/>) and the first and last character of what a capture read (where its
/// signal began or broke off: tone dying away, the edge of a dropout, a start with no lead-in) may be one it invented
/// or framed off (<see cref="EdgeCharacterError"/>), and so may the character at each end of a segment, beside bytes
/// no capture kept (<see cref="GapEndError"/>) or at its stretch's start or end (<see cref="StretchEndError"/>); there, part of
/// the doubt is the tape's own, which every capture shares (<see cref="SharedGapEndError"/>, <see cref="SharedStretchEndError"/>).
/// Elsewhere, independent captures that read a character alike are all wrong
/// alike only if each is, and then only by the chance that their wrong values agree: agreement raises the confidence,
/// never lowers it, and a segment claims what its ends allow, and beside bytes no capture kept no more than pieces of
/// its length, or the reading that carried it, were right, however many captures read it alike (<see cref="PieceGenuine"/>);
/// and a piece beside such bytes that one capture alone read, with two settings or more alike, and that is one of its
/// readings whole is at least as likely right as that reading (<see cref="LoneWholeReading"/>).
/// </para>
/// </summary>
internal sealed class StreamMerge
{
    /// <summary>The vote a byte needs when some capture read that stretch of tape and did not see it.</summary>
    private const double LoneByteProbability = 0.9;

    /// <summary>
    /// The chance that the character at either end of one capture's reading, inside a segment that other captures read
    /// on, is not the written one. Estimated by maximum likelihood on the trust benchmark's kcs-300 and kcs-1200 tapes of
    /// tuning seeds 1000–1051. The edge characters' own reading carries its doubt in their error odds from the block
    /// stage too (<see cref="Bytes.CharacterEdge"/>, from their decisions and the baud).
    /// </summary>
    public const double EdgeCharacterError = 0.15;

    /// <summary>
    /// The chance that the character at a segment's end beside bytes no capture kept is not the written one, whatever
    /// its readers' decisions say: each reader's character there counts as no surer. Before each reading was placed by
    /// its own characters (<see cref="ReadingLines"/>) the merge lost track of the character slots there and such
    /// segments were right about half the time; since, estimated by maximum likelihood over the merged segments of the
    /// trust benchmark's kcs-300 and kcs-1200 tapes of tuning seeds 3000–3039 (both profiles together; segments carried
    /// by one capture, each end by what lies beside it): 0.10.
    /// </summary>
    public const double GapEndError = 0.10;

    /// <summary>
    /// The same at a segment's end where its stretch of tone began or ended (the first or last character of a file):
    /// 0.06, from the same fit. The tone stopping, or a start with little lead-in, frames a false character less often
    /// than the break beside a hole in what was kept.
    /// </summary>
    public const double StretchEndError = 0.06;

    /// <summary>
    /// The chance that the character at a segment's end beside bytes no capture kept is a false one that every capture
    /// read alike. The damage that made the hole is on the tape, so every capture meets it the same way, and a false frame
    /// it makes (a start bit read in the noise, the bits after it) is the same character in each: this part of the end's
    /// doubt does not shrink when captures agree, where <see cref="GapEndError"/> (each capture's own) does. Counted on the
    /// merged segments of the trust benchmark's kcs-300 and kcs-1200 tapes of tuning seeds 3000–3031 and 5000–5025: of the
    /// ends beside a hole of segments of four or more characters that two or more captures read alike, 4 of 49 were not
    /// the written character (0.082), where the vote of independent captures had put them at 0.99 and more.
    /// </summary>
    public const double SharedGapEndError = 0.08;

    /// <summary>
    /// The same at a stretch's start or end: the tone beginning or stopping is the same on every capture of the tape, and
    /// a false character framed there (the mark tone's end read as a start bit and ones after it: 0xFF) is framed alike.
    /// Counted on the same segments (four or more characters): of the stretch ends two or more captures read alike, 4 of
    /// 382 were not the written character (0.010); the vote had put such segments at 0.999 (kcs-1200, seeds 3008 and 5011:
    /// a 0xFF after the file's last character, read by two captures).
    /// </summary>
    public const double SharedStretchEndError = 0.01;

    /// <summary>
    /// The baud at which the end doubts above hold (<see cref="EdgeCharacterError"/>, <see cref="GapEndError"/>,
    /// <see cref="StretchEndError"/>, <see cref="SharedGapEndError"/>, <see cref="SharedStretchEndError"/>). They were
    /// fitted on kcs-300 and kcs-1200 tapes together, where most segment ends beside holes, and most false characters at a
    /// stretch's edge, were kcs-1200's. A false character at an edge is framed on a transient (the fade of a dropout, the
    /// click where the tone stops), which lasts a fixed time on tape whatever the baud (<see cref="Bytes.CharacterEdge"/>):
    /// the faster the characters, the more bits it fills and can turn. So each doubt's odds scale with the baud, as the
    /// block stage's edge doubt does (<see cref="AtBaud"/>).
    /// </summary>
    public const double EndDoubtBaud = 1200;

    /// <summary>
    /// An end doubt that holds at <see cref="EndDoubtBaud"/> (<paramref name="error"/>), at <paramref name="baud"/>: its
    /// odds times baud / <see cref="EndDoubtBaud"/>, the transient's length in bits against its length there.
    /// </summary>
    public static double AtBaud(double error, double? baud)
    {
        double odds = error / (1 - error) * ((baud ?? EndDoubtBaud) / EndDoubtBaud);
        return odds / (1 + odds);
    }

    /// <summary>
    /// The chance, from its length alone, that a piece of <paramref name="characters"/> characters carried beside bytes no
    /// capture kept is a run of the written characters at all, rather than a false frame whose characters happened to pass
    /// the vote: L² / (L² + <see cref="LonePieceHalfLength"/>²). A reading framed on the true characters goes on for as
    /// long as its signal lasts; where the characters a capture read on either side of a piece were voted out, the piece
    /// is mostly what its framing invented in damage that every capture met. It holds for a piece that several captures
    /// read alike too: the damage that made the hole is the tape's, and the false characters framed in it are the same on
    /// each capture. A piece carried by a reading of four characters or more is as likely genuine as that reading is
    /// right as a whole (<see cref="PieceGenuine"/>).
    /// <para>
    /// Before, the length alone was L³ / (L³ + 3³), fitted jointly over pieces of every length: pieces of one character
    /// came out at 0.036 and of three at 0.5, while on the merged segments of the trust benchmark's kcs-1200 tapes of
    /// tuning seeds 10000–10087 one capture's pieces of one character were right 9 of 140 times and of two or three 4 of
    /// 108 (merged at 0.023 and 0.136), and what told the right ones apart was the reading that carried them: pieces of
    /// one to three characters from readings at 0.5 or more were right 6 of 13 times, from readings below 0.1 6 of 200.
    /// Half-length and power refitted with the reading's confidence counted, by the log-likelihood of right and wrong
    /// over those tapes' merged positions (kcs-1200 −151.9 before, −128.7 after; a half-length from 8 to 16 and a power
    /// of 1 to 3 all within two of that).
    /// </para>
    /// </summary>
    public static double LonePieceGenuine(int characters)
    {
        double square = Math.Pow(Math.Max(0, characters), 2);
        return square / (square + (LonePieceHalfLength * LonePieceHalfLength));
    }

    /// <summary>The length in characters at which a lone piece beside a hole is as likely true as invented (<see cref="LonePieceGenuine"/>).</summary>
    public const double LonePieceHalfLength = 8;

    /// <summary>
    /// The chance that a piece beside bytes no capture kept is a run of the written characters: at least what its length
    /// says (<see cref="LonePieceGenuine"/>), and at least the confidence of a reading of four characters or more that
    /// carried it (if that reading is right as a whole, so is the piece; its confidence is the block stage's calibrated
    /// judgement of all its characters and of where it began and ended, where a piece's odds in the vote say only how
    /// cleanly each character was framed). A reading of fewer characters is what a false frame in damage makes: a start
    /// bit read in the noise and a character or two before the signal breaks off again.
    /// </summary>
    private double PieceGenuine(List<Slot> slots)
    {
        double carried = 0;
        foreach (var slot in slots)
        {
            foreach (var b in slot.Bytes)
            {
                var reading = _passes[b.Pass].Candidates[b.Candidate];
                if (b.Value == slot.Value && reading.Payload.Length >= 4)
                {
                    carried = Math.Max(carried, reading.Confidence);
                }
            }
        }

        return Math.Max(LonePieceGenuine(slots.Count), carried);
    }

    /// <summary>
    /// The confidence of the surest reading of four characters or more that is the piece, character for character (every
    /// character it read is one of the piece's, where the merge kept it, and it read every character of the piece), where
    /// one capture alone read the piece's slots and two of its settings or more read each of them alike, with no other
    /// character there; 0 otherwise. If that reading is right as a whole, so is the piece, so the piece is at least as
    /// likely right. Its confidence is the block stage's calibrated judgement of all its characters and of where it began
    /// and ended (<see cref="Bytes.CharacterEdge"/>), which the end doubts beside a hole (<see cref="GapEndError"/>,
    /// <see cref="SharedGapEndError"/>) count again. Not where several captures read the piece: that they broke off at the
    /// same place is the tape's damage, which may frame the same false character in each at the hole's edge, a doubt that
    /// no one reading's confidence holds (<see cref="SharedGapEndError"/>). Not where one setting alone read a slot: a
    /// frame one bit off on a run of one repeated character passes every check of a frame (0x00 read as 0x80 in the
    /// stop bit's place) while the capture's other settings read the run where it was.
    /// </summary>
    private double LoneWholeReading(List<Slot> slots)
    {
        int pass = -1;
        var counts = new Dictionary<int, int>();
        foreach (var slot in slots)
        {
            if (slot.Bytes.Count < 2 || !slot.Unanimous)
            {
                return 0;
            }

            foreach (var b in slot.Bytes)
            {
                if (pass >= 0 && b.Pass != pass)
                {
                    return 0;
                }

                pass = b.Pass;
                if (b.Value == slot.Value)
                {
                    counts[b.Candidate] = counts.GetValueOrDefault(b.Candidate) + 1;
                }
            }
        }

        double whole = 0;
        foreach (var (candidate, count) in counts)
        {
            var reading = _passes[pass].Candidates[candidate];
            if (count == slots.Count && reading.Payload.Length == count && count >= 4)
            {
                whole = Math.Max(whole, reading.Confidence);
            }
        }

        return whole;
    }

    private readonly IReadOnlyList<MergePass> _passes;
    private readonly PassTimeline[] _timelines;

    private readonly int _bitsPerCharacter;
    private readonly MergeOptions _options;
    private readonly RecordingLayout _recording;

    /// <summary>The end doubts at this format's baud (<see cref="AtBaud"/>).</summary>
    private readonly double _edgeError, _gapEndError, _stretchEndError, _sharedGapEndError, _sharedStretchEndError;

    /// <param name="passes">Every capture's readings.</param>
    /// <param name="timelines">Each pass's line onto the common timeline.</param>
    /// <param name="bitsPerCharacter">The bits of one character's frame.</param>
    /// <param name="baud">The format's baud (null: not known, the doubts as at <see cref="EndDoubtBaud"/>).</param>
    /// <param name="recording">The silences the format declares before the first stretch and between stretches (<see cref="KeyConfidences"/>).</param>
    /// <param name="options">The merge's options.</param>
    public StreamMerge(IReadOnlyList<MergePass> passes, PassTimeline[] timelines, int bitsPerCharacter, double? baud, RecordingLayout recording, MergeOptions options)
    {
        _options = options;
        _recording = recording;
        _passes = passes;
        _timelines = timelines;
        _bitsPerCharacter = Math.Max(1, bitsPerCharacter);
        _edgeError = AtBaud(EdgeCharacterError, baud);
        _gapEndError = AtBaud(GapEndError, baud);
        _stretchEndError = AtBaud(StretchEndError, baud);
        _sharedGapEndError = AtBaud(SharedGapEndError, baud);
        _sharedStretchEndError = AtBaud(SharedStretchEndError, baud);
    }

    /// <param name="Framing">The share of its reading's characters within <see cref="ClashWindow"/> of it that broke their frame (<see cref="LocalFraming"/>).</param>
    private readonly record struct StreamByte(double Time, byte Value, float Error, int Pass, int Reader, int Candidate, int Index, bool Edge, float Framing);

    private sealed class Slot
    {
        public List<StreamByte> Bytes { get; } = [];

        public double Centre { get; set; }

        public byte Value { get; set; }

        public double Probability { get; set; }

        /// <summary>The chance the slot holds the written character, its readers' edge doubt counted (<see cref="EdgeCharacterError"/>).</summary>
        public double Confidence { get; set; }

        /// <summary>
        /// The same where the slot ends a segment beside bytes no capture kept: every reader's character there is no surer
        /// than <see cref="GapEndError"/>, and all of them may be the same false one (<see cref="SharedGapEndError"/>).
        /// </summary>
        public double GapEndConfidence { get; set; }

        /// <summary>The same where the slot ends a segment at its stretch's start or end (<see cref="StretchEndError"/>, <see cref="SharedStretchEndError"/>).</summary>
        public double StretchEndConfidence { get; set; }

        public bool Unanimous { get; set; }

        /// <summary>Its weight in a clash with a slot closer than a character (<see cref="ClashSupport"/>).</summary>
        public double Support { get; set; }
    }

    /// <summary>The time of one character on tape, in nominal seconds: the median spacing of consecutive bytes.</summary>
    public static double CharacterSeconds(IReadOnlyList<MergePass> passes)
    {
        var spacings = new List<double>();
        foreach (var pass in passes)
        {
            foreach (var c in pass.Candidates)
            {
                for (int i = 1; i < c.ByteSeconds.Length && spacings.Count < 100_000; i += Math.Max(1, c.ByteSeconds.Length / 200))
                {
                    spacings.Add((c.ByteSeconds[i] - c.ByteSeconds[i - 1]) * c.Speed);
                }
            }
        }

        if (spacings.Count == 0)
        {
            return 0.01;
        }

        spacings.Sort();
        return spacings[spacings.Count / 2];
    }

    /// <summary>Anchors for aligning passes: runs of four confident bytes, each at the time of its first, in nominal tape seconds (<see cref="AddAnchors"/>).</summary>
    public static List<(long Feature, double Time)> Anchors(MergePass pass, double speed, double character)
    {
        var anchors = new List<(long, double)>();
        foreach (var c in pass.Candidates)
        {
            AddAnchors(c, seconds => speed * seconds, character, anchors);
        }

        return anchors;
    }

    /// <summary>
    /// Adds one reading's anchors: each run of four confident characters that follow one another back to back, at the
    /// time (<paramref name="time"/> of its capture's seconds) of its first.
    /// </summary>
    private static void AddAnchors(BlockCandidate c, Func<double, double> time, double character, List<(long Feature, double Time)> anchors)
    {
        for (int i = 0; i + 3 < c.Payload.Length; i++)
        {
            bool confident = true;
            for (int k = 0; k < 4 && confident; k++)
            {
                confident = c.ByteErrorOdds[i + k] < 0.05 && (k == 0 || time(c.ByteSeconds[i + k]) - time(c.ByteSeconds[i + k - 1]) < 1.5 * character);
            }

            if (confident)
            {
                anchors.Add((Feature(c.Payload.AsSpan(i, 4)), time(c.ByteSeconds[i])));
            }
        }
    }

    public List<ImageBlock> Resolve()
    {
        double character = CharacterSeconds(_passes);
        var lines = ReadingLines(character);
        double On(int p, int ci, double seconds) => (lines[p][ci].Scale * _timelines[p].Map(seconds)) + lines[p][ci].Offset;
        var bytes = new List<StreamByte>();
        var spans = new List<(double Start, double End, int Pass)>();
        var placed = new List<(int Pass, int Candidate, double Start, double End)>();
        int reader = 0;
        for (int p = 0; p < _passes.Count; p++)
        {
            var candidates = _passes[p].Candidates;
            var readerOf = new Dictionary<int, int>();
            for (int ci = 0; ci < candidates.Count; ci++)
            {
                var c = candidates[ci];
                if (c.Payload.IsEmpty)
                {
                    continue;
                }

                if (!readerOf.TryGetValue(c.SettingIndex, out int r))
                {
                    r = reader++;
                    readerOf.Add(c.SettingIndex, r);
                }

                // A reading's first characters carry their own doubt where nothing marked its start (the block
                // scorer gives it to a reading begun on no evidence, and it is kept with the byte odds).
                var framing = LocalFraming(c.ByteErrorOdds.AsSpan());
                int sinceBroken = int.MaxValue;
                for (int i = 0; i < c.Payload.Length; i++)
                {
                    float error = Math.Clamp(c.ByteErrorOdds[i], 1e-6f, 0.999f);

                    // The characters just after a broken one may have been framed on a false start bit.
                    if (sinceBroken < BlockScorer.DoubtfulFrames)
                    {
                        error = Math.Max(error, BlockScorer.DoubtfulFrameError);
                    }

                    sinceBroken = c.ByteErrorOdds[i] >= 0.5f ? 0 : sinceBroken == int.MaxValue ? int.MaxValue : sinceBroken + 1;
                    bytes.Add(new StreamByte(On(p, ci, c.ByteSeconds[i]), c.Payload[i], error, p, r, ci, i, i == 0 || i == c.Payload.Length - 1, framing[i]));
                }

                // A capture counts as reading the tape a little beyond its first and last characters: a byte just past
                // the end of what the others read (the tone dying away at the end of a stretch) is a lone one.
                spans.Add((On(p, ci, c.ByteSeconds[0]) - (2 * character), On(p, ci, c.ByteSeconds[^1]) + (2 * character), p));
                placed.Add((p, ci, On(p, ci, c.ByteSeconds[0]), On(p, ci, c.ByteSeconds[^1])));
            }
        }

        // Slots are narrower than a character: a reading framed on a false start bit lies whole bits off the true
        // characters and makes slots of its own, which then compete with the true ones. Bounded below so that wow
        // and what the line fit leaves do not split one character's readings.
        double slotWidth = Math.Clamp(0.5 * character / _bitsPerCharacter, 0.0015, 0.5 * character);
        bytes.Sort((a, b) => a.Time.CompareTo(b.Time));
        var slots = new List<Slot>();
        Slot? current = null;
        foreach (var b in bytes)
        {
            if (current is null || b.Time - current.Centre >= slotWidth || current.Bytes.Exists(x => x.Reader == b.Reader))
            {
                current = new Slot { Centre = b.Time };
                slots.Add(current);
            }

            current.Bytes.Add(b);
            current.Centre += (b.Time - current.Centre) / current.Bytes.Count;
        }

        var voted = new List<Slot>(slots.Count);
        foreach (var slot in slots)
        {
            int covering = spans.Where(s => s.Start <= slot.Centre && slot.Centre <= s.End).Select(s => s.Pass).Distinct().Count();
            int supporting = slot.Bytes.Select(x => x.Pass).Distinct().Count();
            (slot.Value, slot.Probability) = Vote(slot, edgeError: null);
            slot.Unanimous = slot.Bytes.TrueForAll(x => x.Value == slot.Value);

            // Each capture that read the value may be wrong in a way no margin shows; they are all wrong alike only if
            // each is. The slot's confidence counts its readers' edge doubt too (the value stays the plain vote's).
            int alike = slot.Bytes.Where(x => x.Value == slot.Value).Select(x => x.Pass).Distinct().Count();
            double floor = Math.Pow(_options.StreamByteErrorFloor, Math.Max(1, alike));
            slot.Probability = Math.Min(slot.Probability, 1 - floor);
            slot.Confidence = Math.Min(Vote(slot, _edgeError, of: slot.Value).Probability, slot.Probability);
            // At a segment's end part of the doubt is the tape's own, the same for every capture: agreement cannot outvote it.
            slot.GapEndConfidence = Math.Min(Vote(slot, _edgeError, of: slot.Value, endError: _gapEndError).Probability, slot.Probability) * (1 - _sharedGapEndError);
            slot.StretchEndConfidence = Math.Min(Vote(slot, _edgeError, of: slot.Value, endError: _stretchEndError).Probability, slot.Probability) * (1 - _sharedStretchEndError);

            // A byte that other captures reading this stretch did not see must be a confident one.
            if (slot.Probability > (supporting < covering ? LoneByteProbability : 0.5))
            {
                slot.Support = ClashSupport(slot);
                voted.Add(slot);
            }
        }

        // Slots closer than a character cannot both be characters: the one with the stronger support stays (the
        // expected number of captures that read it right, each reader's framing around the clash counted, ClashSupport).
        var kept = new List<Slot>(voted.Count);
        foreach (var slot in voted.OrderByDescending(s => s.Support))
        {
            int at = kept.BinarySearch(slot, CentreOrder.Instance);
            int index = at >= 0 ? at : ~at;
            bool clash = (index < kept.Count && kept[index].Centre - slot.Centre < 0.75 * character)
                || (index > 0 && slot.Centre - kept[index - 1].Centre < 0.75 * character);
            if (!clash)
            {
                kept.Insert(index, slot);
            }
        }

        return Segments(kept, character, placed);
    }

    /// <summary>
    /// Where each reading lies on the common timeline, found from its own characters: a line from its pass's timeline
    /// onto the others. One straight line per capture does not hold over a whole tape: the silence before a stretch of
    /// tone, between files, differs from one recording of the same files to another, and a capture's speed wanders more
    /// than one line follows over the seconds of a stream. A reading off by a character or more puts its bytes between
    /// and onto the characters of the others, where they clash and one of each pair is dropped: the segments beside such
    /// holes were then right about half the time (trust benchmark, kcs-300 and kcs-1200, tuning seeds 3000 onwards). So
    /// each reading is fitted onto the others by its runs of four confident characters (<see cref="Anchors"/>), as a
    /// pass is (<see cref="PassTimeline.Fit"/>): the passes are taken reference first, and a reading is fitted to the
    /// readings of the passes placed before it where at least <see cref="MinimumReadingPairs"/> of its runs agree. A
    /// whole stretch of fewer than four characters lies where other captures read the same characters whole
    /// (<see cref="PlaceShortStretches"/>). A reading with fewer lies where its capture's other settings' reading of the same time was placed
    /// (<see cref="PlaceWithItsCapture"/>), or, with none placed, keeps its pass's line.
    /// </summary>
    private (double Scale, double Offset)[][] ReadingLines(double character)
    {
        var lines = new (double Scale, double Offset)[_passes.Count][];
        var features = new List<(long Feature, double Time)>[_passes.Count][];
        for (int p = 0; p < _passes.Count; p++)
        {
            var candidates = _passes[p].Candidates;
            lines[p] = new (double, double)[candidates.Count];
            features[p] = new List<(long, double)>[candidates.Count];
            for (int ci = 0; ci < candidates.Count; ci++)
            {
                lines[p][ci] = (1, 0);
                features[p][ci] = ReadingAnchors(candidates[ci], _timelines[p], character);
            }
        }

        // The reference pass (the line the others were fitted to, with no scale or offset of its own) stays as it is.
        int reference = Math.Max(0, Array.FindIndex(_timelines, t => t.Scale == 1 && t.Offset == 0));
        var order = Enumerable.Range(0, _passes.Count).OrderBy(p => p == reference ? 0 : 1).ThenByDescending(p => features[p].Sum(f => f.Count)).ToList();
        var placed = new List<(long Feature, double Time)>(features[reference].SelectMany(f => f));
        var placedEnds = new List<(long Feature, double Time)>(_passes[reference].Candidates.SelectMany(c => ReadingEnds(c, _passes[reference].Candidates, _timelines[reference], character)));
        var placedShort = new List<(long Feature, double Time)>(_passes[reference].Candidates.SelectMany(c => ShortStretch(c, _passes[reference].Candidates, _timelines[reference], character)));
        foreach (int p in order.Skip(1))
        {
            var candidates = _passes[p].Candidates;
            var placedByOwn = new bool[candidates.Count];
            for (int ci = 0; ci < features[p].Length; ci++)
            {
                var (scale, offset, inliers) = PassTimeline.Fit(placed, features[p][ci], character, 0, minimumSpread: 40 * character);
                if (inliers < MinimumReadingPairs)
                {
                    // Too few runs of its own to place it (a file of one byte repeated, a short reading): it lies where
                    // other readings that begin or end with its characters begin and end.
                    (scale, offset, inliers) = PassTimeline.Fit(placedEnds, [.. ReadingEnds(candidates[ci], candidates, _timelines[p], character)], character, 0, minimumSpread: 40 * character);
                }

                if (inliers >= MinimumReadingPairs)
                {
                    lines[p][ci] = (scale, offset);
                    placedByOwn[ci] = true;
                }
            }

            PlaceShortStretches(candidates, _timelines[p], character, placedShort, lines[p], placedByOwn);
            PlaceWithItsCapture(candidates, lines[p], placedByOwn);

            for (int ci = 0; ci < features[p].Length; ci++)
            {
                var (scale, offset) = lines[p][ci];
                placed.AddRange(features[p][ci].Select(f => (f.Feature, (scale * f.Time) + offset)));
                placedEnds.AddRange(ReadingEnds(candidates[ci], candidates, _timelines[p], character).Select(f => (f.Feature, (scale * f.Time) + offset)));
                placedShort.AddRange(ShortStretch(candidates[ci], candidates, _timelines[p], character).Select(f => (f.Feature, (scale * f.Time) + offset)));
            }
        }

        return lines;
    }

    /// <summary>
    /// Places each reading of one capture that could not be placed by its own characters (<paramref name="placedByOwn"/>
    /// false) on the line of the reading of another of the capture's settings that overlaps it most in the capture's time
    /// and was placed by its own; with none, it keeps its pass's line. The capture's settings heard one signal, so
    /// readings of theirs at the same capture seconds lie at the same place on tape. The pass's line is one line over the
    /// whole capture, and where the silence before a stretch of tone differed on this recording it is off there by that
    /// difference (a second and more: a hundred characters at 1200 baud), while a reading too garbled to have runs of
    /// its own (a setting that misread a damaged stretch, or framed a file of one repeated byte a bit late: every zero
    /// read as 0x80) kept it. It then lay alone in the silence beside the file, where no other capture read, and its
    /// characters became pieces of their own: its misread characters survived the vote there, and a reading framed late
    /// was kept whole where, beside its capture's other settings, the readers of the written characters outvote it.
    /// </summary>
    private static void PlaceWithItsCapture(IReadOnlyList<BlockCandidate> candidates, (double Scale, double Offset)[] lines, bool[] placedByOwn)
    {
        for (int ci = 0; ci < candidates.Count; ci++)
        {
            var seconds = candidates[ci].ByteSeconds;
            if (placedByOwn[ci] || seconds.Length == 0)
            {
                continue;
            }

            double most = double.NegativeInfinity;
            for (int other = 0; other < candidates.Count; other++)
            {
                var its = candidates[other].ByteSeconds;
                if (!placedByOwn[other] || its.Length == 0)
                {
                    continue;
                }

                // Overlap in the capture's seconds: 0 where a one-character reading lies inside the other, below 0 apart.
                double overlap = Math.Min(seconds[^1], its[^1]) - Math.Max(seconds[0], its[0]);
                if (overlap >= 0 && overlap > most)
                {
                    most = overlap;
                    lines[ci] = lines[other];
                }
            }
        }
    }

    /// <summary>
    /// A reading's first and last four characters, each marked as its start or its end, at the time of their first on its
    /// pass's line. A reading without enough runs of its own to be fitted (<see cref="MinimumReadingPairs"/>) is placed by
    /// these where at least as many ends of the readings placed before it agree: the tone of a stretch begins and ends on
    /// every capture at the same characters, whatever the silence before it was on each recording. A file of one byte
    /// repeated has no run that says where along it a reading lies, and its pass's line, fitted on the other files, is
    /// off by as much as the silences between files differ: the run then reads longer than it was written, its extra
    /// characters one capture's alone.
    /// <para>
    /// Only where the reading's own setting read no other reading of the capture just before it (within the silence that
    /// parts stretches, <see cref="StretchGap"/>) is its start the stretch's start, and likewise its end: a reading that
    /// resumed after a dropout inside a file of one byte repeated begins with the same four characters as the file does,
    /// and, taken for the file's start, laid its characters over those the others read at the start, its own place in
    /// the run left to one capture's characters alone.
    /// </para>
    /// </summary>
    private static IEnumerable<(long Feature, double Time)> ReadingEnds(BlockCandidate c, IReadOnlyList<BlockCandidate> pass, PassTimeline timeline, double character)
    {
        if (c.Payload.Length < 4)
        {
            yield break;
        }

        var (resumed, broken) = Neighbours(c, pass, timeline, character);
        if (!resumed)
        {
            yield return (Feature(c.Payload.AsSpan(0, 4)) | ReadingStartMark, timeline.Map(c.ByteSeconds[0]));
        }

        if (!broken)
        {
            yield return (Feature(c.Payload.AsSpan(c.Payload.Length - 4, 4)) | ReadingEndMark, timeline.Map(c.ByteSeconds[^4]));
        }
    }

    /// <summary>
    /// Whether the reading's own setting read another reading of the capture just before it (<c>Resumed</c>: within the
    /// silence that parts stretches, <see cref="StretchGap"/>) or just after it (<c>Broken</c>).
    /// </summary>
    private static (bool Resumed, bool Broken) Neighbours(BlockCandidate c, IReadOnlyList<BlockCandidate> pass, PassTimeline timeline, double character)
    {
        double gap = StretchGap(character);
        double first = timeline.Map(c.ByteSeconds[0]), last = timeline.Map(c.ByteSeconds[^1]);
        bool resumed = false, broken = false;
        foreach (var other in pass)
        {
            if (ReferenceEquals(other, c) || other.SettingIndex != c.SettingIndex || other.ByteSeconds.Length == 0)
            {
                continue;
            }

            double otherLast = timeline.Map(other.ByteSeconds[^1]), otherFirst = timeline.Map(other.ByteSeconds[0]);
            resumed |= otherLast < first && first - otherLast < gap;
            broken |= otherFirst > last && otherFirst - last < gap;
        }

        return (resumed, broken);
    }

    /// <summary>
    /// A reading of fewer than four characters that is a whole stretch of tone (its setting read nothing of the capture
    /// just before or after it, <see cref="Neighbours"/>): its characters and their count as one feature, marked as such
    /// (<see cref="ShortStretchMark"/>), at the time of its first on its pass's line. None otherwise.
    /// </summary>
    private static IEnumerable<(long Feature, double Time)> ShortStretch(BlockCandidate c, IReadOnlyList<BlockCandidate> pass, PassTimeline timeline, double character)
    {
        if (c.Payload.IsEmpty || c.Payload.Length >= 4 || c.ByteSeconds.Length == 0 || Neighbours(c, pass, timeline, character) != (false, false))
        {
            yield break;
        }

        Span<byte> four = stackalloc byte[4];
        c.Payload.AsSpan().CopyTo(four);
        yield return (Feature(four) | ((long)c.Payload.Length << 32) | ShortStretchMark, timeline.Map(c.ByteSeconds[0]));
    }

    /// <summary>
    /// Places each reading of one capture that is a whole short stretch of tone (a file of fewer than four characters,
    /// <see cref="ShortStretch"/>) and could not be placed by its own characters, where the nearest whole reading of the
    /// same characters by a capture placed before lies, unless another reading of its capture lies between the two (its
    /// capture's order of stretches holds). Such a file has no run of four characters and no four at its ends to be placed
    /// by (<see cref="ReadingEnds"/>), and, with no longer reading of its capture at that time, it kept its pass's line,
    /// off by as much as the silence before it differed on this recording (a second and more): its characters then lay
    /// alone, a stretch of their own, so that the image held the file twice, the copy that several captures read alike
    /// voted near certain, and every file after it keyed one stretch later than it lies.
    /// </summary>
    private static void PlaceShortStretches(IReadOnlyList<BlockCandidate> candidates, PassTimeline timeline, double character, List<(long Feature, double Time)> placedShort, (double Scale, double Offset)[] lines, bool[] placedByOwn)
    {
        for (int ci = 0; ci < candidates.Count; ci++)
        {
            if (placedByOwn[ci])
            {
                continue;
            }

            foreach (var (feature, time) in ShortStretch(candidates[ci], candidates, timeline, character))
            {
                double nearest = double.NaN;
                foreach (var (placedFeature, placedTime) in placedShort)
                {
                    if (placedFeature == feature && (double.IsNaN(nearest) || Math.Abs(placedTime - time) < Math.Abs(nearest - time)))
                    {
                        nearest = placedTime;
                    }
                }

                if (!double.IsNaN(nearest) && !ReadingBetween(candidates, ci, timeline, Math.Min(time, nearest), Math.Max(time, nearest)))
                {
                    lines[ci] = (1, nearest - time);
                    placedByOwn[ci] = true;
                }
            }
        }
    }

    /// <summary>
    /// Whether a reading of the capture other than those of the same stretch as reading <paramref name="of"/> (which
    /// overlap it in the capture's seconds) lies, on its pass's line, between <paramref name="from"/> and <paramref name="to"/>.
    /// </summary>
    private static bool ReadingBetween(IReadOnlyList<BlockCandidate> candidates, int of, PassTimeline timeline, double from, double to)
    {
        var seconds = candidates[of].ByteSeconds;
        foreach (var other in candidates)
        {
            var its = other.ByteSeconds;
            if (its.Length == 0 || Math.Min(seconds[^1], its[^1]) >= Math.Max(seconds[0], its[0]))
            {
                continue;
            }

            if (timeline.Map(its[^1]) > from && timeline.Map(its[0]) < to)
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>
    /// A stretch of fewer characters than this may be a false frame's, not a file: every key after it is doubted by the
    /// confidence of its likeliest character (<see cref="Segments"/>). Four, as a reading of four characters or more is
    /// no false frame in a silence (<see cref="KeyConfidences"/>) and the benchmark judges a shorter segment by its key.
    /// </summary>
    private const int FalseStretchLength = 4;

    /// <summary>The least silence, in nominal seconds, that parts two stretches of tone (two files) rather than a dropout inside one.</summary>
    private static double StretchGap(double character) => Math.Max(12 * character, 0.5);

    /// <summary>
    /// Whether each slot begins a stretch of tone: it lies more than <paramref name="stretchGap"/> after the slot before
    /// it. A slot in a silence that two captures or more heard (each read on both sides of it, and nothing across more than
    /// <paramref name="stretchGap"/> of it) and that only doubtful readings hold (each under <see cref="DoubtfulReading"/>)
    /// is a false frame one capture read in the silence: it begins no stretch, and the silence still parts the two
    /// stretches it lies between (on the saved stream tapes of seeds 142000–146000, such characters glued two files into
    /// one stretch and keyed every later file a place early at 0.91–0.98, kcs-1200 144004 and 144082). It stays with the
    /// stretch before as a position of its own, claiming what its reading claims.
    /// </summary>
    private bool[] StretchStarts(List<Slot> slots, double stretchGap, List<(int Pass, int Candidate, double Start, double End)> placed)
    {
        // The silences each capture heard: between the stretches of the common line its readings cover.
        var silences = new List<(double From, double To, int Pass)>();
        foreach (var group in placed.GroupBy(r => r.Pass))
        {
            double covered = double.NaN;
            foreach (var (_, _, start, end) in group.OrderBy(r => r.Start))
            {
                if (start - covered > stretchGap)
                {
                    silences.Add((covered, start, group.Key));
                }

                covered = double.IsNaN(covered) ? end : Math.Max(covered, end);
            }
        }

        bool FalseFrame(Slot slot) =>
            slot.Bytes.TrueForAll(b => _passes[b.Pass].Candidates[b.Candidate].Confidence < DoubtfulReading)
            && silences.Where(q => q.From < slot.Centre && slot.Centre < q.To && !slot.Bytes.Exists(b => b.Pass == q.Pass)).Select(q => q.Pass).Distinct().Count() >= 2;

        var starts = new bool[slots.Count];
        double last = double.NaN;
        for (int k = 0; k < slots.Count; k++)
        {
            if (k > 0 && FalseFrame(slots[k]))
            {
                continue;
            }

            starts[k] = k == 0 || slots[k].Centre - (double.IsNaN(last) ? slots[k - 1].Centre : last) > stretchGap;
            last = slots[k].Centre;
        }

        return starts;
    }

    /// <summary>
    /// A reading no surer than this that lies alone in a silence other captures heard is taken for a false frame there
    /// (<see cref="StretchStarts"/>): an even chance, common practice for "more likely wrong than right".
    /// </summary>
    private const double DoubtfulReading = 0.5;

    /// <summary>Marks a feature as a reading's first four characters (features are four bytes: bits 0–31).</summary>
    private const long ReadingStartMark = 1L << 40;

    /// <summary>Marks a feature as a reading's last four characters.</summary>
    private const long ReadingEndMark = 1L << 41;

    /// <summary>Marks a feature as a whole short reading's characters and their count (bits 0–34, <see cref="ShortStretch"/>).</summary>
    private const long ShortStretchMark = 1L << 42;

    /// <summary>Four characters as one feature.</summary>
    private static long Feature(ReadOnlySpan<byte> four) => (uint)four[0] | ((uint)four[1] << 8) | ((uint)four[2] << 16) | ((uint)four[3] << 24);

    /// <summary>The least number of a reading's runs of confident characters that must agree on where it lies.</summary>
    private const int MinimumReadingPairs = 3;

    /// <summary>Runs of four confident characters of one reading, each at the time of its first on its pass's line (<see cref="AddAnchors"/>).</summary>
    private static List<(long Feature, double Time)> ReadingAnchors(BlockCandidate c, PassTimeline timeline, double character)
    {
        var anchors = new List<(long, double)>();
        AddAnchors(c, timeline.Map, character, anchors);
        return anchors;
    }

    /// <summary>
    /// The weight of evidence for a slot against a clashing one: the log odds, summed over the captures that read its
    /// value, that each read a true character there. Two captures that each may well have framed on a false start
    /// bit weigh less than one that read cleanly, where a count of captures would let them outvote it. A capture's
    /// chance of a false character there is at least the share of its readers' characters around it that broke their
    /// frame (<see cref="LocalFraming"/>): a reading framed whole bits off the written characters reads a run of one
    /// repeated character as cleanly as the true frame does (0xD3 read three bits late is 0x7A with valid stop bits), and
    /// breaks its frame where the run ends, while the true frame reads on. This is the evidence at the clash itself; a
    /// reading's confidence as a whole falls with its length as well, and ranked a long true reading below a short false one.
    /// </summary>
    private static double ClashSupport(Slot slot) =>
        slot.Bytes.Where(b => b.Value == slot.Value).GroupBy(b => b.Pass).Sum(g =>
        {
            double error = Math.Clamp(Math.Max(g.Average(b => b.Error), g.Average(b => b.Framing)), 1e-6, 0.999);
            return Math.Log((1 - error) / error);
        }) + Math.Log(slot.Probability / Math.Max(1 - slot.Probability, 1e-12));

    /// <summary>
    /// The characters on either side of a character over which its reading's broken frames count as doubt of a false
    /// frame there (<see cref="LocalFraming"/>): 16, about half a run of one repeated character of the length that a false
    /// frame reads cleanly on the tuning tapes (not fitted; only this value was tried).
    /// </summary>
    public const int ClashWindow = 16;

    /// <summary>
    /// For each character of a reading, the share of the reading's characters within <see cref="ClashWindow"/> of it (itself
    /// counted, the reading's ends cut the window) that broke their frame (byte error odds of 0.5 or more).
    /// </summary>
    internal static float[] LocalFraming(ReadOnlySpan<float> errorOdds)
    {
        var broken = new int[errorOdds.Length + 1];
        for (int i = 0; i < errorOdds.Length; i++)
        {
            broken[i + 1] = broken[i] + (errorOdds[i] >= 0.5f ? 1 : 0);
        }

        var share = new float[errorOdds.Length];
        for (int i = 0; i < errorOdds.Length; i++)
        {
            int from = Math.Max(0, i - ClashWindow), to = Math.Min(errorOdds.Length, i + ClashWindow + 1);
            share[i] = (float)(broken[to] - broken[from]) / (to - from);
        }

        return share;
    }

    private sealed class CentreOrder : IComparer<Slot>
    {
        public static CentreOrder Instance { get; } = new();

        public int Compare(Slot? x, Slot? y) => x!.Centre.CompareTo(y!.Centre);
    }

    /// <summary>
    /// P(value | readings) with a uniform prior over the 256 values: each capture's likelihood of a value is the mean
    /// over its settings of (1 − e) where the setting read that value and e / 255 where it read another. With
    /// <paramref name="edgeError"/>, a reading's first and last character count as no surer than that (<see cref="EdgeCharacterError"/>
    /// at the format's baud), or, with <paramref name="endError"/>, every reading's character as no surer than that (a segment's end).
    /// Returns the likeliest value and its probability, or <paramref name="of"/>'s probability where given.
    /// </summary>
    private static (byte Value, double Probability) Vote(Slot slot, double? edgeError, byte? of = null, double? endError = null)
    {
        var values = slot.Bytes.Select(b => b.Value).Distinct().ToArray();
        var logLikelihood = new double[values.Length + 1];
        foreach (var capture in slot.Bytes.GroupBy(b => b.Pass))
        {
            var readings = capture.ToList();
            for (int v = 0; v <= values.Length; v++)
            {
                double sum = 0;
                foreach (var r in readings)
                {
                    double error = edgeError is not { } edge ? r.Error : endError is { } end ? Math.Max(r.Error, end) : r.Edge ? Math.Max(r.Error, edge) : r.Error;
                    sum += v < values.Length && r.Value == values[v] ? 1 - error : error / 255.0;
                }

                logLikelihood[v] += Math.Log(sum / readings.Count);
            }
        }

        // The last entry stands for each value nobody read, of which there are 256 − values.Length.
        double max = logLikelihood.Max();
        double total = 0;
        for (int v = 0; v <= values.Length; v++)
        {
            total += Math.Exp(logLikelihood[v] - max) * (v < values.Length ? 1 : 256 - values.Length);
        }

        int best = 0;
        for (int v = 1; v < values.Length; v++)
        {
            if (of is { } value ? values[v] == value : logLikelihood[v] > logLikelihood[best])
            {
                best = v;
            }
        }

        return (values[best], Math.Exp(logLikelihood[best] - max) / total);
    }

    /// <summary>
    /// The chance that a stretch no capture read lies before a stretch read where only captures that read nothing before
    /// it heard room for one (<see cref="KeyConfidences"/>). A stretch whose file is shorter than any reading (one
    /// character: the block stage makes no reading of fewer than two) leaves nothing in any capture's readings, and every
    /// stretch after it is keyed a place early, its bytes right. Counted by the benchmark's stream-merge (its silence
    /// counts) on the stream tapes the trust benchmark saved (kcs-300 and kcs-1200, seeds 138000–180000, 2 155 tapes;
    /// diagnosis only): of 41 such silences where a capture heard room, 5 held a file that no capture read.
    /// </summary>
    public const double UnreadStretchAtStart = 0.12;

    /// <summary>
    /// The same where a capture read a stretch before (every such capture heard the whole silence and each heard room
    /// for one by its writer's own gap, <see cref="HabitualGap"/>). Counted on the same tapes: of 71 such silences, 6
    /// held a file that no capture read.
    /// </summary>
    public const double UnreadStretchBetween = 0.085;

    /// <summary>
    /// For each stretch of tone (from each slot <paramref name="starts"/> marks, <see cref="StretchStarts"/>), the chance that its key is its
    /// place: that no stretch went unread before it, by any capture. Its number counts the stretches read before it, and a
    /// stretch nobody read (a file of one character, which no reading holds) shifts it and every later one a place early,
    /// whatever the votes on their bytes say. Such a stretch needs room: before the first stretch read, the lead-in, the
    /// unread stretch and a gap after it; between two stretches read, two gaps. A capture that read a stretch before
    /// (a reading of four characters or more the image kept a character of: a false frame in the silence is none) heard
    /// all of the silence since, so there every such capture must have heard one and a half of the format's declared gaps
    /// or more (a recording's gaps differ from the declared by a fraction of one). Where none did, each capture heard the
    /// silence from its own start and may have begun late, so the capture that heard most must have heard the declared
    /// lead-in and three quarters of a gap. A longer silence than the format declares doubts a key, never the reverse.
    /// Where a silence has room, a stretch lies unread in it with the chance counted (<see cref="UnreadStretchAtStart"/>,
    /// <see cref="UnreadStretchBetween"/>), and every key after it shares that doubt.
    /// </summary>
    private double[] KeyConfidences(List<Slot> slots, bool[] starts, double character, List<(int Pass, int Candidate, double Start, double End)> placed)
    {
        // The stretches: each one's first and last slot on the common line.
        var spans = new List<(double Start, double End)>();
        for (int k = 0; k < slots.Count; k++)
        {
            if (starts[k])
            {
                spans.Add((slots[k].Centre, slots[k].Centre));
            }

            spans[^1] = (spans[^1].Start, slots[k].Centre);
        }

        // Where each capture heard each stretch, on its pass's line (its own seconds at nominal speed): the first character
        // of its readings that lie on the stretch (whatever of them the vote kept), and the end of the last reading of four
        // characters or more before it of which the image kept a character (the false frames a capture read in the
        // silence, which the vote dropped or left as a stretch of a few characters of their own, part no silence).
        var kept = new HashSet<(int Pass, int Candidate)>();
        foreach (var slot in slots)
        {
            foreach (var b in slot.Bytes)
            {
                if (b.Value == slot.Value)
                {
                    kept.Add((b.Pass, b.Candidate));
                }
            }
        }

        int stretches = spans.Count;
        var first = new double[stretches, _passes.Count];
        var before = new double[stretches, _passes.Count];

        // Each pass's kept readings of four characters or more: where each ends on its pass's line, mapped once.
        var keptEnds = new List<double>[_passes.Count];
        for (int p = 0; p < _passes.Count; p++)
        {
            keptEnds[p] = [];
            for (int ci = 0; ci < _passes[p].Candidates.Count; ci++)
            {
                var seconds = _passes[p].Candidates[ci].ByteSeconds;
                if (seconds.Length >= 4 && kept.Contains((p, ci)))
                {
                    keptEnds[p].Add(_timelines[p].Map(seconds[^1]));
                }
            }
        }

        for (int s = 0; s < stretches; s++)
        {
            for (int p = 0; p < _passes.Count; p++)
            {
                first[s, p] = double.PositiveInfinity;
                before[s, p] = double.NegativeInfinity;
            }

            foreach (var (pass, candidate, start, end) in placed)
            {
                if (start <= spans[s].End + character && end >= spans[s].Start - character)
                {
                    first[s, pass] = Math.Min(first[s, pass], _timelines[pass].Map(_passes[pass].Candidates[candidate].ByteSeconds[0]));
                }
            }

            for (int p = 0; p < _passes.Count; p++)
            {
                foreach (double ending in keptEnds[p])
                {
                    if (ending < first[s, p])
                    {
                        before[s, p] = Math.Max(before[s, p], ending);
                    }
                }
            }
        }

        // The silence each capture heard between a stretch it read something before and the end of that something.
        var heard = new double[stretches, _passes.Count];
        for (int s = 0; s < stretches; s++)
        {
            for (int p = 0; p < _passes.Count; p++)
            {
                heard[s, p] = double.IsPositiveInfinity(first[s, p]) || double.IsNegativeInfinity(before[s, p]) ? double.NaN : first[s, p] - before[s, p];
            }
        }

        var keyed = new double[stretches];
        double chance = 1;
        for (int s = 0; s < stretches; s++)
        {
            // A capture that read nothing before the stretch heard the silence from its start (it may have begun late:
            // the longest such silence counts); one that read something heard all of the silence since, and each such
            // capture must have heard room for a file by its writer's own gap (HabitualGap).
            double longest = double.NegativeInfinity;
            bool between = false, room = true;
            for (int p = 0; p < _passes.Count; p++)
            {
                if (double.IsPositiveInfinity(first[s, p]))
                {
                    continue;
                }

                if (double.IsNegativeInfinity(before[s, p]))
                {
                    longest = Math.Max(longest, first[s, p] - _timelines[p].Map(0));
                }
                else
                {
                    between = true;
                    room &= heard[s, p] >= 1.5 * HabitualGap(heard, s, p);
                }
            }

            chance *= between
                ? room ? 1 - UnreadStretchBetween : 1
                : longest >= _recording.LeadInSeconds + (0.75 * _recording.BlockGapSeconds) ? 1 - UnreadStretchAtStart : 1;
            keyed[s] = chance;
        }

        return keyed;
    }

    /// <param name="placed">Every reading, by pass and index, with its first and last character on the common line.</param>
    private List<ImageBlock> Segments(List<Slot> slots, double character, List<(int Pass, int Candidate, double Start, double End)> placed)
    {
        var blocks = new List<ImageBlock>();
        double stretchGap = StretchGap(character);
        var starts = StretchStarts(slots, stretchGap, placed);
        var keyed = KeyConfidences(slots, starts, character, placed);

        // The chance that every stretch before the current one is a file: a stretch shorter than FalseStretchLength may be
        // a false frame's (a character framed on noise in the lead-in or a silence), and it takes a number all the same.
        // It is a file if any of its characters was written: at least as likely as its likeliest character read right,
        // each doubted as a stretch's end is (a false frame's stretch is all ends).
        double filesBefore = 1;
        double likeliestCharacter = 0;
        int stretch = -1;
        int offset = 0;
        var segment = new List<Slot>();
        int segmentOffset = 0;
        bool split = false;
        bool afterGap = false;
        var stretchBlocks = new List<ImageBlock>();
        for (int k = 0; k <= slots.Count; k++)
        {
            double gap = k == 0 || k == slots.Count ? double.PositiveInfinity : slots[k].Centre - slots[k - 1].Centre;
            int lost = k == slots.Count || starts[k] ? -1 : Math.Max(0, (int)Math.Round(gap / character) - 1);
            if (k > 0 && lost != 0)
            {
                stretchBlocks.Add(Segment(segment, stretch, segmentOffset, afterGap, beforeGap: lost > 0, keyed[stretch] * filesBefore));
                segment.Clear();
                if (lost > 0)
                {
                    split = true;
                    stretchBlocks.Add(MissingBytes(stretch, offset, keyed[stretch] * filesBefore));
                    offset += lost;
                }
            }

            if (lost < 0)
            {
                // A new stretch of tone (the next file): the finished stretch keeps plain keys if nothing split it.
                foreach (var b in stretchBlocks)
                {
                    blocks.Add(split ? b : b with { Key = $"#{stretch}" });
                }

                // Every key after a stretch shorter than FalseStretchLength shares the doubt that it is a file at all: if
                // it is a false frame's, each later stretch lies a place before its number.
                if (stretch >= 0 && offset < FalseStretchLength)
                {
                    filesBefore *= likeliestCharacter;
                }

                likeliestCharacter = 0;

                stretchBlocks.Clear();
                split = false;
                stretch++;
                offset = 0;
            }

            if (k == slots.Count)
            {
                break;
            }

            if (segment.Count == 0)
            {
                segmentOffset = offset;
                afterGap = lost > 0;
            }

            segment.Add(slots[k]);
            likeliestCharacter = Math.Max(likeliestCharacter, slots[k].StretchEndConfidence);
            offset++;
        }

        return blocks;
    }

    /// <summary>
    /// The gap a capture's writer leaves between files, as this capture heard it on this tape: the shortest silence it
    /// heard between two stretches it read, other than before stretch <paramref name="stretch"/>, and never less than the
    /// format's declared gap. A writer that leaves two seconds where the format declares one does so between every two
    /// files it writes (common practice: a writer's pause is one setting, not drawn per file), and a silence no longer
    /// than that has no room for a file; one that hides a file is two of the writer's gaps and the file long.
    /// </summary>
    /// <param name="heard">Each stretch's silence as each capture heard it since the end of what it read before (NaN where it read nothing before or not the stretch).</param>
    private double HabitualGap(double[,] heard, int stretch, int pass)
    {
        double least = double.PositiveInfinity;
        for (int s = 0; s < heard.GetLength(0); s++)
        {
            if (s != stretch && !double.IsNaN(heard[s, pass]))
            {
                least = Math.Min(least, heard[s, pass]);
            }
        }

        return double.IsPositiveInfinity(least) ? _recording.BlockGapSeconds : Math.Max(least, _recording.BlockGapSeconds);
    }

    /// <param name="keyed">The chance that no stretch of tone before this one went unread (<see cref="KeyConfidences"/>) and that every short one before it is a file (<see cref="FalseStretchLength"/>): its key's.</param>
    private ImageBlock Segment(List<Slot> slots, int stretch, int offset, bool afterGap, bool beforeGap, double keyed)
    {
        var payload = slots.Select(s => s.Value).ToImmutableArray();
        int agreeing = slots.Count == 0 ? 0 : slots.Min(s => s.Bytes.Where(b => b.Value == s.Value).Select(b => b.Pass).Distinct().Count());
        // A segment's ends lie beside bytes no capture kept or at its stretch's start or end: whatever each reader's own
        // reading did there, the character at a segment's end is doubted by what lies beside it.
        double logConfidence = 0;
        for (int i = 0; i < slots.Count; i++)
        {
            double first = afterGap ? slots[i].GapEndConfidence : slots[i].StretchEndConfidence;
            double last = beforeGap ? slots[i].GapEndConfidence : slots[i].StretchEndConfidence;
            double p = i == 0 && i == slots.Count - 1 ? Math.Min(first, last) : i == 0 ? first : i == slots.Count - 1 ? last : slots[i].Confidence;

            logConfidence += Math.Log(Math.Max(p, 1e-300));
        }

        // A piece beside bytes no capture kept may be a false frame's invention as a whole, whether one capture carried
        // it or several: the damage that made the hole is on the tape, and captures frame the same false characters in it.
        double genuine = afterGap || beforeGap ? PieceGenuine(slots) : 1;
        double whole = afterGap || beforeGap ? LoneWholeReading(slots) : 0;

        // Provenance: per capture, the reading that gave most of the winning bytes; the capture that gave most first.
        var winning = slots.SelectMany(s => s.Bytes.Where(b => b.Value == s.Value)).ToList();
        var sources = winning
            .GroupBy(b => b.Pass)
            .Select(g =>
            {
                var reading = g.GroupBy(b => b.Candidate).MaxBy(r => r.Count())!;
                var candidate = _passes[g.Key].Candidates[reading.Key];
                int first = reading.Min(b => b.Index);
                return (Count: g.Select(b => b.Time).Distinct().Count(), Source: new BlockProvenance(
                    _passes[g.Key].Capture.CaptureSha256, candidate.SettingName, _passes[g.Key].CodeVersion, candidate.ByteSeconds[first], candidate.Confidence));
            })
            .OrderByDescending(x => x.Count)
            .Select(x => x.Source)
            .ToImmutableArray();
        return new ImageBlock
        {
            Position = -1,
            Key = $"#{stretch}+{offset}",
            // Without a checksum nothing verifies the bytes, however many captures agree (two captures can frame the
            // same characters on the same false start bit): a stream is voted, never clean; its confidence and
            // agreeing captures say how far to trust it.
            Status = RecoveryStatus.Voted,
            // The position is the key's too: #s is the s-th stretch only if every stretch before it was read. The key's
            // doubt is kept apart as well, as the image counts it once (TapeImage.OverallConfidence).
            Confidence = Math.Max(Math.Exp(logConfidence) * (offset > 0 ? _options.StreamAfterGapFactor : 1) * genuine, whole) * keyed,
            KeyConfidence = keyed,
            Header = [],
            Payload = payload,
            Sources = sources,
            AgreeingCaptures = agreeing,
        };
    }

    /// <param name="keyed">Its key's confidence: the place of bytes no capture kept is doubted as its stretch's is.</param>
    private static ImageBlock MissingBytes(int stretch, int offset, double keyed) => new()
    {
        Position = -1,
        Key = $"#{stretch}+{offset}",
        Status = RecoveryStatus.Missing,
        Confidence = 0,
        KeyConfidence = keyed,
        Header = [],
        Payload = [],
        Sources = [],
        AgreeingCaptures = 0,
    };
}
