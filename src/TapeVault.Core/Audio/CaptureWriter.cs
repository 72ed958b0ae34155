namespace TapeVault.Core.Audio;

/// <summary>
/// Writes captures as WAV files (mono or stereo; 8-, 16-, 24-bit PCM or 32-bit float) for tests and the
/// channel-model synthesiser. See <see cref="CaptureWriterStream"/> for clipping and quantisation.
/// </summary>
public static class CaptureWriter
{
    /// <summary>Writes mono 16-bit PCM from a sequence of sample chunks.</summary>
    public static void WriteMono16(string path, int sampleRate, IEnumerable<ReadOnlyMemory<float>> chunks) =>
        WriteMono(path, sampleRate, CaptureEncoding.Pcm16, chunks);

    /// <summary>Writes a mono capture from a sequence of sample chunks.</summary>
    public static void WriteMono(string path, int sampleRate, CaptureEncoding encoding, IEnumerable<ReadOnlyMemory<float>> chunks)
    {
        ArgumentNullException.ThrowIfNull(chunks);
        using var stream = new CaptureWriterStream(path, sampleRate, encoding);
        foreach (ReadOnlyMemory<float> chunk in chunks)
        {
            stream.Write(chunk.Span);
        }
    }

    /// <summary>Writes a mono capture from one span of samples.</summary>
    public static void WriteMono(string path, int sampleRate, CaptureEncoding encoding, ReadOnlySpan<float> samples)
    {
        using var stream = new CaptureWriterStream(path, sampleRate, encoding);
        stream.Write(samples);
    }

    /// <summary>Writes a stereo capture; <paramref name="left"/> and <paramref name="right"/> must be equally long.</summary>
    public static void WriteStereo(string path, int sampleRate, CaptureEncoding encoding, ReadOnlySpan<float> left, ReadOnlySpan<float> right)
    {
        if (left.Length != right.Length)
        {
            throw new ArgumentException($"The left channel has {left.Length} samples but the right one has {right.Length}.", nameof(right));
        }

        using var stream = new CaptureWriterStream(path, sampleRate, encoding, channels: 2);
        stream.Write(left, right);
    }

    /// <summary>Opens a capture for writing block by block; dispose it to finish the file.</summary>
    public static CaptureWriterStream Create(string path, int sampleRate, CaptureEncoding encoding = CaptureEncoding.Pcm16, int channels = 1) =>
        new(path, sampleRate, encoding, channels);
}
