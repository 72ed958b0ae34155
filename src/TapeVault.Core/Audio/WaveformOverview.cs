using System.Buffers.Binary;
using System.Collections.Immutable;
using System.Numerics.Tensors;
using System.Runtime.InteropServices;

namespace TapeVault.Core.Audio;

/// <summary>
/// A whole capture shrunk to a fixed number of columns, each holding the lowest and highest sample of its stretch:
/// min/max decimation, which keeps every peak and dropout visible however long the capture is (an average would
/// hide them).
/// </summary>
/// <remarks>
/// Column <c>c</c> covers sample frames <c>[c·N/C, (c+1)·N/C)</c> of the <c>N</c> frames in <c>C</c> columns, so the
/// columns tile the capture without gaps or overlaps. A capture shorter than the columns asked for gets one column per
/// sample.
/// </remarks>
public sealed record WaveformOverview(int SampleRate, long FrameCount, ImmutableArray<float> Minimum, ImmutableArray<float> Maximum)
{
    private const int ChunkFrames = 64 * 1024;

    // "TVWO" and a version, so that a cache file of another layout is recomputed rather than misread.
    private const uint FileMagic = 0x4F575654;
    private const int FileVersion = 1;

    public int Columns => Minimum.Length;

    public double DurationSeconds => (double)FrameCount / SampleRate;

    /// <summary>The first sample frame of column <paramref name="column"/> (or the frame count, for the column after the last).</summary>
    public long FirstFrame(int column) => FirstFrame(column, FrameCount, Columns);

    /// <summary>Streams the capture once, in chunks, and decimates it to <paramref name="columns"/> columns.</summary>
    public static WaveformOverview Compute(CaptureReader reader, int columns, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(reader);
        ArgumentOutOfRangeException.ThrowIfLessThan(columns, 1);
        var builder = new Builder(reader.FrameCount, columns);
        var chunk = new float[ChunkFrames];
        int read;
        while ((read = reader.Read(chunk)) > 0)
        {
            cancellation.ThrowIfCancellationRequested();
            builder.Add(chunk.AsSpan(0, read));
        }

        return builder.Finish(reader.SampleRate);
    }

    /// <summary>Opens <paramref name="path"/> and decimates the whole capture.</summary>
    /// <exception cref="CaptureFormatException">The file is not a WAV file TapeVault can decode.</exception>
    public static WaveformOverview Compute(string path, int columns, ChannelChoice channel = ChannelChoice.Mix, CancellationToken cancellation = default)
    {
        using var reader = CaptureReader.Open(path, channel);
        return Compute(reader, columns, cancellation);
    }

