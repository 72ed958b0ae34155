using System.Collections.Concurrent;
using System.Globalization;
using System.Numerics;
using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Tests.Shared;
using Xunit;

namespace TapeVault.Core.Tests.OutsideChecks;

/// <summary>Clean captures of the pattern-lead-in built-ins, made once per class, with the blocks they hold.</summary>
public sealed class LeaderFamilySources : IDisposable
{
    private readonly ConcurrentDictionary<string, Lazy<(string Path, List<byte[]> Blocks)>> sources = new();

    public OutsideTempFolder Temp { get; } = new();

    public (string Path, List<byte[]> Blocks) Get(string id) =>
        sources.GetOrAdd(id, key => new Lazy<(string, List<byte[]>)>(() =>
        {
            var profile = ProfileCatalog.BuiltIn.Get(key);
            var blocks = BlockWriter.Blocks(profile, LeaderFamilyFiles.Files);
            string path = Temp.File($"{key}.source.wav");
            CaptureSynthesizer.WriteBlocks(path, profile, blocks, new ChannelDamage());
            return (path, blocks);
        })).Value;

    public void Dispose() => Temp.Dispose();
}

internal static class LeaderFamilyFiles
{
    /// <summary>A binary file with every byte value and a text file: three or four blocks of each built-in.</summary>
    public static IReadOnlyList<TapeFile> Files { get; } = Build();

    private static List<TapeFile> Build()
    {
        var binary = new byte[300];
        for (int i = 0; i < binary.Length; i++)
        {
            binary[i] = unchecked((byte)((i * 167) + (i >> 8)));
        }

        return [new("VALUES", binary), new("NOTES", Encoding.ASCII.GetBytes("SYNC CHARACTERS, PARITY AND A PREAMBLE: read back through SoX and minimodem."))];
    }
}

