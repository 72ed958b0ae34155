using NAudio.Wave;

namespace TapeVault.Core.Audio;

/// <summary>
/// Streams a capture (WAV, RF64/BW64 or FLAC) as mono float samples in [-1, 1], and computes the SHA-256 of the file in the same read.
/// </summary>
/// <remarks>
/// <para>
/// <see cref="Open"/> validates the header up front and throws <see cref="CaptureFormatException"/> for anything
/// TapeVault cannot decode. Reads PCM 8/16/24/32-bit and IEEE float 32/64-bit, plain or WAVE_FORMAT_EXTENSIBLE,
/// with 1 to 8 channels, in RIFF, RF64 (EBU Tech 3306) or BW64 (ITU-R BS.2088) files, and FLAC (RFC 9639, decoded by
/// <see cref="FlacSampleProvider"/>, its MD5 checked at the end); several channels become one by <see cref="ChannelChoice"/>.
/// </para>
/// <para>
/// The file is opened once and read once: NAudio's <see cref="WaveFileReader"/> reads through a hashing stream; the
/// chunks before the audio are hashed on opening, the audio as it is read, and the chunks after it when it ends. <see cref="Sha256"/> is therefore
/// <c>null</c> until <see cref="Read"/> has returned 0 or <see cref="Complete"/> has run, and <see cref="Info"/>
/// throws <see cref="InvalidOperationException"/> until then.
/// </para>
/// <para>
/// A data chunk that claims more bytes than the file holds is read up to the real end of the file without error:
/// <see cref="Truncated"/> is true and <see cref="FrameCount"/> counts the whole frames actually present.
/// </para>
/// Not thread-safe.
/// </remarks>
public sealed class CaptureReader : IDisposable
{
    /// <summary>Sample frames converted per refill of the internal buffer.</summary>
    internal const int FramesPerBuffer = 4096;

    private readonly HashingReadStream file;
    private readonly IDisposable? owner;
    private readonly FlacSampleProvider? flac;
    private readonly ISampleProvider samples;
    private readonly float[] interleaved;
    private int bufferStart;
    private int bufferCount;
    private bool sourceEnded;
    private CaptureInfo? info;
    private bool disposed;

    private CaptureReader(string path, ChannelChoice channel, HashingReadStream file, WavLayout layout, IDisposable? owner, FlacSampleProvider? flac, ISampleProvider samples)
    {
        Path = path;
        Channel = channel;
        this.file = file;
        this.owner = owner;
        this.flac = flac;
        this.samples = samples;
        Container = layout.Container;
        Metadata = layout.Metadata;
        SampleRate = layout.SampleRate;
        Channels = layout.Channels;
        BitsPerSample = layout.BitsPerSample;
        Encoding = layout.Encoding;
        FrameCount = layout.FrameCount;
        Truncated = layout.Truncated;
        interleaved = new float[FramesPerBuffer * layout.Channels];
    }

    /// <summary>The path given to <see cref="Open"/>.</summary>
    public string Path { get; }

    /// <summary>How several channels become one; ignored for mono files.</summary>
    public ChannelChoice Channel { get; }

    /// <summary>Sample frames per second.</summary>
    public int SampleRate { get; }

    /// <summary>The container: <c>"wav"</c> (RIFF), <c>"rf64"</c>, <c>"bw64"</c> or <c>"flac"</c>.</summary>
    public string Container { get; }

    /// <summary>The metadata chunks the file carries: Broadcast WAV bext and iXML, FLAC comments.</summary>
    public CaptureMetadata Metadata { get; }

    /// <summary>Channels stored in the file (1 to 8).</summary>
    public int Channels { get; }

    /// <summary>Bits per sample: 8, 16, 24, 32 or 64 for WAV; 4 to 32 for FLAC.</summary>
    public int BitsPerSample { get; }

    /// <summary><c>"pcm"</c> or <c>"float"</c>.</summary>
    public string Encoding { get; }

