using System.Buffers.Binary;
using System.Diagnostics;
using System.Text;
using TapeVault.Core.Audio;
using Xunit;

namespace TapeVault.Core.Tests.Audio;

/// <summary>A fresh temporary folder for one test class, deleted with everything in it when the class is done.</summary>
public sealed class AudioTempFolder : IDisposable
{
    public string Root { get; } = Directory.CreateTempSubdirectory("tapevault-audio-").FullName;

    /// <summary>A path inside the folder.</summary>
    public string File(string name) => Path.Combine(Root, name);

    /// <summary>Writes <paramref name="bytes"/> to a new file in the folder and returns its path.</summary>
    public string Write(string name, byte[] bytes)
    {
        string path = File(name);
        System.IO.File.WriteAllBytes(path, bytes);
        return path;
    }

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

/// <summary>
/// Outside tools used as independent references: SoX (/usr/bin/sox) converts and inspects WAV files, and GNU
/// coreutils' sha256sum hashes them. Neither shares any code with NAudio or TapeVault.
/// </summary>
internal static class ExternalTools
{
    public const string SoxPath = "/usr/bin/sox";
    public const string Sha256SumPath = "/usr/bin/sha256sum";

    /// <summary>Runs SoX (the outside reference for WAV conversion) with the given arguments.</summary>
    public static string Sox(params string[] arguments) => Run(SoxPath, arguments);

    /// <summary>Runs <c>sox --i -X file</c> (SoX's file inspector) and returns its trimmed answer.</summary>
    public static string SoxInfo(string option, string path) => Sox("--i", option, path).Trim();

    /// <summary>The SHA-256 of the file as GNU sha256sum (the outside reference for hashing) prints it.</summary>
    public static string Sha256Sum(string path)
    {
        string output = Run(Sha256SumPath, "-b", path);
        string hex = output.Split(' ', 2)[0].TrimStart('\\');
        Assert.Matches("^[0-9a-f]{64}$", hex);
        return hex;
    }

    // One process runner for every outside tool the tests call.
    private static string Run(string program, params string[] arguments) =>
        TapeVault.Core.Tests.OutsideChecks.OutsideTool.Run(program, arguments).StandardOutput;
}

/// <summary>Builds WAV files byte by byte, for headers no well-behaved writer would produce.</summary>
internal static class WavBytes
{
    public const ushort Pcm = 0x0001;
    public const ushort IeeeFloat = 0x0003;
    public const ushort Extensible = 0xFFFE;

    /// <summary>KSDATAFORMAT_SUBTYPE GUID for a format code, as stored in a file.</summary>
    public static byte[] SubFormat(ushort code)
    {
        var guid = new byte[16];
        BinaryPrimitives.WriteUInt16LittleEndian(guid, code);
        byte[] tail = [0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71];
        tail.CopyTo(guid, 4);
        return guid;
    }

    /// <summary>A 16-byte fmt body (or 18 with cbSize = 0 when <paramref name="withCbSize"/>).</summary>
    public static byte[] FmtBody(ushort tag, ushort channels, uint sampleRate, ushort bitsPerSample, ushort? blockAlign = null, bool withCbSize = false)
    {
        var body = new byte[withCbSize ? 18 : 16];
        ushort align = blockAlign ?? (ushort)(channels * (bitsPerSample / 8));
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(0), tag);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(2), channels);
        BinaryPrimitives.WriteUInt32LittleEndian(body.AsSpan(4), sampleRate);
        BinaryPrimitives.WriteUInt32LittleEndian(body.AsSpan(8), checked(sampleRate * align));
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(12), align);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(14), bitsPerSample);
        return body;
    }

    /// <summary>A 40-byte WAVE_FORMAT_EXTENSIBLE fmt body.</summary>
    public static byte[] ExtensibleFmtBody(ushort channels, uint sampleRate, ushort bitsPerSample, byte[] subFormat)
    {
        var body = new byte[40];
        FmtBody(Extensible, channels, sampleRate, bitsPerSample).CopyTo(body, 0);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(16), 22);
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(18), bitsPerSample);
        BinaryPrimitives.WriteUInt32LittleEndian(body.AsSpan(20), channels == 1 ? 0x4u : 0x3u);
        subFormat.CopyTo(body, 24);
        return body;
    }

    /// <summary>A chunk: id, size (<paramref name="declaredSize"/> if given, else the body's), body, and a pad byte if the body is odd.</summary>
    public static byte[] Chunk(string id, byte[] body, uint? declaredSize = null, bool pad = true)
    {
        var bytes = new List<byte>(body.Length + 9);
        bytes.AddRange(Encoding.ASCII.GetBytes(id));
        var size = new byte[4];
        BinaryPrimitives.WriteUInt32LittleEndian(size, declaredSize ?? (uint)body.Length);
        bytes.AddRange(size);
        bytes.AddRange(body);
        if (pad && body.Length % 2 == 1)
        {
            bytes.Add(0);
        }

        return [.. bytes];
    }

    /// <summary>A whole file: the RIFF header (size computed unless given) and the chunks in order.</summary>
    public static byte[] Riff(string form, uint? riffSize, params byte[][] chunks)
    {
        int length = chunks.Sum(c => c.Length);
        var bytes = new List<byte>(length + 12);
        bytes.AddRange("RIFF"u8.ToArray());
        var size = new byte[4];
        BinaryPrimitives.WriteUInt32LittleEndian(size, riffSize ?? (uint)(length + 4));
        bytes.AddRange(size);
        bytes.AddRange(Encoding.ASCII.GetBytes(form));
        foreach (byte[] chunk in chunks)
        {
            bytes.AddRange(chunk);
        }

        return [.. bytes];
    }

    /// <summary>A RIFF/WAVE file from chunks.</summary>
    public static byte[] Wave(params byte[][] chunks) => Riff("WAVE", null, chunks);

    /// <summary>A plain mono or stereo 16-bit PCM file of the given interleaved samples.</summary>
    public static byte[] Pcm16(uint sampleRate, ushort channels, short[] interleaved, uint? declaredDataSize = null) =>
        Wave(Chunk("fmt ", FmtBody(Pcm, channels, sampleRate, 16)), Chunk("data", Pcm16Body(interleaved), declaredDataSize));

    /// <summary>Little-endian 16-bit sample bytes.</summary>
    public static byte[] Pcm16Body(short[] samples)
    {
        var body = new byte[samples.Length * 2];
        for (int i = 0; i < samples.Length; i++)
        {
            BinaryPrimitives.WriteInt16LittleEndian(body.AsSpan(i * 2), samples[i]);
        }

        return body;
    }

    /// <summary>Little-endian 32-bit float sample bytes.</summary>
    public static byte[] Float32Body(float[] samples)
    {
        var body = new byte[samples.Length * 4];
        for (int i = 0; i < samples.Length; i++)
        {
            BinaryPrimitives.WriteSingleLittleEndian(body.AsSpan(i * 4), samples[i]);
        }

        return body;
    }

    /// <summary>A LIST/INFO chunk body with one odd-length text (so the sub-chunk needs its own pad byte).</summary>
    public static byte[] ListInfoBody(string text)
    {
        byte[] value = [.. Encoding.ASCII.GetBytes(text), 0];
        return [.. "INFO"u8.ToArray(), .. Chunk("ICMT", value)];
    }
}

