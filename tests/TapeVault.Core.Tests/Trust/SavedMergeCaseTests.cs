using System.Collections.Immutable;
using System.Text.Json;
using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;
using TapeVault.Core.Tests.Merge;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// Merges of readings saved from the trust benchmark (`TAPEVAULT_TRUST_CANDIDATES=folder dotnet run -c Release --project
/// tests/TapeVault.Bench -- trust ...` writes every pass's readings and the blocks written; a case file is the three
/// passes of one tape). Ground truth is what was written; the damage was our channel model, two of the passes then
/// through SoX.
/// </summary>
public sealed class SavedMergeCaseTests
{
    private static readonly JsonSerializerOptions CaseJson = new() { NumberHandling = System.Text.Json.Serialization.JsonNumberHandling.AllowNamedFloatingPointLiterals };

    private sealed record SavedPass(string Source, List<BlockCandidate> Candidates);

    private sealed record SavedTape(string Profile, int Seed, string[] Written, List<SavedPass> Passes);

    [Fact]
    public void Short_blocks_that_all_carry_block_number_0_are_one_position_each_and_not_each_others_conflict()
    {
        // biphase-1200, tuning seed 12024: 15 one-block files, each block numbered 0, most of them a few dozen bytes
        // (a tenth of a second of tape) with the format's 0.15 s block gap between them. In one pass the positioner put
        // a failed reading of the next block into a block's position; with the same identity (every block is number
        // 0) it stretched the position over the next block, whose clean readings in the other passes then joined it:
        // two contents each read clean by two captures, merged at 0.5 although both were right, and one written block
        // fewer in the image (before: 5 of 8 clean positions held two written blocks).
        var tape = Load("biphase-1200-short-blocks-three-passes.json");
        var profile = ProfileCatalog.BuiltIn.Get(tape.Profile);
        var written = tape.Written.Select(Convert.FromHexString).ToList();
        var passes = tape.Passes.Select((p, i) => Readings.Pass(i, [.. p.Candidates])).ToList();
        var readClean = written.Where(w => passes.Any(p => p.Candidates.Any(c => c.Status == BlockStatus.Clean && IsBlock(profile, c, w)))).ToList();

        var image = TapeMerger.Merge(passes, profile);

        var clean = image.Blocks.Where(b => b.Status == RecoveryStatus.Clean).ToList();
        Assert.All(clean, b => Assert.False(b.Conflict, $"position {b.Position} holds two clean contents"));
        Assert.All(clean, b => Assert.Contains(written, w => IsBlock(profile, b.Header, b.Payload, w)));

        // Every written block some pass read clean is a clean position of its own, as sure as its readings are.
        Assert.Equal(readClean.Count, clean.Count);
        Assert.All(clean, b => Assert.True(b.Confidence >= 0.99, $"position {b.Position} right at {b.Confidence}"));
    }

    private static bool IsBlock(FormatProfile profile, BlockCandidate c, byte[] written) => IsBlock(profile, c.Header, c.Payload, written);

    /// <summary>Whether header and payload are the written block's (which ends in its check value).</summary>
    private static bool IsBlock(FormatProfile profile, ImmutableArray<byte> header, ImmutableArray<byte> payload, byte[] written) =>
        header.Length == profile.Layout.HeaderBytes
        && written.Length >= header.Length + payload.Length
        && written.AsSpan(0, header.Length).SequenceEqual(header.AsSpan())
        && written.AsSpan(header.Length, payload.Length).SequenceEqual(payload.AsSpan())
        && written.Length - header.Length - payload.Length == ChecksumCatalog.Get(profile.Layout.Checksum!.Algorithm).Width;

    private static SavedTape Load(string name)
    {
        string path = Path.Combine(AppContext.BaseDirectory, "Trust", "Cases", name);
        return JsonSerializer.Deserialize<SavedTape>(File.ReadAllText(path), CaseJson)
            ?? throw new InvalidOperationException($"{name} holds no case.");
    }
}