/// <summary>
/// SoX, a general-purpose audio tool, damages clean captures of fsk-sync-1200 (a leader of repeated characters, three
/// sync characters, even parity) and biphase-1500 (an alternating preamble and a sync word) the way decks and
/// transfers do; the blocks must come back exact and clean. minimodem, a general-purpose FSK modem, writes the FSK
/// family's characters as tones from bits framed here with nothing of TapeVault's (its own parity count), and reads
/// TapeVault's synthesised tones back as bits.
/// </summary>
public sealed class LeaderFamilyOutsideTests(LeaderFamilySources sources) : IClassFixture<LeaderFamilySources>
{
    public static TheoryData<string, string> MildCases()
    {
        var data = new TheoryData<string, string>();
        foreach (string id in new[] { "fsk-sync-1200", "biphase-1500" })
        {
            foreach (string damage in new[] { "speed 1.04", "speed 0.96", "lowpass 3000", "rate 22050", "invert", "8-bit", "noise 18 dB", "tremolo", "all mild at once" })
            {
                data.Add(id, damage);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(MildCases))]
    public void Every_block_comes_back_exact_and_clean_through_a_sox_effect_chain(string id, string damage)
    {
        var (source, blocks) = sources.Get(id);
        string damaged = Damage(source, id, damage);
        var profile = ProfileCatalog.BuiltIn.Get(id);

        var result = CaptureDecoder.Decode(damaged, profile);

        // Outside reference for the damage: SoX made it. The bytes are those written before any damage.
        AssertAllClean(profile, blocks, result);
    }

    [Theory]
    [InlineData("fsk-sync-1200", "noise 3 dB")]
    [InlineData("fsk-sync-1200", "lowpass 900 twice")]
    [InlineData("biphase-1500", "noise 3 dB")]
    [InlineData("biphase-1500", "lowpass 900 twice")]
    public void Heavy_sox_damage_makes_no_wrong_block_clean(string id, string damage)
    {
        var (source, blocks) = sources.Get(id);
        string damaged = Damage(source, id, damage);
        var profile = ProfileCatalog.BuiltIn.Get(id);

        var result = CaptureDecoder.Decode(damaged, profile);

        foreach (var candidate in result.Candidates.Where(c => c.Status == BlockStatus.Clean))
        {
            Assert.Contains(blocks, b => Written(profile, b, candidate));
        }
    }

    [Theory]
    [InlineData(44_100)]
    [InlineData(48_000)]
    public void Blocks_whose_tones_minimodem_wrote_come_back_exact_and_clean(int sampleRate)
    {
        var profile = ProfileCatalog.BuiltIn.Get("fsk-sync-1200");
        var blocks = BlockWriter.Blocks(profile, LeaderFamilyFiles.Files);
        string capture = MinimodemWrite(profile, blocks, sampleRate, $"minimodem-{sampleRate}");

        var result = CaptureDecoder.Decode(capture, profile);

        // Outside reference: minimodem made the tones of bits framed by the test itself.
        AssertAllClean(profile, blocks, result);
    }

    [Fact]
    public void Blocks_whose_tones_minimodem_wrote_survive_sox_noise_and_speed()
    {
        var profile = ProfileCatalog.BuiltIn.Get("fsk-sync-1200");
        var blocks = BlockWriter.Blocks(profile, LeaderFamilyFiles.Files);
        string capture = MinimodemWrite(profile, blocks, 44_100, "minimodem-damaged");
        string noisy = sources.Temp.File("minimodem-damaged.noisy.wav");
        AddNoise(capture, noisy, 44_100, 20);
        string damaged = sources.Temp.File("minimodem-damaged.wav");
        OutsideTool.Sox(noisy, damaged, "speed", "1.03", "lowpass", "3500");

        var result = CaptureDecoder.Decode(damaged, profile);

        AssertAllClean(profile, blocks, result);
    }

    [Fact]
    public void Minimodem_reads_the_framed_bits_of_every_block_from_the_synthesised_tones()
    {
        var profile = ProfileCatalog.BuiltIn.Get("fsk-sync-1200");
        var (source, blocks) = sources.Get("fsk-sync-1200");

        // minimodem demodulates the tones at 1200 baud, 2400 Hz mark, 1200 Hz space into raw bits, framing nothing.
        string bits = OutsideTool.Run(
            OutsideTool.MinimodemPath,
            ["--rx", "1200", "--mark", "2400", "--space", "1200", "--startbits", "0", "--stopbits", "0", "--binary-raw", "12", "--quiet", "-f", source])
            .StandardOutput.Replace("\n", string.Empty, StringComparison.Ordinal);

        // Each block's characters, framed by the test (start 0, eight data bits least significant first, even parity,
        // two stop bits 1), appear in that bit stream, in tape order, after the leader's.
        Assert.Contains(Frames(Enumerable.Repeat((byte)0x55, 16).ToArray()), bits, StringComparison.Ordinal);
        int at = 0;
        foreach (var block in blocks)
        {
            int found = bits.IndexOf(Frames(block), at, StringComparison.Ordinal);
            Assert.True(found >= 0, $"minimodem's bits do not hold the block {Convert.ToHexString(block)} after bit {at}");
            at = found + 1;
        }
    }

    /// <summary>Every written block, in order, clean, with its header and payload exact.</summary>
    private static void AssertAllClean(FormatProfile profile, List<byte[]> blocks, DecodeResult result)
    {
        string got = string.Join("; ", result.Best.Select(b => $"#{b.Position} {b.Status} {b.Identity} {b.Payload.Length} B by {b.SettingName}"));
        Assert.True(blocks.Count == result.Best.Count, $"{blocks.Count} blocks written, {result.Best.Count} found: {got}");
        for (int i = 0; i < blocks.Count; i++)
        {
            Assert.True(result.Best[i].Status == BlockStatus.Clean, $"block {i}: {got}");
            Assert.True(Written(profile, blocks[i], result.Best[i]), $"block {i} differs: {got}");
        }
    }

    private static bool Written(FormatProfile profile, byte[] block, BlockCandidate candidate)
    {
        var codec = BlockLayoutCodec.For(profile.Layout);
        return candidate.Header.AsSpan().SequenceEqual(block.AsSpan(0, codec.HeaderBytes))
            && candidate.Payload.AsSpan().SequenceEqual(block.AsSpan(codec.HeaderBytes, block.Length - codec.HeaderBytes - codec.CheckBytes));
    }

    /// <summary>
    /// Characters framed as the FSK family writes them, as 0/1 text: a start bit 0, eight data bits least significant
    /// first, a parity bit making the count of ones even (counted here with <see cref="BitOperations.PopCount(uint)"/>),
    /// two stop bits 1.
    /// </summary>
    private static string Frames(byte[] characters)
    {
        var text = new StringBuilder(characters.Length * 12);
        foreach (byte c in characters)
        {
            text.Append('0');
            for (int i = 0; i < 8; i++)
            {
                text.Append(((c >> i) & 1) == 1 ? '1' : '0');
            }

            text.Append((BitOperations.PopCount(c) & 1) == 1 ? '1' : '0');
            text.Append("11");
        }

        return text.ToString();
    }

    /// <summary>
    /// minimodem writes the whole recording as tones, fed raw bits (no start or stop bits of its own, eight bits a byte
    /// least significant first): a leader of 40 characters 0x55 and a tenth of a second of mark before each block.
    /// </summary>
    private string MinimodemWrite(FormatProfile profile, List<byte[]> blocks, int sampleRate, string name)
    {
        var bits = new StringBuilder();
        foreach (var block in blocks)
        {
            bits.Append('1', 120);
            bits.Append(Frames(Enumerable.Repeat((byte)0x55, 40).ToArray()));
            bits.Append(Frames(block));
        }

        bits.Append('1', 120);
        var packed = MinimodemRawBits.Pack(bits);

        Assert.Equal(1200.0, profile.Fsk!.Baud);
        string path = sources.Temp.File($"{name}.wav");
        OutsideTool.Run(
            OutsideTool.MinimodemPath,
            ["--tx", "1200", "--mark", "2400", "--space", "1200", "--startbits", "0", "--stopbits", "0",
             "--volume", "0.5", "-R", sampleRate.ToString(CultureInfo.InvariantCulture), "-f", path],
            packed);
        Assert.Equal(sampleRate, OutsideTool.SoxSampleRate(path));
        return path;
    }

    private string Damage(string source, string id, string damage)
    {
        string output = sources.Temp.File($"{id}-{damage.Replace(' ', '-')}.wav");
        switch (damage)
        {
            case "speed 1.04" or "speed 0.96":
                OutsideTool.Sox(source, output, "speed", damage["speed ".Length..]);
                break;
            case "lowpass 3000":
                OutsideTool.Sox(source, output, "lowpass", "3000");
                break;
            case "rate 22050":
                OutsideTool.Sox(source, output, "rate", "22050");
                Assert.Equal(22_050, OutsideTool.SoxSampleRate(output));
                break;
            case "invert":
                OutsideTool.Sox(source, output, "vol", "-1");
                break;
            case "8-bit":
                OutsideTool.Sox(source, "-b", "8", output);
                Assert.Equal("8", OutsideTool.SoxInfo("-b", output));
                break;
            case "noise 18 dB":
                AddNoise(source, output, 44_100, 18);
                break;
            case "tremolo":
                // A level that swings by half at 3 Hz: a tape whose oxide or contact wavers.
                OutsideTool.Sox(source, output, "tremolo", "3", "50");
                break;
            case "all mild at once":
                string noisy = sources.Temp.File($"{id}-mild.noisy.wav");
                AddNoise(source, noisy, 44_100, 22);
                OutsideTool.Sox(noisy, "-b", "8", output, "speed", "0.97", "lowpass", "3000", "vol", "-1");
                break;
            case "noise 3 dB":
                AddNoise(source, output, 44_100, 3);
                break;
            case "lowpass 900 twice":
                OutsideTool.Sox(source, output, "lowpass", "900", "lowpass", "900");
                break;
            default:
                throw new ArgumentOutOfRangeException(nameof(damage), damage, "Unknown damage.");
        }

        return output;
    }

    /// <summary>SoX's white noise, band-limited to 300–4000 Hz, mixed in <paramref name="snrDb"/> below the signal by SoX's RMS of both.</summary>
    private void AddNoise(string source, string output, int sampleRate, double snrDb)
    {
        string noise = sources.Temp.File($"{Path.GetFileNameWithoutExtension(output)}.noise.wav");
        OutsideTool.Sox("-n", "-r", sampleRate.ToString(CultureInfo.InvariantCulture), "-b", "16", "-c", "1", noise,
            "synth", OutsideTool.SoxInfo("-D", source), "whitenoise", "sinc", "300-4000");
        double signalGain = 0.1 / OutsideTool.SoxRms(source);
        double noiseGain = 0.1 * Math.Pow(10, -snrDb / 20) / OutsideTool.SoxRms(noise);
        OutsideTool.Sox("-m",
            "-v", signalGain.ToString("R", CultureInfo.InvariantCulture), source,
            "-v", noiseGain.ToString("R", CultureInfo.InvariantCulture), noise,
            output);
    }
}
