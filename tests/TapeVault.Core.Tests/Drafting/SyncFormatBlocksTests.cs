using TapeVault.Core.Drafting;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>Blocks of symbols cut into bytes after a sync of some length (the sync format search's readings).</summary>
public sealed class SyncFormatBlocksTests
{
    /// <summary>
    /// A sync grown by the bytes every block holds alike is tried on every block, and a short block may end inside it:
    /// such a block holds no byte after the sync. Before, a block three frames shorter than the sync asked for an array
    /// of negative size and the whole draft stopped on an OverflowException.
    /// </summary>
    [Fact]
    public void A_block_that_ends_inside_the_sync_gives_no_reading()
    {
        var mapping = new BitMapping("plain", 0, 1);
        var framing = new ByteFraming(8, BitOrder.MsbFirst, string.Empty, string.Empty, Parity.None);
        int[] whole = [.. Enumerable.Repeat(0, 40), .. Enumerable.Repeat(1, 16)];
        int[] shortBlock = [.. Enumerable.Repeat(0, 10)];

        var blocks = SyncFormatSearch.Blocks([whole, shortBlock], sync: 40, mapping, framing, leadInSymbol: 0);

        // The long block's two bytes after its 40-bit sync, all ones (common practice: eight 1 bits are 0xFF); the short one is none.
        var only = Assert.Single(blocks);
        Assert.Equal([0xFF, 0xFF], only.First);
    }
}
