using System.Collections.Immutable;
using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;
using TapeVault.Core.Merge;

namespace TapeVault.Core.Tests.Merge;

/// <summary>Block candidates built by hand, as the archive rebuilds them from stored fields, for merge tests that need exact control.</summary>
internal static class Readings
{
    /// <summary>The biphase reference profile (block number, length, CRC-16/XMODEM) with another checksum in its place.</summary>
    public static FormatProfile BiphaseWith(string checksum)
    {
        var profile = ProfileCatalog.BuiltIn.Get("biphase-1200");
        return profile with { Layout = profile.Layout with { Checksum = profile.Layout.Checksum! with { Algorithm = checksum } } };
    }

    /// <summary>The biphase reference profile (block number, length, CRC-16/XMODEM) with every block written twice in a row.</summary>
    public static FormatProfile WrittenTwice()
    {
        var profile = ProfileCatalog.BuiltIn.Get("biphase-1200");
        return profile with { Layout = profile.Layout with { Copies = 2 } };
    }

    /// <summary>
    /// A whole reading of block <paramref name="block"/> starting at <paramref name="start"/> whose header (its first three
    /// bytes) a setting garbled from <paramref name="header"/> and whose first payload byte is wrong too, so it fails.
    /// </summary>
    public static BlockCandidate Garbled(FormatProfile profile, int block, double start, string setting, byte header)
    {
        var written = Written(profile, block);
        written[0] = header;
        written[1] = (byte)(header ^ 0x5A);
        written[2] = (byte)(header ^ 0x33);
        var payloadByte = written[profile.Layout.HeaderBytes];
        return Of(profile, written, start, 0, setting, changedPayload: new Dictionary<int, byte> { [0] = (byte)(payloadByte ^ 0x21) });
    }

    /// <summary>A block of 64 random bytes (seeded by its number and <paramref name="seed"/>) as <see cref="BlockWriter.Build"/> lays it out.</summary>
    public static byte[] Written(FormatProfile profile, int blockNumber, int seed = 0)
    {
        var payload = new byte[64];
        new Random((blockNumber * 31) + seed).NextBytes(payload);
        return BlockWriter.Build(profile.Layout, string.Empty, 0, blockNumber, payload);
    }

    /// <summary>
    /// <paramref name="bytes"/> fed to an assembler after a start on <paramref name="evidence"/>, eight decisions a byte,
    /// decision k of byte b at the distance from its boundary and residual from nominal that <paramref name="decision"/>
    /// gives; the byte at <paramref name="misframedByte"/> (if any) with its framing out of place. Its one reading.
    /// </summary>
    public static BlockCandidate Assembled(
        FormatProfile profile, byte[] bytes, BlockStartEvidence evidence, Func<int, int, (float Distance, float Residual)> decision, int misframedByte = -1)
    {
        var output = new List<BlockCandidate>();
        var assembler = new BlockAssembler(profile, 0, "s0", 44_100, output);
        assembler.Begin(0, evidence);
        for (int b = 0; b < bytes.Length; b++)
        {
            int first = assembler.DecisionCount;
            for (int k = 0; k < 8; k++)
            {
                var (distance, residual) = decision(b, k);
                assembler.AddDecision(distance, residual, 1);
            }

            if (assembler.AddByte(bytes[b], first, framingOk: b != misframedByte, sample: 100 * (b + 1)))
            {
                break;
            }
        }

        assembler.End(100 * (bytes.Length + 1));
        return Xunit.Assert.Single(output);
    }

    public static ImageSource Capture(int n) => new(new string((char)('a' + n), 64), $"pass-{n}.wav", 44_100, 1, 60);

    public static MergePass Pass(int n, params BlockCandidate[] candidates) => new(Capture(n), candidates, "test");

