using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Tests.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// Positions no clean reading proved, resolved by vote: their confidence must not claim the near certainty of a proven
/// block where the check could not tell. A vote that holds a weak check may be a wrong block whose misread bits cancel
/// in it; bytes all alike hold a check for free, and one capture's run of zeros read as a block of its own is a phantom
/// that the captures which read that stretch of tape did not see.
/// </summary>
public sealed class VotedPositionConfidenceTests
{
    [Fact]
    public void A_vote_whose_misread_bits_cancel_in_an_xor_is_not_shown_near_certain()
    {
        // Block 1 read by one capture with one bit misread at the same place in two doubtful bytes: the xor of the
        // bytes, and so the 8-bit xor check, holds over the wrong bytes (two equal changes cancel in an xor; common
        // practice).
        var xor = Readings.BiphaseWith("xor8");
        var written = Readings.Written(xor, 1);
        int header = xor.Layout.HeaderBytes;
        var changed = new Dictionary<int, byte> { [10] = (byte)(written[header + 10] ^ 0x04), [20] = (byte)(written[header + 20] ^ 0x04) };
        var misread = Readings.Of(xor, written, 2.0, 1, changedPayload: changed, payloadErrors: new Dictionary<int, float> { [10] = 0.12f, [20] = 0.12f });
        Assert.Equal(BlockStatus.Clean, misread.Status);

        // Not clean for a reason of its own (as a reading with guessed bits is): only a vote can keep it.
        var reading = misread with { Status = BlockStatus.Failed, Doubts = BlockDoubts.TooManyGuesses, Confidence = 0.5 };
        var image = TapeMerger.Merge([Readings.Pass(0, Readings.Of(xor, Readings.Written(xor, 0), 1.0, 0), reading, Readings.Of(xor, Readings.Written(xor, 2), 3.0, 2))], xor);

        var block = image.Blocks.Single(b => b.BlockNumber == 1);
        Assert.Equal(RecoveryStatus.Voted, block.Status);
        Assert.NotEqual(written.AsSpan(header, 64).ToArray(), block.Payload.ToArray());

        // The two doubtful bytes put the vote at about 0.35 under its own bit odds, and a wrong vote passes an 8-bit
        // check one time in 256: 0.993 by those alone. But the same bit misread in both doubtful bytes, at any of the
        // bit positions the search reaches, holds the xor just as well (the written block is one of them): the vote
        // is one of several patterns that hold, and by Bayes over them about 0.98.
        Assert.True(block.Confidence < 0.99, $"a wrong vote at {block.Confidence}");
        Assert.True(block.Confidence > 0.5, $"the vote is still the likeliest content: {block.Confidence}");
    }

    [Fact]
    public void A_vote_under_a_crc_keeps_the_odds_of_the_crc()
    {
        // The same misread under CRC-16/XMODEM: it catches the pair (every error of two bits in a block this short;
        // CRC catalogue); the written block read with the same doubtful bytes holds it alone among the patterns the
        // search reaches, and is kept as near certain as before.
        var crc = Readings.BiphaseWith("crc16-xmodem");
        var written = Readings.Written(crc, 1);
        var doubtful = new Dictionary<int, float> { [10] = 0.12f, [20] = 0.12f };
        var reading = Readings.Of(crc, written, 2.0, 1, payloadErrors: doubtful) with { Status = BlockStatus.Failed, Doubts = BlockDoubts.TooManyGuesses, Confidence = 0.5 };
        var image = TapeMerger.Merge([Readings.Pass(0, Readings.Of(crc, Readings.Written(crc, 0), 1.0, 0), reading, Readings.Of(crc, Readings.Written(crc, 2), 3.0, 2))], crc);

        var block = image.Blocks.Single(b => b.BlockNumber == 1);
        Assert.Equal(RecoveryStatus.Voted, block.Status);
        Assert.Equal(written.AsSpan(crc.Layout.HeaderBytes, 64).ToArray(), block.Payload.ToArray());
        Assert.True(block.Confidence > 0.9999, $"a vote that holds a CRC-16 at {block.Confidence}");
    }

    [Fact]
    public void One_capture_s_run_of_zeros_read_as_a_block_is_weighed_against_the_captures_that_read_the_tape_there()
    {
        // CRC-16/XMODEM (init 0, no final xor: CRC catalogue) of zero bytes is zero, so block 0 of length 0 with a zero
        // check holds over five zero bytes. The scorer shows such a reading of alike bytes, begun where the format marks
        // a block, at the rate such readings were right (mostly real empty blocks): 0.991848 here.
        var profile = ProfileCatalog.BuiltIn.Get("biphase-1200");
        var checksum = ChecksumCatalog.Get("crc16-xmodem");
        Assert.Equal(0u, checksum.Compute(new byte[3]));
        var zeros = BlockWriter.Build(profile.Layout, string.Empty, 0, 0, []);
        Assert.Equal(new byte[5], zeros);
        var phantom = Readings.Of(profile, zeros, 2.6, 1) with
        {
            Status = BlockStatus.Failed,
            Doubts = BlockDoubts.AllAlikeCheck,
            Confidence = 0.991848,
            HeaderErrorOdds = [1e-4f, 1e-4f, 1e-4f],
            ChecksumErrorOdds = [1e-4f, 1e-4f],
        };

        // The first capture reads blocks 0 and 2, and the phantom between block 1's stretch and block 2; the other two
        // read blocks 0, 1 and 2 clean and nothing else.
        MergePass Pass(int n, bool first) => Readings.Pass(n, [
            Readings.Of(profile, Readings.Written(profile, 0), 1.0, 0),
            .. first ? new[] { phantom } : [Readings.Of(profile, Readings.Written(profile, 1), 2.0, 1)],
            Readings.Of(profile, Readings.Written(profile, 2), 3.0, 2),
        ]);
        var image = TapeMerger.Merge([Pass(0, first: true), Pass(1, first: false), Pass(2, first: false)], profile);

        var block = image.Blocks.Single(b => b.Status == RecoveryStatus.Voted);
        Assert.Empty(block.Payload);
        Assert.True(block.Confidence < 0.99, $"a phantom at {block.Confidence}");

        // By Bayes: the other two captures each read 3 of the tape's 3 proven blocks, (3 + 1) / (3 + 2) = 4/5 by the
        // merge's estimate, and missed none that another missed; both missing a block that is there is 1/25 as likely.
        double right = 0.991848 / 25;
        double missed = right / (right + (1 - 0.991848));

        // Its empty name breaks the name its proven neighbours agree on, which none of the tape's proven positions
        // does (0 of the 1 between two others): a block that is there does so at (0 + 1) / (1 + 2) = 1/3 by the
        // merge's estimate, so its odds are a third again.
        double named = missed / 3;
        Assert.Equal(named / (named + (1 - missed)), block.Confidence, 6);
        Assert.Equal(3, image.Blocks.Count(b => b.Status == RecoveryStatus.Clean));
    }
}
