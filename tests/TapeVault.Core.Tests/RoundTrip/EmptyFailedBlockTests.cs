using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.RoundTrip;

public sealed class EmptyFailedBlockTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    [Fact]
    public void FailedBlockWhoseDamagedHeaderClaimsNoPayloadIsUnlikelyRight()
    {
        // orrin-80 header: 8-byte name, 2-byte block number, 1-byte payload length (the profile's layout). Setting the
        // length byte to 0 after the CRC was computed gives exactly what a damaged header looks like to the decoder:
        // a block that claims no payload and fails its checksum (it was read as 1.0 once). Its empty payload is right
        // only if its header is, and the mismatch weighs against that: the error lies either in the header or in the
        // two check bytes, and eleven header bytes are more places for it than two. Wrong here, it must stay well
        // below even odds, though not at 0: a header that sound is sometimes right and its check misread.
        var profile = RoundTrips.Profile("orrin-80");
        var blocks = BlockWriter.Blocks(profile, [new TapeFile("EMPTY", Encoding.ASCII.GetBytes("SOME BYTES THAT WILL NOT BE READ"))]);
        var damaged = blocks[0].ToArray();
        damaged[10] = 0;
        var result = RoundTrips.WriteAndDecode(folder, profile, [damaged], new ChannelDamage { SnrDb = 30, Seed = 5 });

        var readings = result.Candidates.Where(c => c.Payload.IsEmpty && c.Status == BlockStatus.Failed && !c.Truncated).ToList();
        Assert.NotEmpty(readings);
        Assert.All(readings, c =>
        {
            Assert.InRange(c.ModelConfidence, 0, 0.2);
            Assert.InRange(c.Confidence, 0, 0.2);
        });
    }
}
