using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// The two copies of a block that no setting reads clean, checked against where the synthesiser wrote each copy of each
/// block (the saved layout is the reference): they are one position, not two. Where nothing is clean, only the syncs'
/// timing and the headers read tell the copies: the copies of a block are one length and each follows the one before
/// after the same lead-in, so the span from a copy's sync to the next copy's is the span from the last copy's sync to the
/// next block's (common practice for formats that write each block twice back to back); and a file name that two
/// settings read alike vouches for a block only where it was read, not garbled. The cases are readings the trust
/// benchmark saved (`TAPEVAULT_TRUST_CANDIDATES=folder`, seeds 144000 onwards, one pass of our channel model), cut to a
/// few blocks.
/// </summary>
public sealed class PositionCopiesApartTests
{
    [Fact]
    public void Copies_told_by_their_countdown_but_no_length_are_one_position_when_spaced_as_copies()
    {
        // three-class-pairs, seed 144001, pass 1, the readings from block 2 to block 6. No setting reads a header or a
        // block's end: every reading stops inside its countdown or ends where a lost marker ends it, so no length tells
        // how far apart copies lie. Block 3's first copy is unread (a dropout over its lead-in), so its second copy stands
        // alone, and block 4's copies follow it (5.153 s and 5.523 s), each read at a countdown that tells its copy; the
        // next block's first copy follows block 4's second after the same span. Before, block 4's copies were two
        // positions (the shortest whole reading at its first copy, 96 ms, made copies 370 ms apart seem too far apart).
        PositionCopiesReadNamedTests.AssertOnePositionPerBlock("three-class-pairs-copies-never-clean-after-lone-copy-one-pass.json", block: 4);
    }

    [Fact]
    public void A_file_name_garbled_alike_in_print_but_not_in_bytes_vouches_for_no_other_block()
    {
        // orrin-80, seed 144008, pass 2, the readings from block 0 to block 3. At block 1's first copy (2.362 s) two
        // settings read the file's name with its third byte garbled, each to a different byte that cannot be printed
        // (0xB0 and 0x10), so both names show as "F0?81"; at the second copy two settings read "F0081". Before, the two
        // printed names, each "read alike by two settings", named two blocks and kept the copies in two positions.
        PositionCopiesReadNamedTests.AssertOnePositionPerBlock("orrin-80-copy-name-garbled-unprintably-one-pass.json", block: 1);
    }

    [Fact]
    public void Names_two_settings_garble_alike_keep_no_copies_apart()
    {
        // orrin-80, seed 144000, pass 1, the readings from block 0 to block 3; no setting reads any block clean, and no
        // file name is read: settings that read the same edges (line-rise and line-narrow, line-both and line-fixed) garble
        // each header alike to names of unprintable bytes. Before, those names, each "read alike by two settings", kept
        // the copies of blocks 0 and 2 in two positions each (6 positions for 4 blocks).
        PositionCopiesReadNamedTests.AssertOnePositionPerBlock("orrin-80-garbled-names-read-alike-never-clean-one-pass.json", block: 2);
    }

    [Fact]
    public void A_garbled_name_two_settings_read_at_every_place_joins_no_blocks()
    {
        // orrin-80, seed 180039, pass 1, the readings from block 0 to block 3; no setting reads any block clean. Two
        // settings that read the same edges (line-both and line-fixed) garble every header to the same bytes, the name
        // "????????" and one block number, at every place they read, and a third (line-rise) reads each block's copies
        // alike. Before, that one garble, "read alike by two settings" at each place, was taken for an identity: the first
        // copies of blocks 1 and 2 and one reading of block 3's first were one position, and the rest of each block
        // another (5 positions for 4 blocks).
        // The reference is where the synthesiser wrote each copy.
        PositionCopiesReadNamedTests.AssertOnePositionPerBlock("orrin-80-one-garble-of-every-name-never-clean-one-pass.json", block: 2);
    }

    [Fact]
    public void A_blocks_copies_before_two_unread_first_copies_in_a_row_are_one_position()
    {
        // orrin-80, seed 170004, pass 2, the readings from block 2 to block 7; no setting reads any block clean. Block 4's
        // copies are read at 4.409 s and 4.700 s (0.291 s apart, one length and the gap), then the first copies of blocks 5
        // and 6 are unread: from block 4's second copy the next sync read is block 5's second, 0.616 s on (block 4's span
        // and block 5's, 0.325 s), and from there block 6's second, 0.635 s on (block 5's and block 6's, 0.310 s), which
        // spans 0.309 s to block 7's first copy. Before, only one unread first copy in a row was followed, and block 4's
        // copies were two positions. The reference is where the synthesiser wrote each copy.
        PositionCopiesReadNamedTests.AssertOnePositionPerBlock("orrin-80-first-copies-unread-in-a-row-never-clean-one-pass.json", block: 4);
    }
}
