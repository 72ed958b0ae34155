using System.Collections.Immutable;
using TapeVault.Core.Bytes;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Blocks;

/// <summary>What the scorer concluded about one block's bytes.</summary>
public sealed record BlockScore
{
    /// <summary>Header bytes present (the layout's, or fewer in a block cut short); 0 for a stream.</summary>
    public required int HeaderBytes { get; init; }

    /// <summary>Index of the first byte after the payload.</summary>
    public required int PayloadEnd { get; init; }

    public required BlockStatus Status { get; init; }

    public required BlockDoubts Doubts { get; init; }

    /// <summary>Estimated probability that the payload is right, 0..1: <see cref="ModelConfidence"/> through the family's calibration map.</summary>
    public required double Confidence { get; init; }

    /// <summary>The model's estimate before calibration: Bayes over the decisions and the check (see <see cref="BlockScorer"/>).</summary>
    public required double ModelConfidence { get; init; }

    public required uint? StoredChecksum { get; init; }

    public required ImmutableArray<float> HeaderErrorOdds { get; init; }

    public required ImmutableArray<float> PayloadErrorOdds { get; init; }

    public required ImmutableArray<float> ChecksumErrorOdds { get; init; }

    public required ImmutableArray<float> PayloadMargins { get; init; }

    public required int AmbiguousDecisions { get; init; }

    public required double MinimumMargin { get; init; }

    public required double MeanMargin { get; init; }

    public required double SnrDb { get; init; }
}

/// <summary>
/// Judges one block: whether its format's own evidence makes it clean, the chance its payload is right, and each
/// byte's chance of being wrong.
/// <para>
/// Clean needs three things: the block began where the format marks a block start (lead-in or sync), its check value
/// matches the bytes, and that match is evidence (the bytes are not all alike in a way that satisfies the check for
/// free, not so many bits were guessed that some guess was bound to satisfy it, and, for a check weaker than 12 bits,
/// the decisions make a wrong block that passes it rarer than <see cref="WeakCheckCleanLeast"/> allows).
/// </para>
/// <para>
/// Each decision's odds of being wrong come from <see cref="DecisionLog"/> (a Gaussian tail over the block's spread).
/// That model is a guide to where errors lie, not a calibrated count of them: over thousands of decisions with
/// heavy-tailed residuals it can put the chance that all of them are right near zero while the block is exact. The
/// prior that a block is right is therefore an even mixture of that model and a plain one that counts only what is
/// known to be doubtful (guessed decisions, framing doubts and bytes wrong in ways no margin shows, at
/// <see cref="UnseenByteError"/> each). A block is then right given a holding check by Bayes, a wrong block passing
/// with the check's false-match odds (2^-w for w bits), and one wrong in two bytes or more with the odds that the check
/// cancels such errors (a sum or an xor cancels the same bit misread in two bytes: one pair in eight); a strong check
/// dominates whenever the reading is plausible, a weak one only where few bytes are in doubt.
/// </para>
/// </summary>
public sealed class BlockScorer
{
    /// <summary>
    /// The least chance that a byte is wrong in a way its decisions do not show (a character framed one bit off, a
    /// bit the margins misjudge). 2e-4 is the per-byte floor fitted for stream bytes on the recovery benchmark's fit
    /// tapes (seeds 1–4; see <see cref="Merge.MergeOptions.StreamByteErrorFloor"/>), not on the tapes it reports.
    /// </summary>
    public const double UnseenByteError = 2e-4;

    /// <summary>How many characters at an unproven start (or after a broken character) may have been framed on a false start bit.</summary>
    public const int DoubtfulFrames = 2;

    /// <summary>The least error odds of those characters.</summary>
    public const float DoubtfulFrameError = 0.3f;

    /// <summary>Beyond these odds of a false match among all the ways to guess the guessed bits, a holding check proves nothing.</summary>
    public const double MostGuessedMatchOdds = 0.01;

    /// <summary>
    /// A check whose false-match odds exceed this (one in 4096, a check of fewer than 12 bits) is weak: its holding
    /// makes a block clean only where the decisions vouch for the bytes too (<see cref="BlockDoubts.Uncorroborated"/>).
    /// An 8-bit sum or xor passes a randomly damaged block with odds 2^-8 (common practice).
    /// </summary>
    public const double WeakCheckFalseMatch = 1.0 / 4096;

