using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// Positions on captures where no setting reads any block clean, checked against where the synthesiser wrote each copy
/// of each block (the saved layout is the reference). A position is a place on the tape: the readings of different
/// settings that start at one sync are one copy of one block (common practice: every setting reads the same capture,
/// so their readings of one block line up in time). A header that one setting misreads all along the capture alike, or
/// that names only a block's kind (every data block of the format carries the same), names no place: it must not carry
/// a place into another block's position. And a whole reading that claims no payload, alone at its sync in the gap
/// between syncs that other settings read, is the lead-in read as an empty header, not a block. The cases are readings
/// the trust benchmark saved (`TAPEVAULT_TRUST_CANDIDATES=folder`, tuning seeds), cut to a few blocks.
/// </summary>
public sealed class PositionsReadAlikeAtPlaceTests
{
    [Fact]
    public void Readings_of_one_sync_whose_headers_name_only_a_kind_share_the_copys_position()
    {
        // three-class-pairs, tuning seed 10001, pass 2 (our channel model), the readings from block 9 to block 16; no
        // setting reads the countdown, so no reading tells its copy, and every whole reading's identity is its kind's
        // number (":0" header, ":1" data) or one setting's garble of every header alike. Before, the readings cut short at
        // block 10's first copy took the data kind's number from a reading there and joined block 9's position, and the
        // other settings' readings of that sync lay in three more positions (11 positions for 8 blocks).
        PositionCopiesReadNamedTests.AssertOnePositionPerBlock("three-class-pairs-kind-numbers-never-clean-one-pass.json", block: 10);
        AssertNoPositionOfNone("three-class-pairs-kind-numbers-never-clean-one-pass.json");
    }

    [Fact]
    public void An_empty_header_read_alone_in_a_gap_makes_no_position()
    {
        // orrin-80, tuning seed 10014, pass 0 (our channel model), the readings from block 3 to block 5. One setting reads
        // the gap after block 3 as a block with an empty header and no payload (5.948 s), alone at its sync. Before, it
        // was a position of its own, and block 3's copies lay in two positions (6 positions for 3 blocks).
        PositionCopiesReadNamedTests.AssertOnePositionPerBlock("orrin-80-empty-header-in-gap-never-clean-one-pass.json", block: 4);
        AssertNoPositionOfNone("orrin-80-empty-header-in-gap-never-clean-one-pass.json");
    }

    /// <summary>Placed again, every position holds a reading that starts at the sync of a written copy.</summary>
    private static void AssertNoPositionOfNone(string caseFile)
    {
        var (capture, placed) = SavedCapture.PlaceAgain(caseFile);
        foreach (var position in placed.GroupBy(c => c.Position))
        {
            Assert.True(position.Any(c => capture.WrittenAt(c) is not null), $"position {position.Key} holds no reading of a written copy");
        }
    }
}
