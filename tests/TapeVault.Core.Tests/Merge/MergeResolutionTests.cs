using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Merge;

/// <summary>
/// How the merge resolves one position, on candidates built by hand (as the archive rebuilds them from their stored
/// fields). Ground truth is the blocks as <see cref="BlockWriter"/> lays them out, with checksums from the catalogue
/// (whose algorithms are checked against the CRC catalogue's published check values in ChecksumTests).
/// </summary>
public sealed class MergeResolutionTests
{
    private static readonly FormatProfile Crc16 = ProfileCatalog.BuiltIn.Get("biphase-1200");

    private static byte[] Written(FormatProfile profile, int blockNumber, int seed = 0) => Readings.Written(profile, blockNumber, seed);

    /// <summary>Three blocks at 1 s intervals, read clean, except the middle one as <paramref name="middle"/> gives.</summary>
    private static MergePass ThreeBlocks(FormatProfile profile, int capture, BlockCandidate middle) =>
        Readings.Pass(capture, Readings.Of(profile, Written(profile, 0), 1.0, 0), middle, Readings.Of(profile, Written(profile, 2), 3.0, 2));

    [Fact]
    public void Conflict_TwoValidReadingsThatDisagree_AreFlagged_TheOneMoreCapturesAgreeOnWins_AndTheLoserIsKept()
    {
        var a = Written(Crc16, 1);
        var b = Written(Crc16, 1, seed: 99);
        var passes = new[]
        {
            ThreeBlocks(Crc16, 0, Readings.Of(Crc16, a, 2.0, 1)),
            ThreeBlocks(Crc16, 1, Readings.Of(Crc16, a, 2.0, 1)),
            ThreeBlocks(Crc16, 2, Readings.Of(Crc16, b, 2.0, 1)),
        };

        var image = TapeMerger.Merge(passes, Crc16);

        Assert.Equal(3, image.Blocks.Length);
        var middle = image.Blocks[1];
        Assert.Equal(RecoveryStatus.Clean, middle.Status);
        Assert.True(middle.Conflict);
        Assert.Equal(Hex(Readings.PayloadOf(Crc16, a)), Hex(middle.Payload));
        Assert.Equal(2, middle.AgreeingCaptures);
        var loser = Assert.Single(middle.ConflictingPayloads);
        Assert.Equal(Hex(Readings.PayloadOf(Crc16, b)), Hex(loser.Payload));
        Assert.Equal(1, loser.AgreeingCaptures);
        Assert.Equal(Readings.Capture(2).CaptureSha256, loser.Source.CaptureSha256);

        // A position two valid readings dispute is less certain than one nobody disputes.
        Assert.True(middle.Confidence < image.Blocks[0].Confidence, $"{middle.Confidence} vs {image.Blocks[0].Confidence}");
        Assert.All(new[] { image.Blocks[0], image.Blocks[2] }, block => Assert.False(block.Conflict));
    }

    [Fact]
    public void Image_RecordsItsMaking_ByTheClockItIsGiven_UnlessATimeIsGiven()
    {
        var at = new DateTimeOffset(2033, 2, 1, 12, 30, 0, TimeSpan.Zero);
        var clock = new FixedClock(at);
        var pass = ThreeBlocks(Crc16, 0, Readings.Of(Crc16, Written(Crc16, 1), 2.0, 1));

        Assert.Equal(at, TapeMerger.Merge([pass], Crc16, new MergeOptions { Clock = clock }).CreatedUtc);
        Assert.Equal(DateTimeOffset.UnixEpoch, TapeMerger.Merge([pass], Crc16, new MergeOptions { Clock = clock, CreatedUtc = DateTimeOffset.UnixEpoch }).CreatedUtc);
    }

