namespace TapeVault.Core.Blocks;

// Blocks whose end the format marks on tape.
public sealed partial class BlockAssembler
{
    /// <summary>
    /// Whether the format marks each block's end (set from the profile): a block is complete at its end marker
    /// (<see cref="EndAtMarker"/>), not when its layout's length is reached, so a block of another kind than expected
    /// is still read whole.
    /// </summary>
    private readonly bool _endMarked;

    /// <summary>
    /// The format's end-of-block marker followed the bytes read so far: the block ends here. A block that holds
    /// fewer bytes than its layout says is cut short; one whose length the layout leaves open (a stream) is whole.
    /// <paramref name="asWritten"/> is false where the block ended without the marker its format writes (the next
    /// lead-in began where a byte's or the end's marker should be): a framing error, for a block whose length only
    /// that marker gives may have lost its tail, and a weak check over the bytes before holds by chance.
    /// </summary>
    public void EndAtMarker(double sample, bool asWritten = true)
    {
        if (!InBlock)
        {
            return;
        }

        if (_bytes.Count == 0)
        {
            InBlock = false;
            return;
        }

        if (!asWritten)
        {
            _framingErrors++;
        }

        if (_kinds.Many)
        {
            // The marker says where the block ends, and so which kind it is: the one its length fits.
            (_layout, _scorer, _codec, int expected) = _kinds.Fit(System.Runtime.InteropServices.CollectionsMarshal.AsSpan(_bytes));
            _expectedTotal = expected;
        }

        // A length nothing gave (an earlier block that was not read) is what the marker says.
        bool shortOfLayout = _bytes.Count < _layout.HeaderBytes + _scorer.ChecksumBytes
            || (_expectedTotal != int.MaxValue && _bytes.Count < _expectedTotal);
        Emit(sample, truncated: !_layout.IsStream && shortOfLayout, atMarker: true);
    }
}
