using System.Collections.Immutable;
using System.Text.Json;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// A position is a place on the tape: two clean readings with other bytes that share no tape are two blocks, whatever
/// their headers say. The cases are readings the trust benchmark saved (`TAPEVAULT_TRUST_CANDIDATES=folder`: one pass,
/// its readings by every setting and the blocks written); ground truth is what was written, the damage our channel
/// model, then SoX (outside reference: SoX).
/// </summary>
public sealed class PositionCleanBlocksApartTests
{
    private static readonly JsonSerializerOptions CaseJson = new() { NumberHandling = System.Text.Json.Serialization.JsonNumberHandling.AllowNamedFloatingPointLiterals };

    private sealed record SavedCapture(string Profile, int Seed, int Pass, string Source, string[] Written, List<BlockCandidate> Candidates);

    [Fact]
    public void Clean_readings_of_two_files_block_0_a_gap_apart_are_two_positions()
    {
        // biphase-1200, tuning seed 12004, pass 0: 23 written blocks, nearly all of one-block files, so every header
        // reads block number 0; blocks a few tenths of a second long with the format's 0.15 s gap between them. From
        // 8.7 s on, one setting read block 17 clean and the other did not; the other's clean reading of block 18 then
        // joined block 17's position (the same identity, and that setting had read nothing whole there yet), and so on
        // down the tape: before, three positions each held the clean readings of two written blocks.
        var capture = Load("biphase-1200-block-0-files-one-pass.json");
        var profile = ProfileCatalog.BuiltIn.Get(capture.Profile);
        var written = capture.Written.Select(Convert.FromHexString).ToList();
        var unplaced = capture.Candidates.Select(c => c with { Position = -1 }).ToList();

        var placed = BlockPositioner.Place(unplaced, profile.Layout.Copies);

        // Which written block each clean reading is, by its bytes (the written block holds header, payload, check).
        var blockOf = placed.Where(c => c.Status == BlockStatus.Clean)
            .Select(c => (c.Position, Block: written.FindIndex(w => IsBlock(c.Header, c.Payload, w))))
            .ToList();
        Assert.All(blockOf, b => Assert.True(b.Block >= 0, "a clean reading that is no written block"));
        foreach (var position in blockOf.GroupBy(b => b.Position))
        {
            Assert.True(position.Select(b => b.Block).Distinct().Count() == 1, $"position {position.Key} holds clean readings of blocks {string.Join(", ", position.Select(b => b.Block).Distinct())}");
        }

        // And each written block read clean is one position (not two: the settings' readings of one block overlap).
        foreach (var block in blockOf.GroupBy(b => b.Block))
        {
            Assert.True(block.Select(b => b.Position).Distinct().Count() == 1, $"block {block.Key} read clean at positions {string.Join(", ", block.Select(b => b.Position).Distinct())}");
        }
    }

    private static bool IsBlock(ImmutableArray<byte> header, ImmutableArray<byte> payload, byte[] written) =>
        written.Length >= header.Length + payload.Length
        && written.AsSpan(0, header.Length).SequenceEqual(header.AsSpan())
        && written.AsSpan(header.Length, payload.Length).SequenceEqual(payload.AsSpan());

    private static SavedCapture Load(string name)
    {
        string path = Path.Combine(AppContext.BaseDirectory, "Trust", "Cases", name);
        return JsonSerializer.Deserialize<SavedCapture>(File.ReadAllText(path), CaseJson)
            ?? throw new InvalidOperationException($"{name} holds no case.");
    }
}