    [Fact]
    public void Agreement_OfIndependentCaptures_RaisesConfidence()
    {
        // An 8-bit check and noisy bytes: one clean reading is good but not near-certain.
        var xor8 = Readings.BiphaseWith("xor8");
        var block = Written(xor8, 1);
        BlockCandidate Noisy() => Readings.Of(xor8, block, 2.0, 1, baseError: 0.01f);

        var one = TapeMerger.Merge([ThreeBlocks(xor8, 0, Noisy())], xor8).Blocks[1];
        var two = TapeMerger.Merge([ThreeBlocks(xor8, 0, Noisy()), ThreeBlocks(xor8, 1, Noisy())], xor8).Blocks[1];

        Assert.Equal(RecoveryStatus.Clean, one.Status);
        Assert.Equal(Noisy().Confidence, one.Confidence, 9);
        Assert.Equal(2, two.AgreeingCaptures);
        Assert.True(two.Confidence > one.Confidence, $"{two.Confidence} <= {one.Confidence}");
    }

    [Fact]
    public void Vote_AcrossFailedReadings_RecoversTheBlock_WhenEachByteIsRightInMostReadings()
    {
        var block = Written(Crc16, 1);
        var truth = Readings.PayloadOf(Crc16, block);
        BlockCandidate Damaged(int at) => Readings.Of(
            Crc16, block, 2.0, 1,
            changedPayload: new Dictionary<int, byte> { [at] = unchecked((byte)~truth[at]) },
            payloadErrors: new Dictionary<int, float> { [at] = 0.6f });
        var passes = new[] { ThreeBlocks(Crc16, 0, Damaged(5)), ThreeBlocks(Crc16, 1, Damaged(20)), ThreeBlocks(Crc16, 2, Damaged(40)) };
        Assert.All(passes, p => Assert.Equal(BlockStatus.Failed, p.Candidates[1].Status));

        var merged = TapeMerger.Merge(passes, Crc16).Blocks[1];

        Assert.Equal(RecoveryStatus.Voted, merged.Status);
        Assert.Equal(Hex(truth), Hex(merged.Payload));
        Assert.Equal(3, merged.Sources.Length);
        Assert.InRange(merged.Confidence, 0.9, 1.0);
    }

    [Fact]
    public void Repair_FlipsTheLeastCertainBits_AndTrustsAnEightBitCheckLessThanACrc16()
    {
        double Repaired(FormatProfile profile)
        {
            var block = Written(profile, 1);
            var truth = Readings.PayloadOf(profile, block);
            var reading = Readings.Of(
                profile, block, 2.0, 1,
                changedPayload: new Dictionary<int, byte> { [7] = (byte)(truth[7] ^ 0x10) },
                payloadErrors: new Dictionary<int, float> { [7] = 0.4f });
            Assert.Equal(BlockStatus.Failed, reading.Status);

            var merged = TapeMerger.Merge([ThreeBlocks(profile, 0, reading)], profile).Blocks[1];

            Assert.Equal(RecoveryStatus.Repaired, merged.Status);
            Assert.Equal(Hex(truth), Hex(merged.Payload));
            return merged.Confidence;
        }

        double crc16 = Repaired(Crc16);
        double xor8 = Repaired(Readings.BiphaseWith("xor8"));

        // The false-match odds: 2^-16 for a CRC-16 and 2^-8 for an 8-bit check (IBlockChecksum.FalseMatchProbability),
        // multiplied by the patterns the search tried.
        Assert.True(crc16 > 0.99, $"CRC-16 repair confidence {crc16}");
        Assert.True(xor8 < crc16, $"xor8 {xor8} is not below CRC-16 {crc16}");
    }

    [Fact]
    public void Search_AgainstAnEightBitCheck_FindsFalseMatches_WhichAreNeverKept()
    {
        // Three hidden errors (the decoder was sure of those bytes): the true block is far outside the search, and
        // among thousands of patterns an 8-bit check passes about one in 256 by chance.
        var xor8 = Readings.BiphaseWith("xor8");
        var block = Written(xor8, 1);
        var truth = Readings.PayloadOf(xor8, block);
        var reading = Readings.Of(
            xor8, block, 2.0, 1,
            changedPayload: new Dictionary<int, byte> { [3] = (byte)(truth[3] ^ 0x81), [30] = (byte)(truth[30] ^ 0x42), [50] = (byte)(truth[50] ^ 0x24) },
            payloadErrors: new Dictionary<int, float> { [10] = 0.2f, [11] = 0.2f });
        Assert.Equal(BlockStatus.Failed, reading.Status);

        var merged = TapeMerger.Merge([ThreeBlocks(xor8, 0, reading)], xor8).Blocks[1];

        Assert.Equal(RecoveryStatus.Missing, merged.Status);
        Assert.True(merged.Payload.IsEmpty);
        Assert.Equal(0, merged.Confidence);
    }