    /// <summary>Whole sample frames present in the file (so, mono samples <see cref="Read"/> will return in total).</summary>
    public long FrameCount { get; }

    /// <summary><see cref="FrameCount"/> divided by <see cref="SampleRate"/>.</summary>
    public double DurationSeconds => (double)FrameCount / SampleRate;

    /// <summary>True when the data chunk's header claims more audio than the file holds; reading stops at the real end.</summary>
    public bool Truncated { get; }

    /// <summary>Mono samples returned by <see cref="Read"/> so far.</summary>
    public long FramesRead { get; private set; }

    /// <summary>True once the last sample has been read and the file's hash is known.</summary>
    public bool IsComplete => info is not null;

    /// <summary>
    /// Lower-case hex SHA-256 of every byte of the file, equal to <c>sha256sum</c>; <c>null</c> until the audio has
    /// been read to the end (<see cref="Read"/> returned 0, or <see cref="Complete"/> ran).
    /// </summary>
    public string? Sha256 => info?.Sha256;

    /// <summary>The full description of the capture, including <see cref="CaptureInfo.Sha256"/>.</summary>
    /// <exception cref="InvalidOperationException">The audio has not been read to the end yet; call <see cref="Complete"/>.</exception>
    public CaptureInfo Info => info ?? throw new InvalidOperationException(
        "The capture's SHA-256 is known only after its last sample has been read; call Complete() first.");

    /// <summary>Bytes read from disk so far, counting re-reads (for tests of the read-once promise).</summary>
    internal long SourceBytesRead => file.SourceBytesRead;

    /// <summary>Opens and validates a WAV capture.</summary>
    /// <param name="path">The WAV file.</param>
    /// <param name="channel">How a file with several channels becomes mono; mono files ignore it.</param>
    /// <exception cref="CaptureFormatException">The file does not exist or is not a WAV file TapeVault can decode.</exception>
    public static CaptureReader Open(string path, ChannelChoice channel = ChannelChoice.Mix)
    {
        ArgumentException.ThrowIfNullOrEmpty(path);
        if (!Enum.IsDefined(channel))
        {
            throw new ArgumentOutOfRangeException(nameof(channel), channel, "Unknown channel choice.");
        }

        if (Directory.Exists(path))
        {
            throw new CaptureFormatException($"The path is a folder, not a WAV file: {path}.");
        }

        FileStream stream;
        try
        {
            stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, 16 * 1024, FileOptions.SequentialScan);
        }
        catch (Exception e) when (e is FileNotFoundException or DirectoryNotFoundException)
        {
            throw new CaptureFormatException($"The file does not exist: {path}.", e);
        }

