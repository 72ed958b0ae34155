using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Checksums;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;

namespace TapeVault.Core.Tests.RoundTrip;

/// <summary>A temporary folder for one test class of round trips, deleted with everything in it afterwards.</summary>
public sealed class RoundTripFolder : IDisposable
{
    public string Root { get; } = Directory.CreateTempSubdirectory("tapevault-roundtrip-").FullName;

    /// <summary>A fresh capture path in the folder.</summary>
    public string NewCapture(string label) => Path.Combine(Root, $"{label}-{Guid.NewGuid():N}.wav");

    public void Dispose()
    {
        try
        {
            Directory.Delete(Root, recursive: true);
        }
        catch (IOException)
        {
            // A leftover temp folder is harmless.
        }
    }
}

/// <summary>One block as written: the bytes the decoder should give back as header and payload.</summary>
internal sealed record TruthBlock(byte[] Header, byte[] Payload)
{
    public bool Matches(BlockCandidate candidate) =>
        candidate.Payload.AsSpan().SequenceEqual(Payload) && candidate.Header.AsSpan().SequenceEqual(Header);
}

/// <summary>Files, ground truth and the synth → decode path shared by the round-trip tests.</summary>
internal static class RoundTrips
{
    public static IEnumerable<string> ProfileIds => ProfileCatalog.BuiltIn.All.Select(p => p.Id);

    public static IEnumerable<string> CheckedProfileIds => ProfileCatalog.BuiltIn.All.Where(p => p.Layout.Checksum is not null).Select(p => p.Id);

    public static FormatProfile Profile(string id) => ProfileCatalog.BuiltIn.Get(id);

    /// <summary>
    /// Short files of a few hundred bytes: a binary one with every byte value and a text one. The slow 300-baud
    /// stream gets shorter ones so that the whole set stays fast.
    /// </summary>
    public static IReadOnlyList<TapeFile> Files(FormatProfile profile)
    {
        int binary = profile.Fsk is { Baud: < 600 } ? 64 : 200;

        // A format whose full block is large (a length where 0 means 256) still gets a file of several blocks.
        if (profile.Layout.FieldWithRole(FieldRole.PayloadLength)?.ZeroMeans is { } fullBlock && fullBlock > 100)
        {
            binary = (int)(2 * fullBlock) + 60;
        }
        int text = profile.Fsk is { Baud: < 600 } ? 40 : 90;
        var random = new Random(20_240_601);
        var content = new byte[binary];
        random.NextBytes(content);
        for (int i = 0; i < Math.Min(binary, 256); i++)
        {
            content[i * content.Length / 256] = unchecked((byte)i);
        }

        string words = "TAPE ARCHIVE ROUND TRIP 0123456789 the quick brown fox jumps over the lazy dog. ";
        var sb = new StringBuilder();
        while (sb.Length < text)
        {
            sb.Append(words);
        }

        return [new("BINFILE", content), new("NOTES", Encoding.ASCII.GetBytes(sb.ToString(0, text)))];
    }

    /// <summary>The header and payload of every block <see cref="BlockWriter"/> lays out, in tape order.</summary>
    public static List<TruthBlock> Truth(FormatProfile profile, IReadOnlyList<byte[]> blocks)
    {
        // Blocks of several kinds come in the order a file writes them, each with its own header and check.
        var kinds = profile.BlockKinds;
        return [.. blocks.Select((b, i) =>
        {
            var layout = kinds[i % kinds.Count];
            int header = layout.IsStream ? 0 : layout.HeaderBytes;
            int check = layout.Checksum is { } spec ? ChecksumCatalog.Get(spec.Algorithm).Width : 0;
            return new TruthBlock(b[..header], b[header..^check]);
        })];
    }

    public static (SynthesizedCapture Capture, DecodeResult Result) SynthAndDecode(RoundTripFolder folder, FormatProfile profile, IReadOnlyList<TapeFile> files, ChannelDamage damage)
    {
        string path = folder.NewCapture(profile.Id);
        var capture = CaptureSynthesizer.Write(path, profile, files, damage);
        var result = CaptureDecoder.Decode(path, profile);
        File.Delete(path);
        return (capture, result);
    }

    /// <summary>Writes <paramref name="blocks"/> as <paramref name="profile"/> lays them down and decodes them as <paramref name="readAs"/> (the same profile when null).</summary>
    public static DecodeResult WriteAndDecode(RoundTripFolder folder, FormatProfile profile, IReadOnlyList<byte[]> blocks, ChannelDamage damage, FormatProfile? readAs = null)
    {
        string path = folder.NewCapture(profile.Id);
        CaptureSynthesizer.WriteBlocks(path, profile, blocks, damage);
        var result = CaptureDecoder.Decode(path, readAs ?? profile);
        File.Delete(path);
        return result;
    }

    /// <summary>A one-line account of what came back, for assertion messages.</summary>
    public static string Describe(DecodeResult result) =>
        string.Join("; ", result.Best.Select(b =>
            $"#{b.Position} {b.Status} {b.Identity} {b.Payload.Length} B by {b.SettingName} c={b.Confidence:0.###}"));
}