    [Fact]
    public void Missing_BlockNumbersNoPassRead_AreListedInPlace_AndTheFileIsIncomplete()
    {
        // Blocks 0, 1 and 3 of one file were read; nothing at all of block 2.
        var blocks = new[] { 0, 1, 3 }.Select(n => Written(Crc16, n)).ToArray();
        var pass = Readings.Pass(0, Readings.Of(Crc16, blocks[0], 1.0, 0), Readings.Of(Crc16, blocks[1], 2.0, 1), Readings.Of(Crc16, blocks[2], 4.0, 2));

        var image = TapeMerger.Merge([pass], Crc16);

        Assert.Equal([0L, 1, 2, 3], image.Blocks.Select(b => b.BlockNumber ?? -1));
        Assert.Equal([0, 1, 2, 3], image.Blocks.Select(b => b.Position));
        var missing = image.Blocks[2];
        Assert.Equal(RecoveryStatus.Missing, missing.Status);
        Assert.True(missing.Payload.IsEmpty);
        var file = Assert.Single(image.Files);
        Assert.False(file.Complete);
        Assert.Equal(4, file.BlockCount);
        Assert.Equal(3 * 64, file.Length);
    }

    [Fact]
    public void Files_AreTheRunsOfBlockNumbers_WithTheirLengthsFirstPositionAndCompleteness()
    {
        var first = Enumerable.Range(0, 3).Select(n => Written(Crc16, n)).ToList();
        var second = new List<byte[]> { BlockWriter.Build(Crc16.Layout, string.Empty, 1, 0, new byte[10]), BlockWriter.Build(Crc16.Layout, string.Empty, 1, 1, new byte[5]) };
        var all = first.Concat(second).ToList();
        var pass = Readings.Pass(0, [.. all.Select((b, i) => Readings.Of(Crc16, b, 1.0 + i, i))]);

        var image = TapeMerger.Merge([pass], Crc16);

        Assert.Equal(2, image.Files.Length);
        Assert.Equal(new ImageFile("file 1", 3 * 64, 0, 3, true), image.Files[0]);
        Assert.Equal(new ImageFile("file 2", 15, 3, 2, true), image.Files[1]);
    }

    [Fact]
    public void Provenance_NamesTheCaptureTheSettingAndTheCodeVersion_OfTheWinningReading()
    {
        var block = Written(Crc16, 1);
        var pass = ThreeBlocks(Crc16, 4, Readings.Of(Crc16, block, 2.0, 1, setting: "s3"));

        var merged = TapeMerger.Merge([pass], Crc16).Blocks[1];

        var source = merged.Sources[0];
        Assert.Equal(Readings.Capture(4).CaptureSha256, source.CaptureSha256);
        Assert.Equal("s3", source.SettingName);
        Assert.Equal("test", source.CodeVersion);
        Assert.Equal(2.0, source.StartSeconds);
    }

    [Fact]
    public void Checksum_FalseMatchOdds_AreThoseOfItsWidth()
    {
        // 2^-8 for an 8-bit check, 2^-16 for a CRC-16 (a random block passes a w-bit check one time in 2^w).
        Assert.Equal(1.0 / 256, ChecksumCatalog.Get("xor8").FalseMatchProbability);
        Assert.Equal(1.0 / 65_536, ChecksumCatalog.Get("crc16-xmodem").FalseMatchProbability);
    }

    private static string Hex(System.Collections.Immutable.ImmutableArray<byte> bytes) => Convert.ToHexStringLower(bytes.AsSpan());

    private static string Hex(byte[] bytes) => Convert.ToHexStringLower(bytes);

    private sealed class FixedClock(DateTimeOffset at) : TimeProvider
    {
        public override DateTimeOffset GetUtcNow() => at;
    }
}
