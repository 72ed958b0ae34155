using System.Buffers.Binary;
using NAudio.Wave;

namespace TapeVault.Core.Audio;

/// <summary>
/// Writes a mono or stereo WAV capture block by block through NAudio's <see cref="WaveFileWriter"/>.
/// Samples are clipped to [-1, 1] (NaN becomes 0) and quantised by rounding: integer PCM uses the same
/// full-scale factor as NAudio's and sox's readers (128, 32768, 8388608), so a written value reads back within
/// half a quantisation step. Dispose to finish the header.
/// </summary>
[System.Diagnostics.CodeAnalysis.SuppressMessage("Naming", "CA1711:Identifiers should not have incorrect suffix", Justification = "The name is part of the agreed API; it is a stream of samples into a file, not a System.IO.Stream.")]
public sealed class CaptureWriterStream : IDisposable
{
    private const int FramesPerBlock = 4096;

    private readonly WaveFileWriter writer;
    private readonly byte[] block;
    private readonly int bytesPerSample;
    private bool disposed;

    /// <summary>Creates (or overwrites) <paramref name="path"/> as a WAV file.</summary>
    /// <param name="path">The file to write.</param>
    /// <param name="sampleRate">Sample frames per second, above 0.</param>
    /// <param name="encoding">Sample encoding.</param>
    /// <param name="channels">1 (mono) or 2 (stereo).</param>
    public CaptureWriterStream(string path, int sampleRate, CaptureEncoding encoding = CaptureEncoding.Pcm16, int channels = 1)
    {
        ArgumentException.ThrowIfNullOrEmpty(path);
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(sampleRate);
        if (channels is not (1 or 2))
        {
            throw new ArgumentOutOfRangeException(nameof(channels), channels, "A capture is written with 1 or 2 channels.");
        }

        bytesPerSample = encoding switch
        {
            CaptureEncoding.Pcm8 => 1,
            CaptureEncoding.Pcm16 => 2,
            CaptureEncoding.Pcm24 => 3,
            CaptureEncoding.Float32 => 4,
            _ => throw new ArgumentOutOfRangeException(nameof(encoding), encoding, "Unknown capture encoding."),
        };

        WaveFormat format = encoding == CaptureEncoding.Float32
            ? WaveFormat.CreateIeeeFloatWaveFormat(sampleRate, channels)
            : new WaveFormat(sampleRate, bytesPerSample * 8, channels);
        Path = path;
        SampleRate = sampleRate;
        Encoding = encoding;
        Channels = channels;
        block = new byte[FramesPerBlock * channels * bytesPerSample];
        writer = new WaveFileWriter(path, format);
    }

    /// <summary>The file being written.</summary>
    public string Path { get; }

    /// <summary>Sample frames per second.</summary>
    public int SampleRate { get; }

    /// <summary>Sample encoding.</summary>
    public CaptureEncoding Encoding { get; }

    /// <summary>1 (mono) or 2 (stereo).</summary>
    public int Channels { get; }

    /// <summary>Sample frames written so far.</summary>
    public long FramesWritten { get; private set; }

    /// <summary>Appends mono samples.</summary>
    /// <exception cref="InvalidOperationException">The file is stereo; use <see cref="Write(ReadOnlySpan{float}, ReadOnlySpan{float})"/>.</exception>
    public void Write(ReadOnlySpan<float> samples)
    {
        ObjectDisposedException.ThrowIf(disposed, this);
        if (Channels != 1)
        {
            throw new InvalidOperationException("This capture is stereo; write the left and right channels together.");
        }

        while (!samples.IsEmpty)
        {
            int frames = Math.Min(samples.Length, FramesPerBlock);
            Span<byte> bytes = block.AsSpan(0, frames * bytesPerSample);
            for (int i = 0, o = 0; i < frames; i++, o += bytesPerSample)
            {
                Encode(samples[i], bytes[o..]);
            }

            writer.Write(bytes);
            FramesWritten += frames;
            samples = samples[frames..];
        }
    }

    /// <summary>Appends stereo frames; <paramref name="left"/> and <paramref name="right"/> must be equally long.</summary>
    /// <exception cref="InvalidOperationException">The file is mono; use <see cref="Write(ReadOnlySpan{float})"/>.</exception>
    public void Write(ReadOnlySpan<float> left, ReadOnlySpan<float> right)
    {
        ObjectDisposedException.ThrowIf(disposed, this);
        if (Channels != 2)
        {
            throw new InvalidOperationException("This capture is mono; write one channel of samples.");
        }

        if (left.Length != right.Length)
        {
            throw new ArgumentException($"The left channel has {left.Length} samples but the right one has {right.Length}.", nameof(right));
        }

        while (!left.IsEmpty)
        {
            int frames = Math.Min(left.Length, FramesPerBlock);
            Span<byte> bytes = block.AsSpan(0, frames * 2 * bytesPerSample);
            for (int i = 0, o = 0; i < frames; i++, o += 2 * bytesPerSample)
            {
                Encode(left[i], bytes[o..]);
                Encode(right[i], bytes[(o + bytesPerSample)..]);
            }

            writer.Write(bytes);
            FramesWritten += frames;
            left = left[frames..];
            right = right[frames..];
        }
    }

    /// <summary>Finishes the WAV header and closes the file.</summary>
    public void Dispose()
    {
        if (!disposed)
        {
            disposed = true;
            writer.Dispose();
        }
    }

    private void Encode(float sample, Span<byte> destination)
    {
        float x = float.IsNaN(sample) ? 0f : Math.Clamp(sample, -1f, 1f);
        switch (Encoding)
        {
            case CaptureEncoding.Pcm8:
                destination[0] = (byte)Math.Clamp((int)MathF.Round(x * 128f) + 128, 0, 255);
                break;
            case CaptureEncoding.Pcm16:
                BinaryPrimitives.WriteInt16LittleEndian(destination, (short)Math.Clamp((int)MathF.Round(x * 32768f), short.MinValue, short.MaxValue));
                break;
            case CaptureEncoding.Pcm24:
                int v = Math.Clamp((int)MathF.Round(x * 8388608f), -8388608, 8388607);
                destination[0] = (byte)(v & 0xFF);
                destination[1] = (byte)((v >> 8) & 0xFF);
                destination[2] = (byte)((v >> 16) & 0xFF);
                break;
            default:
                BinaryPrimitives.WriteSingleLittleEndian(destination, x);
                break;
        }
    }
}
