using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// A position is a place on the tape. Readings by different settings that start at the same sync are one place; a
/// reading whose header nobody else read (a garbled block number or name) joins that place instead of making a
/// position of its own. The profile is the test-local biphase format of <see cref="LeadInProfiles"/>.
/// </summary>
public sealed class PositionsMisreadTests
{
    private static readonly FormatProfile Profile = LeadInProfiles.Biphase;

    private static BlockCandidate FailedReading(int blockNumber, double start, string setting, byte? misreadNumber = null)
    {
        var written = Readings.Written(Profile, blockNumber);
        if (misreadNumber is { } number)
        {
            written[0] = number;
        }

        // A payload byte read wrong: the checksum fails, so no reading here is clean.
        return Readings.Of(Profile, written, start, 0, setting, changedPayload: new Dictionary<int, byte> { [3] = (byte)(written[Profile.Layout.HeaderBytes + 3] ^ 0x10) });
    }

    [Fact]
    public void A_misread_header_at_the_same_sync_as_a_shared_one_joins_its_position()
    {
        // Block 5, failed in every setting: two settings read its header alike, a third misread the number as 77.
        var readings = new[]
        {
            FailedReading(5, 3.000, "s0"),
            FailedReading(5, 3.000, "s1"),
            FailedReading(5, 3.002, "s2", misreadNumber: 77),
            FailedReading(6, 4.500, "s0"),
        };

        var placed = BlockPositioner.Place(readings);

        // Two blocks were written, so two positions (before, the misread made a third).
        Assert.Equal(2, placed.Select(c => c.Position).Distinct().Count());
        Assert.Single(placed.Where(c => c.SettingName == "s2").Select(c => c.Position).Intersect(placed.Where(c => c.StartSeconds < 4).Select(c => c.Position)).Distinct());
    }

    [Fact]
    public void Readings_cut_short_before_their_payload_join_the_place_they_start_at_even_when_misread_alike()
    {
        // The capture ends inside block 5: two settings read its header and part of its payload; two settings that do
        // not suit the capture garble the header alike (number 77) and stop before any payload byte. Seen on the
        // three-class pair format at the end of a 30-minute capture: the garbled pair made positions of their own.
        var written = Readings.Written(Profile, 5);
        var garbled = (byte[])written.Clone();
        garbled[0] = 77;
        var readings = new[]
        {
            FailedReading(4, 1.500, "s0"),
            Readings.Of(Profile, written, 3.000, 0, "s0", truncateTo: 20),
            Readings.Of(Profile, written, 3.000, 0, "s1", truncateTo: 20),
            Readings.Of(Profile, garbled, 3.000, 0, "s2", truncateTo: 0),
            Readings.Of(Profile, garbled, 3.000, 0, "s3", truncateTo: 0),
        };

        var placed = BlockPositioner.Place(readings);

        // Two blocks began on this stretch of tape, so two positions (before, the garbled pair made a third).
        Assert.Equal(2, placed.Select(c => c.Position).Distinct().Count());
    }

    [Fact]
    public void A_misread_header_alone_at_its_place_is_still_a_position()
    {
        // Nothing else read block 6's place: its garbled reading is the only evidence of a block there.
        var readings = new[]
        {
            FailedReading(5, 3.000, "s0"),
            FailedReading(5, 3.000, "s1"),
            FailedReading(6, 4.500, "s2", misreadNumber: 99),
        };

        var placed = BlockPositioner.Place(readings);

        Assert.Equal(2, placed.Select(c => c.Position).Distinct().Count());
    }

    [Fact]
    public void A_reading_of_noise_between_two_blocks_is_no_position()
    {
        // In the lead-in between blocks 5 and 6 one setting read noise as a short block whose header agrees with no
        // header read near it (neither number nor length). Seen at random damage on formats that write each block
        // twice: the noise made a position, and as a block read between two copies it parted them into two more.
        var written = Readings.Written(Profile, 5);
        var noise = (byte[])written.Clone();
        noise[0] = 0xC3;
        noise[1] = 0x3C;
        var readings = new[]
        {
            Readings.Of(Profile, written, 3.000, 0, "s0"),
            Readings.Of(Profile, written, 3.000, 0, "s1"),
            Readings.Of(Profile, noise, 3.550, 0, "s2", truncateTo: 2),
            Readings.Of(Profile, Readings.Written(Profile, 6), 4.500, 0, "s0"),
        };

        var placed = BlockPositioner.Place(readings);

        // Two blocks were written, so two positions (before, the noise made a third).
        Assert.Equal(2, placed.Select(c => c.Position).Distinct().Count());
    }

    [Fact]
    public void A_failed_reading_that_starts_at_a_clean_blocks_sync_belongs_to_it_however_far_it_ran_on()
    {
        // A setting that does not suit the capture garbled block 5's length and ran on over the whole of block 6, which
        // it overlaps more than block 5: where it starts is where its sync was read; where it ended, a misread length's.
        var garbled = BlockWriter.Build(Profile.Layout, string.Empty, 0, 5, new byte[200]);
        garbled[0] = 0xC3;
        var longer = BlockWriter.Build(Profile.Layout, string.Empty, 0, 6, new byte[100]);
        var readings = new[]
        {
            Readings.Of(Profile, Readings.Written(Profile, 5), 3.000, 0, "s0"),
            Readings.Of(Profile, Readings.Written(Profile, 5), 3.000, 0, "s1"),
            Readings.Of(Profile, garbled, 3.001, 0, "s2", changedPayload: new Dictionary<int, byte> { [0] = 0xFF }),
            Readings.Of(Profile, longer, 3.600, 0, "s0"),
            Readings.Of(Profile, longer, 3.600, 0, "s1"),
        };

        var placed = BlockPositioner.Place(readings);

        var runOn = placed.Single(c => c.SettingName == "s2");
        Assert.True(runOn.EndSeconds > 4.3, "the garbled reading runs on over block 6");
        Assert.Equal(placed.First(c => c.SettingName == "s0").Position, runOn.Position);
        Assert.Equal(2, placed.Select(c => c.Position).Distinct().Count());
    }
}