/// <summary>Deterministic test signals and read helpers.</summary>
internal static class AudioSamples
{
    /// <summary>
    /// Two tones in the band of tape data (1200 Hz and 2400 Hz at 44.1 kHz, say) plus a little seeded noise,
    /// peaking below <paramref name="amplitude"/>.
    /// </summary>
    public static float[] Tones(int frames, int sampleRate, double firstHz, double secondHz, double amplitude = 0.8, int seed = 1)
    {
        var random = new Random(seed);
        var samples = new float[frames];
        for (int i = 0; i < frames; i++)
        {
            double t = (double)i / sampleRate;
            double value = (0.6 * Math.Sin(2 * Math.PI * firstHz * t)) + (0.3 * Math.Sin((2 * Math.PI * secondHz * t) + 0.5)) + (0.1 * ((random.NextDouble() * 2) - 1));
            samples[i] = (float)(amplitude * value);
        }

        return samples;
    }

    /// <summary>Reads every sample in chunks of <paramref name="chunk"/> and checks the count against <see cref="CaptureReader.FrameCount"/>.</summary>
    public static float[] ReadAll(CaptureReader reader, int chunk = 4096)
    {
        var all = new float[reader.FrameCount];
        var buffer = new float[chunk];
        long total = 0;
        while (true)
        {
            int n = reader.Read(buffer);
            if (n == 0)
            {
                break;
            }

            Assert.True(total + n <= all.Length, $"The reader returned more than its FrameCount ({reader.FrameCount}) samples.");
            buffer.AsSpan(0, n).CopyTo(all.AsSpan((int)total));
            total += n;
        }

        Assert.Equal(reader.FrameCount, total);
        return all;
    }

    /// <summary>Opens, reads everything and closes.</summary>
    public static float[] ReadFile(string path, ChannelChoice channel = ChannelChoice.Mix, int chunk = 4096)
    {
        using CaptureReader reader = CaptureReader.Open(path, channel);
        return ReadAll(reader, chunk);
    }

    /// <summary>Asserts two sample arrays have the same length and differ nowhere by more than <paramref name="tolerance"/>.</summary>
    public static void AssertClose(ReadOnlySpan<float> expected, ReadOnlySpan<float> actual, double tolerance)
    {
        Assert.Equal(expected.Length, actual.Length);
        for (int i = 0; i < expected.Length; i++)
        {
            double error = Math.Abs((double)expected[i] - actual[i]);
            if (error > tolerance)
            {
                Assert.Fail($"Sample {i}: expected {expected[i]:R}, got {actual[i]:R} (error {error:G4} > tolerance {tolerance:G4}).");
            }
        }
    }

    /// <summary>Reads a raw little-endian 32-bit float file, as <c>sox ... -t raw -e floating-point -b 32 -L</c> writes it.</summary>
    public static float[] ReadRawFloat32(string path)
    {
        byte[] bytes = File.ReadAllBytes(path);
        var samples = new float[bytes.Length / 4];
        for (int i = 0; i < samples.Length; i++)
        {
            samples[i] = BinaryPrimitives.ReadSingleLittleEndian(bytes.AsSpan(i * 4));
        }

        return samples;
    }
}
