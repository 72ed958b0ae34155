using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// Positions of a format of two block kinds (a header block and a data block, each written twice) on a capture where
/// every setting stops before a field that names the block, checked against where each copy of each block was written.
/// A reading cut short there reads no field that names its block; the kind it was expected to be numbers it (`:0`,
/// `:1`), and that number is the same for every file's block of that kind. The case is readings the trust benchmark
/// saved (`TAPEVAULT_TRUST_CANDIDATES=folder`: one pass of our channel model, its readings by every setting, the blocks
/// written, and where the synthesiser wrote each copy, on the capture's time base).
/// </summary>
public sealed class PositionKindNumberTests
{
    [Fact]
    public void Readings_that_read_no_field_of_different_blocks_are_not_one_position_by_their_kind_number()
    {
        // three-class-pairs, tuning seed 12003, pass 2 (our channel model): 22 written blocks (11 files, a header and a
        // data block each), 44 copies; its 237 readings by seven settings all stop before the file's name
        // (in the countdown, or just after the header block's type byte), so none is clean and none names a file. Before, 13 positions for the 22 blocks, 16 blocks' readings in another block's position: the same kind
        // number read at one sync after another joined them.
        var (capture, placed) = SavedCapture.PlaceAgain("three-class-pairs-no-header-read-one-pass.json");

        foreach (var position in placed.GroupBy(c => c.Position))
        {
            var blocks = position.Select(c => capture.WrittenAt(c)).Where(w => w is not null).Select(w => w!.Value.Block).Distinct().ToList();
            Assert.True(blocks.Count <= 1, $"position {position.Key} holds readings of blocks {string.Join(", ", blocks)}");
        }
    }
}