    /// <summary>
    /// The least chance, by Bayes over its decisions (<see cref="PosteriorGivenMatch(double, double, double, double)"/>),
    /// that a block whose weak check holds is right, for it to be clean: a wrong block passing in fewer than one reading
    /// of a thousand. Our choice: a tape read eight settings a pass, three passes, gives a few hundred readings of a block
    /// format's tape, and a reading below it waits for a second capture that reads the same bytes.
    /// </summary>
    public const double WeakCheckCleanLeast = 0.999;

    /// <summary>
    /// The prior odds that a block read with one framing error (a start or stop bit where none should be) is right,
    /// before its check is looked at; with f errors, these odds over f. Fitted on the trust benchmark's pulse-width
    /// readings with a holding 8-bit sum (seeds 100–392, below the seeds it reports on): 94 % of those with one or
    /// two framing errors were right, 89 % with three, 61 % with more.
    /// </summary>
    public const double FramingSlipPriorOdds = 0.06;

    /// <summary>The chance that a block read with <paramref name="framingErrors"/> framing errors is right, before its check: odds <see cref="FramingSlipPriorOdds"/> over f.</summary>
    public static double FramingSlipRight(int framingErrors)
    {
        double odds = FramingSlipPriorOdds / framingErrors;
        return odds / (1 + odds);
    }

    /// <summary>The most doubt an edge character carries: a character off its neighbours' grid is near certainly false, and is kept as a byte of odds like one no decision vouches for.</summary>
    private const double MostEdgeError = 0.99;

    /// <summary>The weight of the plain prior (only known doubts) beside the decision model's: even, for want of knowing which is nearer.</summary>
    private const double PlainPriorWeight = 0.5;

    /// <summary>What keeps a reading whose check holds from being clean.</summary>
    private const BlockDoubts Disqualifying = BlockDoubts.NoStartEvidence | BlockDoubts.ChecksumMismatch | BlockDoubts.AllAlikeCheck | BlockDoubts.TooManyGuesses | BlockDoubts.Uncorroborated;

    private readonly BlockLayout _layout;
    private readonly BlockLayoutCodec _codec;
    private readonly IBlockChecksum? _checksum;
    private readonly FormatFamily _family;
    private readonly ConfidenceMap _map;
    private readonly string? _profileId;
    private readonly double? _characterBaud;
    private readonly int _characterBits;
    private readonly ByteFraming? _characterFraming;

    /// <summary>
    /// A scorer for blocks of <paramref name="layout"/> in a format of <paramref name="family"/>, calibrated by
    /// <paramref name="map"/> (the embedded <see cref="ConfidenceMap.Default"/> unless given), by the curves of
    /// <paramref name="profileId"/> where the map has them. <paramref name="characterBaud"/>: the baud of the
    /// asynchronous characters a layout without a checksum is read in, <paramref name="characterBits"/> the bits of
    /// their frame; the first and last character of such a block carry the doubt of a character at an edge of what was
    /// read (<see cref="CharacterEdge"/>). <paramref name="characterFraming"/>: their frame, by which a reading whose bits
    /// another framing also holds is doubted (<see cref="FramingAmbiguity"/>).
    /// </summary>
    public BlockScorer(BlockLayout layout, FormatFamily family, ConfidenceMap? map = null, string? profileId = null, double? characterBaud = null, int characterBits = 0, ByteFraming? characterFraming = null)
    {
        ArgumentNullException.ThrowIfNull(layout);
        _layout = layout;
        _family = family;
        _profileId = profileId;
        _characterBaud = characterBaud;
        _characterBits = characterBits;
        _characterFraming = characterFraming;
        _map = map ?? ConfidenceMap.Default;
        _codec = BlockLayoutCodec.For(layout);
        _checksum = _codec.Checksum;
    }

    /// <summary>Bytes of check value the layout puts after the payload (0 without a checksum).</summary>
    public int ChecksumBytes => _checksum?.Width ?? 0;

