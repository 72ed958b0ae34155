using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// A capture that ends inside a block: the block's second copy is cut short, and settings that do not suit the
/// capture garble its start. Seen on the three-class pair format at the end of a 30-minute capture (62 of 65 positions
/// clean): the cut copy took the identity of another file's block (its header is the countdown every data block
/// repeats) and the garbled readings, sharing a misread identity with misreads elsewhere, made positions of their own.
/// </summary>
public sealed class CaptureEndPositionTests(OutsideTempFolder temp) : IClassFixture<OutsideTempFolder>
{
    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    public void A_copy_cut_off_by_the_end_of_the_capture_joins_its_first_copys_position(int seed)
    {
        var profile = ProfileCatalog.BuiltIn.Get("three-class-pairs");
        var rng = new Random(seed);
        var files = new List<TapeFile>();
        for (int f = 0; f < 2; f++)
        {
            var content = new byte[400];
            rng.NextBytes(content);
            files.Add(new TapeFile($"F{f}", content));
        }

        var blocks = BlockWriter.Blocks(profile, files);
        var damage = new ChannelDamage { SnrDb = 24, WowPercent = 0.2, Seed = seed };
        var model = CaptureSynthesizer.Model(profile, blocks, damage, out double tape);

        // The capture stops one eighth of the tape before its end: inside the second copy of the last data block.
        string path = temp.File($"cut-{seed}.wav");
        long limit = (long)(tape * 7 / 8 * damage.SampleRate);
        using (var writer = new CaptureWriterStream(path, damage.SampleRate))
        {
            var chunk = new float[16_384];
            long written = 0;
            int count;
            while (written < limit && (count = model.Render(chunk)) > 0)
            {
                int take = (int)Math.Min(count, limit - written);
                writer.Write(chunk.AsSpan(0, take));
                written += take;
            }
        }

        var result = CaptureDecoder.Decode(path, profile);

        // Two files of a header block and a data block each, every block written twice: four positions, each with a
        // whole copy read clean (before, six: the cut copy and the garbled readings of it made two more).
        Assert.Equal(4, result.Best.Count);
        Assert.All(result.Best, b => Assert.Equal(BlockStatus.Clean, b.Status));
    }
}
