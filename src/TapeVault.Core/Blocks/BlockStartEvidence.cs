namespace TapeVault.Core.Blocks;

/// <summary>What the signal showed where a block began: the format's own marks of a block start, or none.</summary>
public enum BlockStartEvidence
{
    /// <summary>Nothing marked the start (a decoder resumed after a loss of signal at the first character it found).</summary>
    None,

    /// <summary>A lead-in of the length the profile asks for.</summary>
    LeadIn,

    /// <summary>The profile's sync pattern or sync bytes, without a lead-in before them.</summary>
    Sync,

    /// <summary>A lead-in followed by the sync.</summary>
    LeadInAndSync,

    /// <summary>
    /// No lead-in or sync (a stream taken up mid-way), but the decoder checked its framing against the characters
    /// themselves and put what doubt remains into each byte's own framing odds; the block stage adds none of its own.
    /// </summary>
    SelfAligned,
}

/// <summary>What, beside the block's own bytes, said where a block ends.</summary>
public enum BlockEndEvidence
{
    /// <summary>Nothing but its own bytes: the layout's fixed length, or a length field among the bytes read.</summary>
    OwnBytes,

    /// <summary>Only the format's end marker: a kind whose length an earlier block gives, read without that block.</summary>
    MarkerOnly,

    /// <summary>
    /// The format's end marker, read where an earlier block's length field said the block would end: two marks on tape,
    /// neither of them this block's bytes, that agree.
    /// </summary>
    MarkerAtGivenLength,

    /// <summary>
    /// Nothing: the signal was lost there (a dropout), and a stream's block ended with it. Its last character stands
    /// before a break, not before an idle line (<see cref="Bytes.CharacterEdgeKind"/>).
    /// </summary>
    SignalLost,
}

/// <summary>Why a block is not clean, or what lowers the trust in it; several may hold at once.</summary>
[Flags]
public enum BlockDoubts
{
    None = 0,

    /// <summary>The block began where nothing marked a block start: it may be a stretch of noise or the middle of another block.</summary>
    NoStartEvidence = 1,

    /// <summary>The block ended before its layout said it would (dropout or lost sync).</summary>
    CutShort = 2,

    /// <summary>The check value does not match the bytes.</summary>
    ChecksumMismatch = 4,

    /// <summary>
    /// The check holds, but over bytes that give it for free: every covered byte and every check byte alike (a zero-init
    /// CRC, xor8 or sum8 over zeros), or nothing covered at all. A stuck line or a steady tone reads as such a run. Not
    /// a doubt where marks on tape that are not the block's bytes place it (a sync the format declares, read whole, and
    /// an end marker where an earlier block's length said the block ends): a stuck line makes neither.
    /// </summary>
    AllAlikeCheck = 8,

    /// <summary>So many bits were guessed that the check's false-match odds over all the ways to guess them prove nothing.</summary>
    TooManyGuesses = 16,

    /// <summary>Some byte's framing failed (a stop bit or marker where none should be); the check holds only by chance over a slip.</summary>
    FramingErrors = 32,

    /// <summary>
    /// The check holds, but nothing else vouches for the bytes: some character's framing failed (whatever the check),
    /// or the check is a weak one (an 8-bit sum or xor passes about one damaged block in 256, common practice) over a
    /// guessed bit or decisions whose margins make the block less likely right than not. The reading is probably right, as its confidence says, but not
    /// proven; a second capture that reads the same bytes proves it in the merge.
    /// </summary>
    Uncorroborated = 64,
}