    /// <summary>
    /// Scores the block <paramref name="bytes"/> as read. Byte b was made by the decisions from
    /// <paramref name="byteFirstDecision"/>[b] up to the next byte's first (the last byte's run to the end of
    /// <paramref name="decisions"/>); <paramref name="byteFramingDoubt"/>[b] is the chance, beyond its decisions, that
    /// it was framed in the wrong place. <paramref name="guessedDecisions"/> decisions were guesses (erased bits).
    /// <paramref name="end"/>: what, beside its bytes, said where the block ends. <paramref name="byteSamples"/>: where
    /// each byte began in the capture (its start bit), which tells whether an edge character stands on its neighbours'
    /// grid (empty: not known).
    /// </summary>
    public BlockScore Score(
        ReadOnlySpan<byte> bytes,
        ReadOnlySpan<int> byteFirstDecision,
        ReadOnlySpan<float> byteFramingDoubt,
        DecisionLog decisions,
        int framingErrors,
        int guessedDecisions,
        BlockStartEvidence evidence,
        bool truncated,
        BlockEndEvidence end = BlockEndEvidence.OwnBytes,
        ReadOnlySpan<double> byteSamples = default)
    {
        ArgumentNullException.ThrowIfNull(decisions);
        int byteCount = bytes.Length;
        int headerBytes = _layout.IsStream ? 0 : Math.Min(_layout.HeaderBytes, byteCount);
        int checksumBytes = ChecksumBytes;
        int payloadEnd = truncated ? byteCount : Math.Max(headerBytes, byteCount - checksumBytes);
        bool startProven = evidence != BlockStartEvidence.None;

        // Per byte: log P(right) under the decision model, and under the plain one.
        var (sigma, typicalScale) = decisions.NoiseEstimate();
        var logModel = new double[byteCount];
        var logPlain = new double[byteCount];
        var byteMargin = new float[byteCount];
        int ambiguous = 0;
        double edgesRight = 1;
        double marginSum = 0;
        double minimumMargin = 1;
        for (int b = 0; b < byteCount; b++)
        {
            int first = byteFirstDecision[b];
            int last = b + 1 < byteCount ? byteFirstDecision[b + 1] : decisions.Count;
            double logOk = 0;
            int guesses = 0;
            float minMargin = 1;
            for (int i = first; i < last; i++)
            {
                logOk += decisions.LogRightOdds(i, sigma);
                float m = decisions.Margin(i);
                minMargin = Math.Min(minMargin, m);
                marginSum += m;
                if (m < DecisionLog.AmbiguousMargin)
                {
                    ambiguous++;
                }

                if (m <= 0)
                {
                    guesses++;
                }
            }

            double framing = Math.Log(1 - Math.Clamp(byteFramingDoubt[b], 0f, 0.99f));
            if (!startProven && b < DoubtfulFrames)
            {
                // Nothing marked where the block began: its first characters may have been framed on a false start.
                framing = Math.Min(framing, Math.Log(1 - DoubtfulFrameError));
            }

            if (_checksum is null && _characterBaud is { } baud && (b == 0 || b == byteCount - 1))
            {
                // Nothing checks these bytes, and the characters at the block's ends have no neighbour on one side to
                // hold their frame: they may have been framed on the transient where the signal began or broke off,
                // and more likely so where they stand off the grid their neighbours keep. How likely depends on what
                // the decoder saw there (a lead-in's onset, a dropout's fade, an idle line): each kind at its own price.
                bool firstEdge = b == 0;
                var kind = firstEdge
                    ? (evidence == BlockStartEvidence.LeadIn ? CharacterEdgeKind.FirstAfterLeadIn : CharacterEdgeKind.FirstAfterBreak)
                    : (end == BlockEndEvidence.SignalLost ? CharacterEdgeKind.LastBeforeBreak : CharacterEdgeKind.LastBeforeIdle);
                double offset = byteSamples.Length == byteCount ? CharacterEdge.OffsetBits(byteSamples, firstEdge, _characterBits) : 0;
                double edge = Math.Min(CharacterEdge.Error(minMargin, baud, offset, kind), MostEdgeError);
                framing = Math.Min(framing, Math.Log(1 - edge));
                edgesRight *= 1 - edge;
            }

            logModel[b] = logOk + framing;
            logPlain[b] = (guesses * -Math.Log(2)) + framing + Math.Log(1 - UnseenByteError);
            byteMargin[b] = minMargin;
            minimumMargin = Math.Min(minimumMargin, minMargin);
        }

        var doubts = BlockDoubts.None;

        // A block aligned on its own characters is a stream's way to start; a block of a checked format starts only
        // where the format marks one, whatever its bytes say.
        if (!startProven || (evidence == BlockStartEvidence.SelfAligned && _checksum is not null))
        {
            doubts |= BlockDoubts.NoStartEvidence;
        }

        if (framingErrors > 0)
        {
            doubts |= BlockDoubts.FramingErrors;
        }

        if (truncated)
        {
            doubts |= BlockDoubts.CutShort;
        }

        BlockStatus status;
        uint? stored = null;
        double confidence;
        if (_checksum is null)
        {
            // Nothing checks these bytes: the payload is right as far as every byte is, none better than the bytes
            // no margin vouches for. A block cut short has lost the rest of its payload.
            status = truncated ? BlockStatus.Failed : BlockStatus.Unchecked;
            confidence = truncated ? 0 : Math.Exp(SumFloored(logModel, headerBytes, payloadEnd));
        }
        else if (truncated)
        {
            status = BlockStatus.Failed;
            confidence = 0;
        }
        else
        {
            int payloadLength = payloadEnd - headerBytes;
            stored = _codec.ReadStoredCheck(bytes, payloadLength);
            bool match = _codec.ComputeCheck(bytes, payloadLength) == stored;
            if (!match)
            {
                doubts |= BlockDoubts.ChecksumMismatch;
            }
            else if (_codec.CoveredAllAlike(bytes, payloadLength) && !PlacedOnTape(evidence, end))
            {
                doubts |= BlockDoubts.AllAlikeCheck;
            }

            if (match && Math.ScaleB(_checksum.FalseMatchProbability, guessedDecisions) > MostGuessedMatchOdds)
            {
                // Erasures guessed as zeros can make a checksum's own codeword: an unproven reading, left to the merge.
                doubts |= BlockDoubts.TooManyGuesses;
            }

            double logModelAll = Sum(logModel, 0, byteCount);
            double logPlainAll = Sum(logPlain, 0, byteCount);
            double posterior = 0;
            if (match && (doubts & BlockDoubts.AllAlikeCheck) == 0)
            {
                double logPrior = LogMix(logModelAll, logPlainAll);
                if (framingErrors > 0)
                {
                    // A framing error says a character was misread somewhere, whatever the margins say.
                    logPrior = Math.Min(logPrior, Math.Log(FramingSlipRight(framingErrors)));
                }

                // The chance of two or more bytes wrong where the decisions show doubt: misread bits a weak check can
                // cancel in pairs. Errors no margin shows (the plain prior's floor: a frame slipped, bytes wrong alike
                // from there on) are no such pairs, and pass it with its false-match odds alone.
                double multiple = (1 - PlainPriorWeight) * MultipleWrong(logModel);
                posterior = PosteriorGivenMatch(logPrior, multiple, _checksum.FalseMatchProbability, _checksum.MultipleErrorMatchProbability);
            }

            bool weak = _checksum.FalseMatchProbability > WeakCheckFalseMatch;
            bool lengthDoubtful = end == BlockEndEvidence.MarkerOnly && ambiguous > 0;
            if (match && (framingErrors > 0 || (weak && (lengthDoubtful || guessedDecisions > 0 || logModelAll < Math.Log(0.5) || posterior < WeakCheckCleanLeast))))
            {
                // A weak check proves a block only beside decisions that already make it more likely right than not,
                // and only where, by Bayes over those decisions, a wrong block passing is rarer than one reading in
                // a thousand: two doubtful bytes whose errors cancel in a sum or an xor (the same bit misread in a byte and in
                // the check) pass it as often as one pair in eight.
                // Where only its end marker gave its length, every decision must vouch for itself: one ambiguous
                // pulse may have ended the block early or late, and the check over the bytes before holds by chance.
                // A framing error says a character was misread: a check of any strength that holds across it may be
                // one of the chance matches that thousands of damaged readings produce (an empty block whose length
                // field was misread, its check read from the bytes after it), so it too waits for a second capture.
                doubts |= BlockDoubts.Uncorroborated;
            }

            status = match && (doubts & Disqualifying) == 0 ? BlockStatus.Clean : BlockStatus.Failed;

            if (match && (doubts & BlockDoubts.AllAlikeCheck) == 0)
            {
                confidence = posterior;
            }
            else if (match && NothingVouches(doubts))
            {
                // Neither a marked start nor a check that could have failed: nothing independent of the bytes says a
                // block is here at all. This is the phantom of a stuck line or a steady tone after a loss of signal
                // (thirteen zero bytes after a dropout make block 0, length 0 and a zero CRC-16/XMODEM).
                confidence = 0;
            }
            else if (match)
            {
                // The check proves nothing here: the bytes are as likely right as what is known to be doubtful in them
                // says (guesses, framing, what no margin shows). Begun where the format marks a block, such a block is
                // mostly a real one of all-alike bytes (an empty file, a run of zeros): on the trust benchmark's
                // biphase tapes of seeds 100–143, 149 of 151 were right, where the decision model gave them near 0.
                // A framing error says a character was misread, and a check that alike bytes satisfy cannot say
                // otherwise: such a reading is no likelier right than the framing error's own odds. Without this, a
                // pulse-width reading of alike bytes with framing errors scored 0.9992 and 20 of 21 such readings of
                // the trust benchmark's tuning seeds were wrong.
                confidence = framingErrors > 0
                    ? Math.Min(Math.Exp(logPlainAll), FramingSlipRight(framingErrors))
                    : Math.Exp(logPlainAll);
            }
            else
            {
                // The payload is right only under its own header (a payload under a wrong block number or name is a
                // wrong block), so given the mismatch, the error must lie in the check bytes alone. A header that
                // claims no payload is no exception: its empty payload is right exactly when the header is (its
                // length field read as written), which is this same sum over the header's bytes; a length field
                // misread as 0 leaves the check to be read from the payload's first bytes, so the mismatch itself
                // weighs against the header, as much as the check bytes' own odds allow.
                confidence = PayloadRightGivenMismatch(SumFloored(logModel, 0, payloadEnd), SumFloored(logModel, payloadEnd, byteCount));
            }
        }

        // The model's estimate is a guide, not a rate: over thousands of decisions with heavy-tailed residuals it can
        // call an exact block hopeless, and a check that holds without proving anything says little either way. The
        // family's calibration map, fitted on readings of tuning seeds and grouped by what the check said (clean,
        // holding but unproven, broken, none), turns it into the rate at which such readings were right. A failed
        // reading whose check holds may so show high odds: its doubts say why it is not clean, and a second capture
        // that reads the same bytes proves it in the merge.
        double model = Math.Clamp(confidence, 0, 1);
        confidence = Math.Clamp(_map.Map(_profileId, _family, ConfidenceMap.GroupOf(status, doubts), model), 0, 1);

        // A clean reading is no surer than Bayes over its own check and decisions says. The map's clean curve is one
        // rate over clean readings of every check, most of them CRCs that a wrong block passes once in 2^16 or more; it
        // lifted a reading whose 8-bit sum held over two doubtful bytes (the same bit misread in a byte and in the sum)
        // from the model's 0.9989 to 0.9998, and a check of 8 bits cannot make us that sure of such a reading.
        if (status == BlockStatus.Clean)
        {
            confidence = Math.Min(confidence, model);
        }

        // Nor is a stream reading surer than its edge characters: each kind of edge is priced at the rate such edges
        // were measured wrong (CharacterEdge), and the map's one curve, which lifts readings whose many small inner
        // doubts under-claim, must not lift a reading past that. Before, a 300-baud reading whose first character after
        // the lead-in was as likely as 3 in 100 false went from the model's 0.954 to 0.996.
        if (status == BlockStatus.Unchecked)
        {
            confidence = Math.Min(confidence, edgesRight);

            // Nor surer than its framing: where another bit offset gives valid start and stop bits on every character
            // (a run of 0x00 framed a bit late reads 0x80), each character is decided clearly at the wrong offset too
            // and its decisions cannot tell. Unless they are all very clear, such a reading is priced at the rate it was
            // measured framed wrong; before, runs of 0x80 and 0xFF read where the tape held 0x00 and text stood at 0.993.
            double meanDistance = decisions.Count > 0 ? marginSum / decisions.Count : 0;
            if (_characterFraming is { } framing && _characterBaud is { } characterBaud && meanDistance < FramingAmbiguity.ClearMeanDistance
                && FramingAmbiguity.Unpinned(bytes, byteSamples, framing))
            {
                confidence = Math.Min(confidence, 1 - FramingAmbiguity.UnpinnedError(characterBaud));
            }
        }

        // A reading nothing vouches for stays at 0 whatever the map says: the map's lowest step is a rate over readings
        // that had some evidence, and a profile whose tuning tapes held no phantom would lift one to it.
        if (status != BlockStatus.Clean && NothingVouches(doubts))
        {
            confidence = 0;
        }

        // Per-byte odds as the decisions give them, before any check (the merge votes with them where no check
        // held); for bytes nothing checks, no better than the floor of what margins cannot see.
        bool unchecked_ = _checksum is null;
        float Odds(int b)
        {
            double wrong = 1 - Math.Exp(logModel[b]);
            return (float)(unchecked_ ? Math.Max(wrong, UnseenByteError) : wrong);
        }

        var headerOdds = new float[headerBytes];
        for (int b = 0; b < headerBytes; b++)
        {
            headerOdds[b] = Odds(b);
        }

        var payloadOdds = new float[payloadEnd - headerBytes];
        for (int b = headerBytes; b < payloadEnd; b++)
        {
            payloadOdds[b - headerBytes] = Odds(b);
        }

        var checksumOdds = new float[stored is null ? 0 : byteCount - payloadEnd];
        for (int b = 0; b < checksumOdds.Length; b++)
        {
            checksumOdds[b] = Odds(payloadEnd + b);
        }

        return new BlockScore
        {
            HeaderBytes = headerBytes,
            PayloadEnd = payloadEnd,
            Status = status,
            Doubts = doubts,
            Confidence = confidence,
            ModelConfidence = model,
            StoredChecksum = stored,
            HeaderErrorOdds = ImmutableArray.Create(headerOdds),
            PayloadErrorOdds = ImmutableArray.Create(payloadOdds),
            ChecksumErrorOdds = ImmutableArray.Create(checksumOdds),
            PayloadMargins = ImmutableArray.Create(byteMargin.AsSpan(headerBytes, payloadEnd - headerBytes)),
            AmbiguousDecisions = ambiguous,
            MinimumMargin = decisions.Count > 0 ? minimumMargin : 0,
            MeanMargin = decisions.Count > 0 ? marginSum / decisions.Count : 0,
            SnrDb = 20 * Math.Log10(typicalScale / sigma),
        };
    }

