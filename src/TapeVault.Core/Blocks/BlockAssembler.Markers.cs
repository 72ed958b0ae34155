namespace TapeVault.Core.Blocks;

// Blocks whose end the format marks on tape.
public sealed partial class BlockAssembler
{
    /// <summary>
    /// The format's end-of-block marker followed the bytes read so far: the block ends here. A block that holds
    /// fewer bytes than its layout says is cut short; one whose length the layout leaves open (a stream) is whole.
    /// </summary>
    public void EndAtMarker(double sample)
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

        Emit(sample, truncated: !_layout.IsStream && _bytes.Count < _expectedTotal);
    }
}