    /// <summary>Decimates samples already in memory (a zoomed stretch).</summary>
    public static WaveformOverview FromSamples(ReadOnlySpan<float> samples, int sampleRate, int columns)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(columns, 1);
        ArgumentOutOfRangeException.ThrowIfLessThan(sampleRate, 1);
        var builder = new Builder(samples.Length, columns);
        builder.Add(samples);
        return builder.Finish(sampleRate);
    }

    /// <summary>Writes the overview in a small binary layout of its own (little-endian), for a cache file.</summary>
    public void WriteTo(Stream stream)
    {
        ArgumentNullException.ThrowIfNull(stream);
        var bytes = new byte[20 + (8 * Columns)];
        BinaryPrimitives.WriteUInt32LittleEndian(bytes, FileMagic);
        BinaryPrimitives.WriteInt32LittleEndian(bytes.AsSpan(4), FileVersion);
        BinaryPrimitives.WriteInt32LittleEndian(bytes.AsSpan(8), SampleRate);
        BinaryPrimitives.WriteInt64LittleEndian(bytes.AsSpan(12), FrameCount);
        for (int c = 0; c < Columns; c++)
        {
            BinaryPrimitives.WriteSingleLittleEndian(bytes.AsSpan(20 + (8 * c)), Minimum[c]);
            BinaryPrimitives.WriteSingleLittleEndian(bytes.AsSpan(24 + (8 * c)), Maximum[c]);
        }

        stream.Write(bytes);
    }

    /// <summary>Reads what <see cref="WriteTo"/> wrote; null for anything else (a cache file to recompute).</summary>
    public static WaveformOverview? ReadFrom(ReadOnlySpan<byte> bytes)
    {
        if (bytes.Length < 20 || (bytes.Length - 20) % 8 != 0
            || BinaryPrimitives.ReadUInt32LittleEndian(bytes) != FileMagic
            || BinaryPrimitives.ReadInt32LittleEndian(bytes[4..]) != FileVersion)
        {
            return null;
        }

        int sampleRate = BinaryPrimitives.ReadInt32LittleEndian(bytes[8..]);
        long frameCount = BinaryPrimitives.ReadInt64LittleEndian(bytes[12..]);
        int columns = (bytes.Length - 20) / 8;
        if (sampleRate <= 0 || frameCount < columns)
        {
            return null;
        }

        var minimum = new float[columns];
        var maximum = new float[columns];
        for (int c = 0; c < columns; c++)
        {
            minimum[c] = BinaryPrimitives.ReadSingleLittleEndian(bytes[(20 + (8 * c))..]);
            maximum[c] = BinaryPrimitives.ReadSingleLittleEndian(bytes[(24 + (8 * c))..]);
        }

        return new WaveformOverview(sampleRate, frameCount, ImmutableCollectionsMarshal.AsImmutableArray(minimum), ImmutableCollectionsMarshal.AsImmutableArray(maximum));
    }

    private static long FirstFrame(int column, long frameCount, int columns) =>
        columns == 0 ? 0 : (long)((Int128)column * frameCount / columns);

    /// <summary>The running state of one decimation: which column the next sample falls in, and its extremes so far.</summary>
    public sealed class Builder
    {
        private readonly long _frameCount;
        private readonly float[] _minimum;
        private readonly float[] _maximum;
        private int _column;
        private long _frame;
        private long _columnEnd;

        public Builder(long frameCount, int columns)
        {
            _frameCount = frameCount;
            int used = (int)Math.Min(columns, frameCount);
            _minimum = new float[used];
            _maximum = new float[used];
            _minimum.AsSpan().Fill(float.PositiveInfinity);
            _maximum.AsSpan().Fill(float.NegativeInfinity);
            _columnEnd = FirstFrame(1, frameCount, used);
        }

        public void Add(ReadOnlySpan<float> samples)
        {
            while (!samples.IsEmpty && _column < _minimum.Length)
            {
                int take = (int)Math.Min(samples.Length, _columnEnd - _frame);
                var part = samples[..take];

                // TensorPrimitives picks the widest vectors the machine has; a column is thousands of samples long.
                _minimum[_column] = Math.Min(_minimum[_column], TensorPrimitives.Min(part));
                _maximum[_column] = Math.Max(_maximum[_column], TensorPrimitives.Max(part));
                _frame += take;
                samples = samples[take..];
                if (_frame == _columnEnd)
                {
                    _column++;
                    _columnEnd = FirstFrame(_column + 1, _frameCount, _minimum.Length);
                }
            }
        }

        public WaveformOverview Finish(int sampleRate)
        {
            // A capture cut short of its header's length leaves columns unfilled; they read as silence, not as infinities.
            for (int c = _column; c < _minimum.Length; c++)
            {
                if (float.IsPositiveInfinity(_minimum[c]))
                {
                    _minimum[c] = 0;
                    _maximum[c] = 0;
                }
            }

            // The arrays are handed over, never written again: no copy needed.
            return new WaveformOverview(sampleRate, _frameCount, ImmutableCollectionsMarshal.AsImmutableArray(_minimum), ImmutableCollectionsMarshal.AsImmutableArray(_maximum));
        }
    }
}
