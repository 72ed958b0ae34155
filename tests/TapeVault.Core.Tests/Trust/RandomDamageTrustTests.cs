using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// The product's central promise as a property: whatever damage a pass suffered, no detector setting's reading is
/// clean unless its header and payload are a block that was written. Each case draws one pass's damage from wide
/// ranges (<see cref="RandomDamage"/>) and a tape of short files (empty ones, runs of zeros, repeated bytes: the
/// stretches that checksums such as sum8 and CRC-16/XMODEM pass however long they are) from its seed. Ground truth is
/// what the synthesiser wrote. The big version of this measurement is the benchmark's trust mode
/// (`dotnet run -c Release --project tests/TapeVault.Bench -- trust`).
/// </summary>
public sealed class RandomDamageTrustTests(SynthesisFolder folder) : IClassFixture<SynthesisFolder>
{
    /// <summary>A pulse-width block format of the test's own: start and stop bits, block number, length, sum8 over header and payload.</summary>
    private static readonly FormatProfile PulseBlocks = ProfileLoader.Parse(
        """
        {
          "id": "trust-pulse", "name": "Trust test pulse-width blocks", "family": "pulse-width",
          "pulseWidth": {
            "classes": [ { "name": "short", "microseconds": 280 }, { "name": "long", "microseconds": 560 }, { "name": "sync", "microseconds": 1120 } ],
            "zero": [ "short" ], "one": [ "long" ],
            "leadIn": { "class": "short", "minimumCount": 96 }, "sync": [ "sync", "long" ]
          },
          "framing": { "dataBits": 8, "bitOrder": "lsb-first", "startBits": "0", "stopBits": "1", "parity": "none" },
          "layout": {
            "header": [ { "name": "block", "bytes": 1, "role": "block-number" }, { "name": "length", "bytes": 1, "role": "payload-length" } ],
            "maximumPayloadBytes": 48, "checksum": { "algorithm": "sum8", "covers": "header-and-payload" }, "copies": 1
          },
          "recording": { "leadInSeconds": 0.6, "blockGapSeconds": 0.1, "trailerSeconds": 0.2 }
        }
        """,
        "test");

    /// <summary>An FSK block format of the test's own in the Kansas City tones at 1200 baud: file id, block number, length, CRC-16/XMODEM.</summary>
    private static readonly FormatProfile ToneBlocks = ProfileLoader.Parse(
        """
        {
          "id": "trust-tones", "name": "Trust test FSK blocks", "family": "fsk",
          "fsk": { "markHz": 2400, "spaceHz": 1200, "baud": 1200, "leadInMinimumSeconds": 0.1 },
          "framing": { "dataBits": 8, "bitOrder": "lsb-first", "startBits": "0", "stopBits": "1", "parity": "none" },
          "layout": {
            "header": [ { "name": "file", "bytes": 1, "role": "file-id" }, { "name": "block", "bytes": 1, "role": "block-number" }, { "name": "length", "bytes": 1, "role": "payload-length" } ],
            "maximumPayloadBytes": 48, "checksum": { "algorithm": "crc16-xmodem", "covers": "header-and-payload", "endian": "big" }, "copies": 1
          },
          "recording": { "leadInSeconds": 0.6, "blockGapSeconds": 0.3, "trailerSeconds": 0.2 }
        }
        """,
        "test");

    public static TheoryData<string, int> Cases()
    {
        var cases = new TheoryData<string, int>();
        foreach (string profile in new[] { "trust-pulse", "trust-tones", "biphase-1200" })
        {
            for (int seed = 1; seed <= 16; seed++)
            {
                cases.Add(profile, seed);
            }
        }

        return cases;
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void No_setting_marks_a_wrong_or_phantom_block_clean_under_random_damage(string profileId, int seed)
    {
        var profile = profileId switch
        {
            "trust-pulse" => PulseBlocks,
            "trust-tones" => ToneBlocks,
            _ => ProfileCatalog.BuiltIn.Get(profileId),
        };
        var rng = new Random((seed * 7919) + profileId.Length);
        var files = Files(rng);
        var damage = RandomDamage.Draw(rng);
        var written = BlockWriter.Blocks(profile, files);
        string path = folder.File($"trust-{profileId}-{seed}.wav");
        CaptureSynthesizer.WriteBlocks(path, profile, written, damage);

        var result = CaptureDecoder.Decode(path, profile);

        // Ground truth: the blocks the synthesiser wrote (header and payload; the check value is what the decoder tests).
        int check = ChecksumCatalog.Get(profile.Layout.Checksum!.Algorithm).Width;
        var truth = written.Select(b => Convert.ToHexString(b.AsSpan(0, b.Length - check))).ToHashSet(StringComparer.Ordinal);
        var wrong = result.Candidates
            .Where(c => c.Status == BlockStatus.Clean && !truth.Contains(Convert.ToHexString([.. c.Header, .. c.Payload])))
            .ToList();
        Assert.True(
            wrong.Count == 0,
            $"{profileId} seed {seed}: {wrong.Count} wrong or phantom readings marked clean, e.g. " +
            string.Join("; ", wrong.Take(3).Select(c => $"[{c.SettingName}] {c.Identity} at {c.StartSeconds:0.000} s, {c.Payload.Length} bytes, confidence {c.Confidence:0.0000}")) +
            $". Damage: {RandomDamage.Describe(damage)}. Written: {written.Count} blocks.");
    }

    /// <summary>Six to ten short files: empty, random, zero runs, one repeated byte or text.</summary>
    private static List<TapeFile> Files(Random rng)
    {
        var files = new List<TapeFile>();
        int count = 6 + rng.Next(5);
        for (int f = 0; f < count; f++)
        {
            int length = rng.NextDouble() < 0.1 ? 0 : 1 + rng.Next(40);
            var content = new byte[length];
            switch (rng.Next(4))
            {
                case 0: rng.NextBytes(content); break;
                case 1: break;
                case 2: content.AsSpan().Fill((byte)rng.Next(256)); break;
                default: Encoding.ASCII.GetBytes(new string('a', length)).CopyTo(content, 0); break;
            }

            files.Add(new TapeFile($"T{f}", content));
        }

        return files;
    }
}
