using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.RoundTrip;

/// <summary>
/// A block altered on tape after its checksum was computed must not pass as Clean: the decoder reads the altered
/// bytes faithfully and the checksum says they are not the bytes that were written.
/// </summary>
public sealed class TamperedBlockTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    public static TheoryData<string, string> Cases()
    {
        var data = new TheoryData<string, string>();
        foreach (string id in RoundTrips.CheckedProfileIds)
        {
            foreach (string how in new[] { "payload byte", "single payload bit", "last payload byte", "header byte", "checksum byte" })
            {
                data.Add(id, how);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void A_block_altered_after_its_checksum_never_decodes_clean(string profileId, string how)
    {
        var profile = RoundTrips.Profile(profileId);
        var blocks = BlockWriter.Blocks(profile, RoundTrips.Files(profile));
        var truth = RoundTrips.Truth(profile, blocks);
        // A format of several block kinds: each block has its own kind's header and check; the header byte altered
        // is the first kind's where the second has no header field the check covers.
        var kinds = profile.BlockKinds;
        int target = how == "header byte" && HeaderOffset(kinds[1 % kinds.Count]) is null ? 0 : 1;
        var layout = kinds[target % kinds.Count];
        int header = layout.HeaderBytes;
        int check = ChecksumCatalog.Get(layout.Checksum!.Algorithm).Width;
        var tampered = blocks.Select(b => (byte[])b.Clone()).ToList();
        var block = tampered[target];
        switch (how)
        {
            case "payload byte":
                block[header + 10] ^= 0x5A;
                break;
            case "single payload bit":
                block[header + 3] ^= 0x10;
                break;
            case "last payload byte":
                block[block.Length - check - 1] ^= 0xFF;
                break;
            case "header byte":
                // The block-number field (the identity changes, the length does not), or the first covered field.
                block[HeaderOffset(layout)!.Value] ^= 0x04;
                break;
            default:
                block[^1] ^= 0x01;
                break;
        }

        // The same blocks untampered give the tape time of the target: altering bytes moves nothing.
        var window = RoundTrips.WriteAndDecode(folder, profile, blocks, new ChannelDamage()).Best[target];
        var result = RoundTrips.WriteAndDecode(folder, profile, tampered, new ChannelDamage());

        var atTarget = result.Candidates.Where(c => c.StartSeconds < window.EndSeconds && window.StartSeconds < c.EndSeconds).ToList();
        Assert.NotEmpty(atTarget);

        // A CRC of degree n detects every error burst of n bits or fewer (Peterson and Brown, "Cyclic Codes for Error
        // Detection", Proc. IRE, 1961); each alteration here lies within one byte.
        Assert.All(atTarget, c => Assert.Equal(BlockStatus.Failed, c.Status));
        if (how != "checksum byte")
        {
            var tamperedTruth = RoundTrips.Truth(profile, [block])[0];
            Assert.DoesNotContain(result.Candidates, c => c.Status == BlockStatus.Clean && tamperedTruth.Matches(c));
        }

        // The other blocks still come back clean and right.
        for (int i = 0; i < truth.Count; i++)
        {
            if (i != target)
            {
                Assert.Contains(result.Candidates, c => c.Status == BlockStatus.Clean && truth[i].Matches(c));
            }
        }
    }

    [Theory]
    [MemberData(nameof(CheckedProfiles))]
    public void The_failed_block_keeps_the_bytes_that_were_on_tape_and_says_it_is_doubtful(string profileId)
    {
        var profile = RoundTrips.Profile(profileId);
        var blocks = BlockWriter.Blocks(profile, RoundTrips.Files(profile));
        var tampered = blocks.Select(b => (byte[])b.Clone()).ToList();

        // The first block with a payload (a header block of a format with several kinds has none).
        int target = RoundTrips.Truth(profile, blocks).FindIndex(b => b.Payload.Length > 5);
        tampered[target][RoundTrips.Truth(profile, blocks)[target].Header.Length + 5] ^= 0x81;

        var window = RoundTrips.WriteAndDecode(folder, profile, blocks, new ChannelDamage()).Best[target];
        var result = RoundTrips.WriteAndDecode(folder, profile, tampered, new ChannelDamage());

        // The position that holds the target's stretch of tape (misreads by other settings may stand beside it).
        var first = result.Best.Where(b => b.StartSeconds < window.EndSeconds && window.StartSeconds < b.EndSeconds).MaxBy(b => b.Payload.Length)!;
        Assert.Equal(BlockStatus.Failed, first.Status);
        Assert.Equal(RoundTrips.Truth(profile, tampered)[target].Payload, first.Payload.ToArray());
        Assert.True(first.Confidence < 0.5, $"a block that fails its checksum claims confidence {first.Confidence}");
    }

    public static TheoryData<string> CheckedProfiles() => [.. RoundTrips.CheckedProfileIds];

    // Where to alter a header byte: the block-number field, else the first field the check covers (null: none).
    private static int? HeaderOffset(BlockLayout layout)
    {
        var field = layout.FieldWithRole(FieldRole.BlockNumber)
            ?? layout.Header.FirstOrDefault(f => f.Role != FieldRole.Sync
                && (layout.Checksum!.Covers == ChecksumCoverage.HeaderAndPayload || layout.Checksum.CoveredFields.Contains(f.Name)));
        if (field is null)
        {
            return null;
        }

        int offset = 0;
        foreach (var f in layout.Header)
        {
            if (f == field)
            {
                return offset + (f.BigEndian ? f.Bytes - 1 : 0);
            }

            offset += f.Bytes;
        }

        return null;
    }
}