    /// <summary>
    /// A reading of the block <paramref name="written"/> (header + payload + check value, as <see cref="BlockWriter.Build"/>
    /// lays it out) with the given payload bytes changed; its status is what the profile's checksum says of it.
    /// </summary>
    public static BlockCandidate Of(
        FormatProfile profile,
        byte[] written,
        double startSeconds,
        int position,
        string setting = "s0",
        IReadOnlyDictionary<int, byte>? changedPayload = null,
        IReadOnlyDictionary<int, float>? payloadErrors = null,
        float baseError = 1e-5f,
        int truncateTo = -1)
    {
        var layout = profile.Layout;
        var checksum = ChecksumCatalog.Get(layout.Checksum!.Algorithm);
        int header = layout.HeaderBytes;
        int width = checksum.Width;
        var bytes = (byte[])written.Clone();
        foreach (var (index, value) in changedPayload ?? new Dictionary<int, byte>())
        {
            bytes[header + index] = value;
        }

        bool truncated = truncateTo >= 0;
        int payloadLength = truncated ? truncateTo : bytes.Length - header - width;
        var payload = bytes.AsSpan(header, payloadLength).ToArray();
        uint? stored = null;
        var status = BlockStatus.Failed;
        if (!truncated)
        {
            uint value = 0;
            for (int i = 0; i < width; i++)
            {
                value = (value << 8) | bytes[header + payloadLength + (layout.Checksum.BigEndian ? i : width - 1 - i)];
            }

            stored = value;
            var covered = layout.Checksum.Covers == ChecksumCoverage.Payload ? bytes.AsSpan(header, payloadLength) : bytes.AsSpan(0, header + payloadLength);
            status = checksum.Compute(covered) == value ? BlockStatus.Clean : BlockStatus.Failed;
        }

        var errors = Enumerable.Range(0, payloadLength).Select(i => payloadErrors is not null && payloadErrors.TryGetValue(i, out float e) ? e : baseError).ToArray();
        double logOk = errors.Sum(e => Math.Log(1 - e));
        return new BlockCandidate
        {
            SettingIndex = int.Parse(setting[1..], System.Globalization.CultureInfo.InvariantCulture),
            SettingName = setting,
            Position = position,
            Identity = BlockAssembler.ReadIdentity(layout, bytes.AsSpan(0, header), position),
            Header = [.. bytes.AsSpan(0, header)],
            Payload = [.. payload],
            StoredChecksum = stored,
            Status = status,
            Confidence = status == BlockStatus.Clean ? BlockScorer.PosteriorGivenMatch(logOk, checksum.FalseMatchProbability) : 0,
            ByteMargins = [.. errors.Select(e => (float)Math.Clamp(1 - (4 * e), 0, 1))],
            ByteErrorOdds = [.. errors],
            ByteSeconds = [.. Enumerable.Range(0, payloadLength).Select(i => startSeconds + 0.05 + (0.0067 * i))],
            Decisions = payloadLength * 8,
            AmbiguousDecisions = errors.Count(e => e > 0.1),
            MinimumMargin = 0.5,
            MeanMargin = 0.9,
            FramingErrors = 0,
            LevelDbfs = -12,
            SnrDb = 20,
            Speed = 1,
            StartSeconds = startSeconds,
            EndSeconds = startSeconds + 0.05 + (0.0067 * (payloadLength + width)),
            Truncated = truncated,
        };
    }

    /// <summary>A stream reading: bytes <paramref name="from"/> to <paramref name="to"/> (exclusive) of the text, one character every <paramref name="character"/> seconds.</summary>
    public static BlockCandidate Stream(byte[] text, int from, int to, double firstByteSeconds, double character, string setting = "s0", int position = 0, IReadOnlyDictionary<int, float>? errors = null)
    {
        int n = to - from;
        var odds = Enumerable.Range(from, n).Select(i => errors is not null && errors.TryGetValue(i, out float e) ? e : 1e-4f).ToArray();
        return new BlockCandidate
        {
            SettingIndex = int.Parse(setting[1..], System.Globalization.CultureInfo.InvariantCulture),
            SettingName = setting,
            Position = position,
            Identity = new BlockIdentity(null, null, null, position),
            Header = [],
            Payload = [.. text.AsSpan(from, n)],
            StoredChecksum = null,
            Status = BlockStatus.Unchecked,
            Confidence = Math.Exp(odds.Sum(e => Math.Log(1 - e))),
            ByteMargins = [.. odds.Select(e => (float)Math.Clamp(1 - (4 * e), 0, 1))],
            ByteErrorOdds = [.. odds],
            ByteSeconds = [.. Enumerable.Range(from, n).Select(i => firstByteSeconds + (character * i))],
            Decisions = n * 11,
            AmbiguousDecisions = 0,
            MinimumMargin = 0.5,
            MeanMargin = 0.9,
            FramingErrors = 0,
            LevelDbfs = -12,
            SnrDb = 20,
            Speed = 1,
            StartSeconds = firstByteSeconds + (character * from) - character,
            EndSeconds = firstByteSeconds + (character * to),
            Truncated = false,
        };
    }

    public static ImmutableArray<byte> PayloadOf(FormatProfile profile, byte[] written)
    {
        int width = ChecksumCatalog.Get(profile.Layout.Checksum!.Algorithm).Width;
        return [.. written.AsSpan(profile.Layout.HeaderBytes, written.Length - profile.Layout.HeaderBytes - width)];
    }
}
