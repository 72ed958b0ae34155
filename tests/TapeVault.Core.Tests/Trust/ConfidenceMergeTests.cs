using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.Merge;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>Agreement of independent captures raises confidence, never lowers it; an image read alike by every capture is trusted whole.</summary>
public sealed class ConfidenceMergeTests
{
    private static MergePass ThreeBlocks(FormatProfile profile, int capture, BlockCandidate middle) =>
        Readings.Pass(capture, Readings.Of(profile, Readings.Written(profile, 0), 1.0, 0), middle, Readings.Of(profile, Readings.Written(profile, 2), 3.0, 2));

    [Theory]
    [InlineData(0.1f)]
    [InlineData(0.05f)]
    [InlineData(0.002f)]
    public void Two_captures_that_agree_are_trusted_at_least_as_much_as_either_alone(float byteError)
    {
        // An 8-bit check over doubtful bytes: one clean reading may be well under even odds. A second capture that
        // read the same bytes can only add to it: both are wrong only if each is.
        var xor8 = Readings.BiphaseWith("xor8");
        var block = Readings.Written(xor8, 1);
        BlockCandidate Reading() => Readings.Of(xor8, block, 2.0, 1, baseError: byteError);

        var one = TapeMerger.Merge([ThreeBlocks(xor8, 0, Reading())], xor8).Blocks[1];
        var two = TapeMerger.Merge([ThreeBlocks(xor8, 0, Reading()), ThreeBlocks(xor8, 1, Reading())], xor8).Blocks[1];

        Assert.Equal(RecoveryStatus.Clean, two.Status);
        Assert.Equal(2, two.AgreeingCaptures);
        Assert.Equal(Reading().Confidence, one.Confidence, 9);
        Assert.True(two.Confidence >= one.Confidence, $"two agreeing captures {two.Confidence} < one {one.Confidence}");
        Assert.Equal(1 - ((1 - one.Confidence) * (1 - one.Confidence)), two.Confidence, 9);
    }

    [Fact]
    public void Two_clean_readings_that_disagree_share_the_position_and_neither_is_sure()
    {
        var crc = ProfileCatalog.BuiltIn.Get("biphase-1200");
        var a = Readings.Written(crc, 1, seed: 1);
        var b = Readings.Written(crc, 1, seed: 2);
        var merged = TapeMerger.Merge([ThreeBlocks(crc, 0, Readings.Of(crc, a, 2.0, 1)), ThreeBlocks(crc, 1, Readings.Of(crc, b, 2.0, 1))], crc).Blocks[1];

        Assert.True(merged.Conflict);
        Assert.InRange(merged.Confidence, 0.4, 0.6);
    }

    [Fact]
    public void A_vote_over_bytes_all_alike_is_only_as_sure_as_the_readings_of_them()
    {
        // Block 0, length 0, check 0x0000: CRC-16/XMODEM (the CRC catalogue's parameters: init 0x0000, no final xor) of
        // zero bytes is zero, so a run of zeros (this format's lead-in is zeros) passes for that block whatever the
        // check's strength. The scorer leaves such a reading unproven (AllAlikeCheck) at the rate its group was right.
        // A vote over that one reading proves nothing more; before, the repair search counted the CRC's 1-in-65 536
        // false-match odds and voted the position at 0.995 (bench: 2 such positions of 9 read by one capture were wrong).
        var crc = ProfileCatalog.BuiltIn.Get("biphase-1200");
        var zeros = new byte[crc.Layout.HeaderBytes + 2];
        var phantom = Readings.Of(crc, zeros, 2.0, 1) with
        {
            Status = BlockStatus.Failed,
            Doubts = BlockDoubts.AllAlikeCheck,
            Confidence = 0.8,
            HeaderErrorOdds = [1e-4f, 1e-4f, 1e-4f],
            ChecksumErrorOdds = [1e-4f, 1e-4f],
        };

        var merged = TapeMerger.Merge([ThreeBlocks(crc, 0, phantom)], crc).Blocks[1];

        Assert.Equal(RecoveryStatus.Voted, merged.Status);
        Assert.Empty(merged.Payload);
        Assert.Equal(0.8, merged.Confidence, 9);
    }

    [Fact]
    public void A_byte_identical_image_of_clean_agreed_positions_is_trusted_whole()
    {
        // Two captures of one tape (a little hiss, of different seeds), each band-limited by SoX (the outside reference: "lowpass 3000 highpass 200"),
        // decoded and merged: every position clean, read alike by both, and exactly the bytes written. The image's
        // confidence is the chance that every position is right.
        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");
        var random = new Random(77);
        var content = new byte[2500];
        random.NextBytes(content);
        var files = new List<TapeFile> { new("DATA", content) };
        var folder = Directory.CreateTempSubdirectory("tapevault-confidence-").FullName;
        try
        {
            var results = new List<DecodeResult>();
            for (int pass = 0; pass < 2; pass++)
            {
                string synthesised = Path.Combine(folder, $"synth-{pass}.wav");
                string path = Path.Combine(folder, $"pass-{pass}.wav");
                CaptureSynthesizer.Write(synthesised, profile, files, new ChannelDamage { SnrDb = 30, Seed = 3 + pass });
                OutsideTool.Sox(synthesised, path, "lowpass", "3000", "highpass", "200");
                results.Add(CaptureDecoder.Decode(path, profile));
            }

            var image = TapeMerger.Merge(results, ["pass-0.wav", "pass-1.wav"]);
            var written = BlockWriter.Blocks(profile, files);
            int header = profile.Layout.HeaderBytes;

            Assert.Equal(written.Count, image.Blocks.Length);
            for (int i = 0; i < written.Count; i++)
            {
                var block = image.Blocks[i];
                Assert.Equal(RecoveryStatus.Clean, block.Status);
                Assert.Equal(2, block.AgreeingCaptures);
                Assert.Equal(written[i].AsSpan(0, header).ToArray(), block.Header.ToArray());
                Assert.Equal(written[i].AsSpan(header, block.Payload.Length).ToArray(), block.Payload.ToArray());
            }

            Assert.True(image.OverallConfidence >= 0.99, $"overall confidence {image.OverallConfidence}; per position {string.Join(", ", image.Blocks.Select(b => b.Confidence.ToString("0.0000", System.Globalization.CultureInfo.InvariantCulture)))}");
        }
        finally
        {
            Directory.Delete(folder, recursive: true);
        }
    }
}
