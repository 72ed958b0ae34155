namespace TapeVault.Core.Blocks;

/// <summary>
/// The one way the symbol decoders and framers hand their work to the block stage: where a block begins and on what
/// evidence, each decision (read, or guessed), each byte with the index of its first decision, and where the block
/// ends. Nothing else of the block stage (its decision log, its scorer) is theirs to touch. <see cref="BlockAssembler"/>
/// is the block stage's implementation; a test may record what a decoder hands over.
/// </summary>
public interface IBlockSink
{
    /// <summary>Whether a block is under way (between <see cref="Begin"/> and its end).</summary>
    bool InBlock { get; }

    /// <summary>How many decisions the block being read holds so far: the index the next decision will have.</summary>
    int DecisionCount { get; }

    /// <summary>
    /// A block begins at <paramref name="sample"/>, on the strength of <paramref name="evidence"/>. A block begun on no
    /// evidence is never clean, whatever its check says: it may be noise or the middle of another block.
    /// </summary>
    void Begin(double sample, BlockStartEvidence evidence);

    /// <summary>
    /// The sink that reads a block begun inside the data of this one's block while that block reads on (and whose
    /// block this one reads on over when the roles turn): null where blocks are read one at a time.
    /// </summary>
    IBlockSink? Alongside { get; }

    /// <summary>
    /// A block begins at <paramref name="sample"/> inside the data of the block that <see cref="Alongside"/> is reading
    /// (a gap and a sync read whole there), and both read on, each by its own length. Each one's check chooses: where
    /// the block read on over this one holds its check, this one is its data, not a block, and is not handed on; where
    /// it does not, it ends at <paramref name="cutSample"/> (where the gap began) and this one is a block of its own.
    /// </summary>
    void BeginInside(double sample, BlockStartEvidence evidence, double cutSample);

    /// <summary>
    /// One decision that was read (pulse class, bit, tone): its distance to the decision boundary, its residual from
    /// the nominal value, and the distance from nominal to the boundary, all in one unit.
    /// </summary>
    void AddDecision(float distance, float residual, float scale);

    /// <summary>
    /// A decision that was guessed, not read (an erased bit bridging a dropout, a marker or stop bit the signal did not
    /// show): margin 0, counted as a guess. A check that holds over n guesses vouches for them only as far as its
    /// false-match odds reach: n guesses are 2^n tries.
    /// </summary>
    void AddGuessedDecision();

    /// <summary>The signal level (envelope, full scale 1) where the block's decisions were taken.</summary>
    void NoteLevel(float envelope);

    /// <summary>The playback speed (relative to nominal) the decoder measured while reading the block.</summary>
    void NoteSpeed(double speed);

    /// <summary>
    /// One byte whose decisions start at <paramref name="firstDecision"/>; true when the block is complete.
    /// <paramref name="framingDoubt"/> is the chance, beyond its decisions, that the byte was framed in the wrong place
    /// (an asynchronous character whose start bit nothing confirmed).
    /// </summary>
    bool AddByte(byte value, int firstDecision, bool framingOk, double sample, float framingDoubt = 0);

    /// <summary>
    /// The block ends at <paramref name="sample"/> where its bytes stopped: a stream block ends here; a fixed block ends
    /// short and fails. <paramref name="signalLost"/>: because the signal was lost (a dropout), not because the line went
    /// idle or the capture ended.
    /// </summary>
    void End(double sample, bool signalLost = false);

    /// <summary>
    /// The format's end-of-block marker followed the bytes read so far; <paramref name="asWritten"/> is false where the
    /// block ended without the marker its format writes (a framing error).
    /// </summary>
    void EndAtMarker(double sample, bool asWritten = true);
}