        var file = new HashingReadStream(stream);
        IDisposable? owner = null;
        try
        {
            WavLayout layout = WavHeaderProbe.Probe(file);
            ISampleProvider samples = CaptureSamples.Open(file, layout, 0, out owner, out FlacSampleProvider? flac);

            // The parsers stepped over chunk bodies before the audio (LIST, JUNK, ...); hash them now, once,
            // so that the audio read that follows continues the hash in file order.
            file.HashUpTo(layout.DataOffset);
            return new CaptureReader(path, channel, file, layout, owner, flac, samples);
        }
        catch
        {
            owner?.Dispose();
            file.Dispose();
            throw;
        }
    }

    /// <summary>
    /// Fills <paramref name="destination"/> with the next mono samples and returns how many were written: the whole
    /// span unless the audio ends first, and 0 once it has ended.
    /// </summary>
    /// <exception cref="CaptureFormatException">The audio data cannot be decoded.</exception>
    public int Read(Span<float> destination)
    {
        ObjectDisposedException.ThrowIf(disposed, this);
        int channels = Channels;
        int written = 0;
        while (written < destination.Length)
        {
            if (bufferCount < channels)
            {
                if (!Refill())
                {
                    break;
                }

                continue;
            }

            int frames = Math.Min(bufferCount / channels, destination.Length - written);
            int sampleCount = frames * channels;
            ToMono(interleaved.AsSpan(bufferStart, sampleCount), destination.Slice(written, frames), channels, Channel);
            bufferStart += sampleCount;
            bufferCount -= sampleCount;
            written += frames;
        }

        FramesRead += written;
        return written;
    }

    /// <summary>
    /// Reads (and discards) whatever audio has not been read yet, then returns the capture's full description with its SHA-256.
    /// </summary>
    /// <exception cref="CaptureFormatException">The audio data cannot be decoded.</exception>
    public CaptureInfo Complete()
    {
        ObjectDisposedException.ThrowIf(disposed, this);
        while (!sourceEnded)
        {
            bufferStart = 0;
            bufferCount = 0;
            Refill();
        }

        return Info;
    }

    /// <summary>Closes the file.</summary>
    public void Dispose()
    {
        if (!disposed)
        {
            disposed = true;
            owner?.Dispose();
            file.Dispose();
        }
    }

    /// <summary>
    /// Moves any partial frame left over to the front of the buffer and converts the next whole frames after it.
    /// Returns false, and completes the hash, when the audio has ended.
    /// </summary>
    private bool Refill()
    {
        if (sourceEnded)
        {
            return false;
        }

        int channels = Channels;
        if (bufferCount > 0 && bufferStart > 0)
        {
            interleaved.AsSpan(bufferStart, bufferCount).CopyTo(interleaved);
        }

        bufferStart = 0;

        // WaveFileReader only accepts whole blocks, so ask for whole frames.
        int room = (interleaved.Length - bufferCount) / channels * channels;
        int n;
        try
        {
            n = samples.Read(interleaved.AsSpan(bufferCount, room));
        }
        catch (Exception e) when (e is FormatException or InvalidDataException or EndOfStreamException or ArgumentException or InvalidOperationException)
        {
            throw new CaptureFormatException(
                $"The WAV file's audio could not be decoded after sample frame {FramesRead}; the file may be damaged.", e);
        }

        if (n > 0)
        {
            bufferCount += n;
            return true;
        }

        // End of the audio. A partial frame at the very end (a cut-off file) is dropped.
        sourceEnded = true;
        bufferCount = 0;
        string sha256 = file.Finish();
        info = new CaptureInfo(sha256, file.HashedBytes, SampleRate, Channels, BitsPerSample, Encoding, FrameCount, DurationSeconds)
        {
            Truncated = Truncated,
            Container = Container,
            Metadata = Metadata,
            FixityFinding = flac?.FixityFinding,
        };
        return false;
    }

    /// <summary>Turns whole interleaved frames into mono samples, one per frame, without allocating.</summary>
    internal static void ToMono(ReadOnlySpan<float> source, Span<float> destination, int channels, ChannelChoice channel)
    {
        if (channels == 1)
        {
            source.CopyTo(destination);
            return;
        }

        switch (channel)
        {
            case ChannelChoice.Left:
                for (int i = 0, j = 0; i < destination.Length; i++, j += channels)
                {
                    destination[i] = source[j];
                }

                break;
            case ChannelChoice.Right:
                for (int i = 0, j = 1; i < destination.Length; i++, j += channels)
                {
                    destination[i] = source[j];
                }

                break;
            default:
                if (channels == 2)
                {
                    for (int i = 0, j = 0; i < destination.Length; i++, j += 2)
                    {
                        destination[i] = (source[j] + source[j + 1]) * 0.5f;
                    }
                }
                else
                {
                    float scale = 1f / channels;
                    for (int i = 0, j = 0; i < destination.Length; i++, j += channels)
                    {
                        float sum = 0f;
                        for (int c = 0; c < channels; c++)
                        {
                            sum += source[j + c];
                        }

                        destination[i] = sum * scale;
                    }
                }

                break;
        }
    }
}