    /// <summary>
    /// Whether marks on tape that are not the block's bytes say where it begins and ends: a sync the format declares, read
    /// whole (the assembler takes the evidence away from a sync field read wrong), and the format's end marker where an
    /// earlier block's length field said the block would end. Then a check that holds over alike bytes (an empty payload,
    /// one byte and its XOR, a run of zeros) is evidence like any other: what makes such bytes for free is a stuck line
    /// or a steady tone after a loss of signal, which writes no sync and no end marker, let alone at the length another
    /// block gave. Misread bytes pass it with its false-match odds, as they would pass any other bytes. On the trust
    /// benchmark's three-class-pairs tapes of tuning seeds 12000–12024, all 1 508 readings of alike bytes begun on a
    /// lead-in and sync with no framing error or guess were right, and all were failed: the empty, one-byte or zero
    /// data blocks that nearly every tape holds kept every image from being clean.
    /// </summary>
    private static bool PlacedOnTape(BlockStartEvidence start, BlockEndEvidence end) =>
        start is BlockStartEvidence.Sync or BlockStartEvidence.LeadInAndSync && end == BlockEndEvidence.MarkerAtGivenLength;

    /// <summary>
    /// Whether nothing independent of the bytes themselves says a block is here: no start the format marks, and a check
    /// that the bytes satisfy for free (all alike, or nothing covered). Whatever the header claims, even a length of 0,
    /// such a reading is no evidence of a block.
    /// </summary>
    private static bool NothingVouches(BlockDoubts doubts) =>
        (doubts & (BlockDoubts.NoStartEvidence | BlockDoubts.AllAlikeCheck)) == (BlockDoubts.NoStartEvidence | BlockDoubts.AllAlikeCheck);

