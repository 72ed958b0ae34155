using NAudio.Wave;

namespace TapeVault.Core.Audio;

/// <summary>
/// Reads a stretch of a capture as mono samples by seeking straight to it, for looking at one block of a long
/// capture without reading everything before it. Unlike <see cref="CaptureReader"/> it does not hash the file: it is
/// for display, never for ingest or decoding.
/// </summary>
public static class CaptureExcerpt
{
    /// <summary>
    /// Up to <paramref name="frameCount"/> mono samples from sample frame <paramref name="startFrame"/> on, mixed to mono
    /// exactly as <see cref="CaptureReader"/> does; fewer when the capture ends first, none when it starts past the end.
    /// </summary>
    /// <exception cref="CaptureFormatException">The file is missing or is not a WAV file TapeVault can decode.</exception>
    public static float[] Read(string path, long startFrame, int frameCount, ChannelChoice channel = ChannelChoice.Mix)
    {
        ArgumentException.ThrowIfNullOrEmpty(path);
        ArgumentOutOfRangeException.ThrowIfNegative(startFrame);
        ArgumentOutOfRangeException.ThrowIfNegative(frameCount);
        if (!Enum.IsDefined(channel))
        {
            throw new ArgumentOutOfRangeException(nameof(channel), channel, "Unknown channel choice.");
        }

        FileStream stream;
        try
        {
            stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, 16 * 1024, FileOptions.RandomAccess);
        }
        catch (Exception e) when (e is FileNotFoundException or DirectoryNotFoundException or UnauthorizedAccessException)
        {
            throw new CaptureFormatException($"The file cannot be opened: {path}.", e);
        }

        using (stream)
        {
            WavLayout layout = WavHeaderProbe.Probe(stream);
            long available = Math.Max(0, layout.FrameCount - startFrame);
            int frames = (int)Math.Min(frameCount, available);
            var mono = new float[frames];
            if (frames == 0)
            {
                return mono;
            }

            IDisposable? owner = null;
            try
            {
                var samples = CaptureSamples.Open(stream, layout, startFrame, out owner, out _);
                int channels = layout.Channels;
                var interleaved = new float[Math.Min(frames, CaptureReader.FramesPerBuffer) * channels];
                int done = 0;
                while (done < frames)
                {
                    int want = Math.Min(frames - done, interleaved.Length / channels) * channels;
                    int got = samples.Read(interleaved.AsSpan(0, want)) / channels;
                    if (got == 0)
                    {
                        break;
                    }

                    CaptureReader.ToMono(interleaved.AsSpan(0, got * channels), mono.AsSpan(done, got), channels, channel);
                    done += got;
                }

                return done == frames ? mono : mono[..done];
            }
            catch (Exception e) when (e is FormatException or InvalidDataException or EndOfStreamException or ArgumentException or InvalidOperationException)
            {
                throw new CaptureFormatException("The WAV file's audio could not be decoded; the file may be damaged.", e);
            }
            finally
            {
                owner?.Dispose();
            }
        }
    }
}
