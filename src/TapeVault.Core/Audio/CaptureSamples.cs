using NAudio.Wave;

namespace TapeVault.Core.Audio;

/// <summary>
/// Opens the interleaved float samples of a probed capture, whatever its container: NAudio's WAV reader for RIFF,
/// NAudio's sample converters over the data chunk for RF64/BW64 (whose 64-bit sizes live in ds64), and our RFC 9639
/// decoder for FLAC. One conversion to float for each PCM and float encoding, NAudio's.
/// </summary>
internal static class CaptureSamples
{
    /// <summary>
    /// Returns the samples from <paramref name="startFrame"/> on. <paramref name="owner"/> must be disposed with them
    /// (it does not dispose <paramref name="stream"/>); <paramref name="flac"/> is the decoder of a FLAC file, else null.
    /// </summary>
    /// <exception cref="CaptureFormatException">The file cannot be opened consistently with its probed layout.</exception>
    public static ISampleProvider Open(Stream stream, WavLayout layout, long startFrame, out IDisposable? owner, out FlacSampleProvider? flac)
    {
        owner = null;
        flac = null;
        switch (layout.Container)
        {
            case "flac":
                stream.Position = layout.DataOffset;
                flac = new FlacSampleProvider(stream, layout.Flac!);
                Skip(flac, startFrame * layout.Channels);
                return flac;
            case "rf64":
            case "bw64":
                long start = layout.DataOffset + (Math.Min(startFrame, layout.FrameCount) * layout.BlockAlign);
                stream.Position = start;
                var raw = new RawSourceWaveStream(new DataWindow(stream, layout.DataOffset + layout.AvailableDataBytes - start), Format(layout));
                owner = raw;
                return Convert(raw);
            default:
                stream.Position = 0;
                WaveFileReader wave = OpenWave(stream);
                owner = wave;
                if (stream.Position != layout.DataOffset
                    || wave.WaveFormat.Channels != layout.Channels
                    || wave.WaveFormat.SampleRate != layout.SampleRate
                    || wave.WaveFormat.BitsPerSample != layout.BitsPerSample)
                {
                    throw new CaptureFormatException("The WAV file's chunks could not be read consistently; the file may be damaged.");
                }

                if (startFrame > 0)
                {
                    wave.Position = startFrame * layout.BlockAlign;
                }

                return Convert(wave);
        }
    }

    private static ISampleProvider Convert(WaveStream wave)
    {
        try
        {
            return wave.ToSampleProvider();
        }
        catch (Exception e) when (e is ArgumentException or InvalidOperationException)
        {
            throw new CaptureFormatException("The WAV file's encoding could not be decoded; TapeVault reads PCM 8/16/24/32-bit and IEEE float.", e);
        }
    }

    private static WaveFormat Format(WavLayout layout) => layout.Encoding == "float"
        ? WaveFormat.CreateCustomFormat(WaveFormatEncoding.IeeeFloat, layout.SampleRate, layout.Channels, layout.SampleRate * layout.BlockAlign, layout.BlockAlign, layout.BitsPerSample)
        : new WaveFormat(layout.SampleRate, layout.BitsPerSample, layout.Channels);

    private static WaveFileReader OpenWave(Stream file)
    {
        try
        {
            return new WaveFileReader(file);
        }
        catch (Exception e) when (e is FormatException or InvalidDataException or EndOfStreamException or ArgumentException or InvalidOperationException)
        {
            throw new CaptureFormatException("The WAV file's header could not be read; the file may be damaged.", e);
        }
    }

    private static void Skip(FlacSampleProvider flac, long samples)
    {
        var scratch = new float[Math.Min(samples, 64 * 1024)];
        while (samples > 0)
        {
            int n = flac.Read(scratch.AsSpan(0, (int)Math.Min(samples, scratch.Length)));
            if (n == 0)
            {
                break;
            }

            samples -= n;
        }
    }

    /// <summary>The audio bytes of a data chunk, read front to back from the stream's position; the stream stays open.</summary>
    private sealed class DataWindow(Stream source, long length) : Stream
    {
        private long remaining = Math.Max(0, length);

        public override bool CanRead => true;

        public override bool CanSeek => false;

        public override bool CanWrite => false;

        public override long Length => length;

        public override long Position
        {
            get => length - remaining;
            set => throw new NotSupportedException();
        }

        public override int Read(byte[] buffer, int offset, int count) => Read(buffer.AsSpan(offset, count));

        public override int Read(Span<byte> buffer)
        {
            int want = (int)Math.Min(buffer.Length, remaining);
            if (want == 0)
            {
                return 0;
            }

            int n = source.Read(buffer[..want]);
            remaining -= n;
            return n;
        }

        public override void Flush()
        {
        }

        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

        public override void SetLength(long value) => throw new NotSupportedException();

        public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();
    }
}