    /// <summary>P(right | checksum holds) by Bayes: a wrong block passes with the checksum's false-match odds.</summary>
    public static double PosteriorGivenMatch(double logAllOk, double falseMatch) => PosteriorGivenMatch(logAllOk, 0, falseMatch, falseMatch);

    /// <summary>
    /// P(right | checksum holds) by Bayes, over a prior that the block is right (e^<paramref name="logAllOk"/>) and
    /// that two or more of its bytes are wrong (<paramref name="multipleWrong"/>): a block wrong in one byte passes with
    /// <paramref name="falseMatch"/> (2^-w for a check of w bits), one wrong in several with
    /// <paramref name="multipleMatch"/> (the same for a CRC; one pair in eight for a sum or an xor, which cancel two
    /// errors at one bit position). A check of any width thus makes us at most as sure as its odds and the decisions allow.
    /// </summary>
    public static double PosteriorGivenMatch(double logAllOk, double multipleWrong, double falseMatch, double multipleMatch)
    {
        double ok = Math.Exp(logAllOk);
        double multiple = Math.Clamp(multipleWrong, 0, 1 - ok);
        double wrongPasses = ((1 - ok) * falseMatch) + (multiple * Math.Max(0, multipleMatch - falseMatch));
        return ok / (ok + wrongPasses);
    }

