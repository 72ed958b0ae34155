using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.RoundTrip;

public sealed class EmptyFailedBlockTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    [Fact]
    public void FailedBlockWhoseDamagedHeaderClaimsNoPayloadHasNoConfidence()
    {
        // orrin-80 header: 8-byte name, 2-byte block number, 1-byte payload length (the profile's layout). Setting the
        // length byte to 0 after the CRC was computed gives exactly what a damaged header looks like to the decoder:
        // a block that claims no payload and fails its checksum. The written bytes are the ground truth.
        var profile = RoundTrips.Profile("orrin-80");
        var blocks = BlockWriter.Blocks(profile, [new TapeFile("EMPTY", Encoding.ASCII.GetBytes("SOME BYTES THAT WILL NOT BE READ"))]);
        var damaged = blocks[0].ToArray();
        damaged[10] = 0;
        var result = RoundTrips.WriteAndDecode(folder, profile, [damaged], new ChannelDamage { SnrDb = 30, Seed = 5 });

        var readings = result.Candidates.Where(c => c.Payload.IsEmpty && c.Status == BlockStatus.Failed && !c.Truncated).ToList();
        Assert.NotEmpty(readings);
        Assert.All(readings, c => Assert.Equal(0, c.Confidence));
    }
}