    /// <summary>The chance that two or more bytes are wrong, each byte right with odds e^<paramref name="logRight"/>[b] independently.</summary>
    private static double MultipleWrong(double[] logRight)
    {
        // Over the bytes in turn: the chance that none, exactly one, and two or more of those so far are wrong.
        double none = 1, one = 0, more = 0;
        foreach (double log in logRight)
        {
            double right = Math.Exp(log);
            more += one * (1 - right);
            one = (one * right) + (none * (1 - right));
            none *= right;
        }

        return more;
    }

    /// <summary>P(block right | checksum fails), <paramref name="logPayloadOk"/> over the bytes that must be right: the error must then lie in the rest (the check bytes).</summary>
    public static double PayloadRightGivenMismatch(double logPayloadOk, double logRestOk)
    {
        double payloadOk = Math.Exp(logPayloadOk);
        double restOk = Math.Exp(logRestOk);
        double anyWrong = 1 - (payloadOk * restOk);
        return anyWrong <= 1e-12 ? 0 : payloadOk * (1 - restOk) / anyWrong;
    }

    /// <summary>log(w·e^plain + (1 − w)·e^model), the even mixture of the two priors, without underflow.</summary>
    private static double LogMix(double logModel, double logPlain)
    {
        double a = Math.Log(1 - PlainPriorWeight) + logModel;
        double b = Math.Log(PlainPriorWeight) + logPlain;
        double max = Math.Max(a, b);
        return max + Math.Log(Math.Exp(a - max) + Math.Exp(b - max));
    }

    private static double Sum(double[] values, int from, int to)
    {
        double sum = 0;
        for (int i = from; i < to; i++)
        {
            sum += values[i];
        }

        return sum;
    }

    /// <summary>Σ log P(right) over bytes from..to, each byte no surer than <see cref="UnseenByteError"/> allows.</summary>
    private static double SumFloored(double[] logRight, int from, int to)
    {
        double ceiling = Math.Log(1 - UnseenByteError);
        double sum = 0;
        for (int i = from; i < to; i++)
        {
            sum += Math.Min(logRight[i], ceiling);
        }

        return sum;
    }
}
