using System.Globalization;
using System.Numerics;
using System.Security.Cryptography;
using NAudio.Wave;

namespace TapeVault.Core.Audio;

/// <summary>
/// Decodes the frames of a FLAC stream (RFC 9639, section 9) into interleaved float samples in [-1, 1), one frame at
/// a time, reading the file front to back once. Every frame header's CRC-8 and every frame's CRC-16 is checked, every
/// frame must agree with STREAMINFO, and the MD5 of the decoded audio is compared with STREAMINFO's at the end.
/// </summary>
/// <remarks>
/// A damaged frame, a truncated file or STREAMINFO that does not describe the frames throws
/// <see cref="CaptureFormatException"/> with one sentence. An MD5 that does not match is not thrown: the audio decoded
/// cleanly frame by frame, so <see cref="FixityFinding"/> says so and the caller records it.
/// </remarks>
internal sealed class FlacSampleProvider : ISampleProvider
{
    /// <summary>Largest frame accepted: 65535 samples × 8 channels × 33 bits, plus headers (RFC 9639 limits).</summary>
    private const int MaxFrameBytes = 65_535 * 8 * 33 / 8 + 64;

    private static readonly int[] SampleRates = [0, 88_200, 176_400, 192_000, 8_000, 16_000, 22_050, 24_000, 32_000, 44_100, 48_000, 96_000];
    private static readonly int[] SampleSizes = [0, 8, 12, -1, 16, 20, 24, 32];

    private readonly Stream source;
    private readonly FlacStreamInfo info;
    private readonly IncrementalHash md5 = IncrementalHash.CreateHash(HashAlgorithmName.MD5);
    private readonly long[][] channelSamples;
    private readonly long[] coefficients = new long[32];
    private readonly float[] decoded;
    private readonly byte[] md5Bytes;
    private readonly float scale;
    private byte[] buffer = new byte[64 * 1024];
    private int bufferLength;
    private int bytePosition;
    private long bufferFileOffset;
    private ulong cache;
    private int cacheBits;
    private int decodedStart;
    private int decodedCount;
    private long samplesDecoded;
    private long frameIndex;
    private bool ended;

    /// <summary>Decodes from <paramref name="source"/>, which must be at the first frame.</summary>
    public FlacSampleProvider(Stream source, FlacStreamInfo info)
    {
        this.source = source;
        this.info = info;
        bufferFileOffset = source.Position;
        channelSamples = new long[info.Channels][];
        for (int c = 0; c < info.Channels; c++)
        {
            channelSamples[c] = new long[info.MaxBlockSize];
        }

        decoded = new float[info.MaxBlockSize * info.Channels];
        md5Bytes = new byte[info.MaxBlockSize * info.Channels * ((info.BitsPerSample + 7) / 8)];
        scale = 1f / (1L << (info.BitsPerSample - 1));
        WaveFormat = WaveFormat.CreateIeeeFloatWaveFormat(info.SampleRate, info.Channels);
    }

    /// <inheritdoc />
    public WaveFormat WaveFormat { get; }

    /// <summary>
    /// Once the stream has ended: one sentence when the decoded audio's MD5 differs from STREAMINFO's, else null.
    /// </summary>
    public string? FixityFinding { get; private set; }

    /// <summary>True once every sample has been decoded and the MD5 compared.</summary>
    public bool Ended => ended;

    /// <inheritdoc />
    public int Read(float[] buffer, int offset, int count) => Read(buffer.AsSpan(offset, count));

    /// <inheritdoc />
    public int Read(Span<float> destination)
    {
        int written = 0;
        while (written < destination.Length)
        {
            if (decodedCount == 0)
            {
                if (ended || !DecodeFrame())
                {
                    break;
                }
            }

            int n = Math.Min(decodedCount, destination.Length - written);
            decoded.AsSpan(decodedStart, n).CopyTo(destination[written..]);
            decodedStart += n;
            decodedCount -= n;
            written += n;
        }

        return written;
    }

    /// <summary>Decodes the next frame into <see cref="decoded"/>; false (after the end-of-stream checks) when none is left.</summary>
    private bool DecodeFrame()
    {
        if (samplesDecoded >= info.TotalSamples)
        {
            Finish();
            return false;
        }

        // Frames start on a byte boundary; drop what earlier frames used so the buffer holds this frame from its start.
        Compact();
        long frameOffset = bufferFileOffset + bytePosition;
        if (!HasByte())
        {
            throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                $"The FLAC file ends after {samplesDecoded} of the {info.TotalSamples} samples its STREAMINFO promises; the file was probably cut off while copying."));
        }

        try
        {
            unchecked
            {
                DecodeFrameAt(frameOffset);
            }
        }
        catch (OverflowException e)
        {
            throw Damaged(frameOffset, "holds a value too large for its sample size", e);
        }

        return true;
    }

    private void DecodeFrameAt(long frameOffset)
    {
        // RFC 9639, section 9.1: 14-bit sync 0b11111111111110, a reserved 0 bit, the blocking strategy bit.
        uint sync = ReadBits(16);
        if ((sync & 0xFFFE) != 0xFFF8)
        {
            throw Damaged(frameOffset, "does not start with a frame sync code", null);
        }

        int blockSizeCode = (int)ReadBits(4);
        int rateCode = (int)ReadBits(4);
        int channelCode = (int)ReadBits(4);
        int sizeCode = (int)ReadBits(3);
        if (ReadBits(1) != 0)
        {
            throw Damaged(frameOffset, "has its reserved header bit set", null);
        }

        ReadCodedNumber(frameOffset);
        int blockSize = blockSizeCode switch
        {
            0 => throw Damaged(frameOffset, "uses the reserved block size code 0", null),
            1 => 192,
            <= 5 => 576 << (blockSizeCode - 2),
            6 => (int)ReadBits(8) + 1,
            7 => (int)ReadBits(16) + 1,
            _ => 256 << (blockSizeCode - 8),
        };
        int sampleRate = rateCode switch
        {
            0 => info.SampleRate,
            <= 11 => SampleRates[rateCode],
            12 => (int)ReadBits(8) * 1000,
            13 => (int)ReadBits(16),
            14 => (int)ReadBits(16) * 10,
            _ => throw Damaged(frameOffset, "uses the forbidden sample rate code 15", null),
        };

        int headerEnd = bytePosition;
        byte headerCrc = (byte)ReadBits(8);
        int frameStart = (int)(frameOffset - bufferFileOffset);
        if (FlacCrc.Crc8(buffer.AsSpan(frameStart, headerEnd - frameStart)) != headerCrc)
        {
            throw Damaged(frameOffset, "has a header whose CRC-8 does not match (RFC 9639, section 9.1.8)", null);
        }

        int bits = sizeCode == 0 ? info.BitsPerSample : SampleSizes[sizeCode];
        if (bits < 0)
        {
            throw Damaged(frameOffset, "uses the reserved sample size code 3", null);
        }

        int channels = channelCode <= 7 ? channelCode + 1 : channelCode <= 10 ? 2 : throw Damaged(frameOffset, $"uses the reserved channel code {channelCode}", null);
        if (sampleRate != info.SampleRate || bits != info.BitsPerSample || channels != info.Channels)
        {
            throw Lying(string.Create(CultureInfo.InvariantCulture,
                $"frame {frameIndex} holds {channels} channel(s) of {bits}-bit audio at {sampleRate} Hz but STREAMINFO says {info.Channels} of {info.BitsPerSample}-bit at {info.SampleRate} Hz"));
        }

        if (blockSize > info.MaxBlockSize)
        {
            throw Lying(string.Create(CultureInfo.InvariantCulture,
                $"frame {frameIndex} holds {blockSize} samples but STREAMINFO says no frame holds more than {info.MaxBlockSize}"));
        }

        if (samplesDecoded + blockSize > info.TotalSamples)
        {
            throw Lying(string.Create(CultureInfo.InvariantCulture,
                $"the frames hold more than the {info.TotalSamples} samples STREAMINFO promises"));
        }

        for (int c = 0; c < channels; c++)
        {
            // The side channel carries one more bit (RFC 9639, section 9.1.3).
            bool side = (channelCode == 8 && c == 1) || (channelCode == 9 && c == 0) || (channelCode == 10 && c == 1);
            DecodeSubframe(channelSamples[c].AsSpan(0, blockSize), bits + (side ? 1 : 0), frameOffset);
        }

        // Zero padding to the byte boundary, then the CRC-16 of everything before it (RFC 9639, section 9.3).
        cacheBits -= cacheBits % 8;
        int frameEnd = bytePosition - cacheBits / 8;
        ushort frameCrc = (ushort)ReadBits(16);
        if (FlacCrc.Crc16(buffer.AsSpan(frameStart, frameEnd - frameStart)) != frameCrc)
        {
            throw Damaged(frameOffset, "has a CRC-16 that does not match its contents (RFC 9639, section 9.3)", null);
        }

        Decorrelate(channelCode, blockSize);
        Emit(blockSize, channels, bits);
        samplesDecoded += blockSize;
        frameIndex++;
    }

    private void DecodeSubframe(Span<long> samples, int bits, long frameOffset)
    {
        if (ReadBits(1) != 0)
        {
            throw Damaged(frameOffset, "has a subframe whose first (padding) bit is set", null);
        }

        int type = (int)ReadBits(6);
        int wasted = 0;
        if (ReadBits(1) != 0)
        {
            wasted = ReadUnary(frameOffset) + 1;
            bits -= wasted;
            if (bits <= 0)
            {
                throw Damaged(frameOffset, "has a subframe with more wasted bits than sample bits", null);
            }
        }

        if (type == 0)
        {
            samples.Fill(ReadSigned(bits));
        }
        else if (type == 1)
        {
            for (int i = 0; i < samples.Length; i++)
            {
                samples[i] = ReadSigned(bits);
            }
        }
        else if (type is >= 8 and <= 12)
        {
            int order = type - 8;
            CheckOrder(order, samples.Length, frameOffset);
            for (int i = 0; i < order; i++)
            {
                samples[i] = ReadSigned(bits);
            }

            ReadResidual(samples, order, frameOffset);
            FixedPredict(samples, order);
        }
        else if (type >= 32)
        {
            int order = (type & 0x1F) + 1;
            CheckOrder(order, samples.Length, frameOffset);
            for (int i = 0; i < order; i++)
            {
                samples[i] = ReadSigned(bits);
            }

            int precision = (int)ReadBits(4) + 1;
            if (precision == 16)
            {
                throw Damaged(frameOffset, "has a subframe with the invalid coefficient precision 0b1111", null);
            }

            int shift = (int)ReadSigned(5);
            if (shift < 0)
            {
                throw Damaged(frameOffset, "has a subframe with a negative prediction shift", null);
            }

            for (int i = 0; i < order; i++)
            {
                coefficients[i] = ReadSigned(precision);
            }

            ReadResidual(samples, order, frameOffset);
            LinearPredict(samples, coefficients.AsSpan(0, order), shift);
        }
        else
        {
            throw Damaged(frameOffset, $"has a subframe of the reserved type {type}", null);
        }

        if (wasted > 0)
        {
            for (int i = 0; i < samples.Length; i++)
            {
                samples[i] <<= wasted;
            }
        }
    }

    private void CheckOrder(int order, int blockSize, long frameOffset)
    {
        if (order > blockSize)
        {
            throw Damaged(frameOffset, $"has a predictor of order {order} in a block of {blockSize} samples", null);
        }
    }

    // RFC 9639, section 9.2.7: Rice-coded residual in 2^order partitions; the first partition is short by the predictor order.
    private void ReadResidual(Span<long> samples, int order, long frameOffset)
    {
        int method = (int)ReadBits(2);
        if (method > 1)
        {
            throw Damaged(frameOffset, "uses a reserved residual coding method", null);
        }

        int parameterBits = method == 0 ? 4 : 5;
        uint escape = method == 0 ? 15u : 31u;
        int partitionOrder = (int)ReadBits(4);
        int partitions = 1 << partitionOrder;
        int perPartition = samples.Length >> partitionOrder;
        if (samples.Length % partitions != 0 || perPartition < order)
        {
            throw Damaged(frameOffset, $"has a residual partition order {partitionOrder} that does not fit its block of {samples.Length} samples", null);
        }

        int at = order;
        for (int p = 0; p < partitions; p++)
        {
            int count = p == 0 ? perPartition - order : perPartition;
            uint parameter = ReadBits(parameterBits);
            if (parameter == escape)
            {
                int rawBits = (int)ReadBits(5);
                for (int i = 0; i < count; i++)
                {
                    samples[at++] = rawBits == 0 ? 0 : ReadSigned(rawBits);
                }

                continue;
            }

            int k = (int)parameter;
            for (int i = 0; i < count; i++)
            {
                ulong quotient = (ulong)ReadUnary(frameOffset);
                ulong folded = (quotient << k) | ReadBits(k);
                samples[at++] = (long)(folded >> 1) ^ -(long)(folded & 1);
            }
        }
    }

    // RFC 9639, section 9.2.5: fixed predictors of order 0 to 4.
    private static void FixedPredict(Span<long> s, int order)
    {
        // Unchecked: a damaged stream that wraps is caught by Emit's range check, then by the MD5.
        unchecked
        {
            switch (order)
            {
                case 1:
                    for (int i = 1; i < s.Length; i++)
                    {
                        s[i] += s[i - 1];
                    }

                    break;
                case 2:
                    for (int i = 2; i < s.Length; i++)
                    {
                        s[i] += (2 * s[i - 1]) - s[i - 2];
                    }

                    break;
                case 3:
                    for (int i = 3; i < s.Length; i++)
                    {
                        s[i] += (3 * s[i - 1]) - (3 * s[i - 2]) + s[i - 3];
                    }

                    break;
                case 4:
                    for (int i = 4; i < s.Length; i++)
                    {
                        s[i] += (4 * s[i - 1]) - (6 * s[i - 2]) + (4 * s[i - 3]) - s[i - 4];
                    }

                    break;
                default:
                    break;
            }
        }
    }

    // RFC 9639, section 9.2.6: the prediction is the sum of coefficient × earlier sample, shifted right.
    private static void LinearPredict(Span<long> s, ReadOnlySpan<long> coefficients, int shift)
    {
        // Unchecked: a damaged stream that wraps is caught by Emit's range check, then by the MD5.
        unchecked
        {
            int order = coefficients.Length;
            for (int i = order; i < s.Length; i++)
            {
                long sum = 0;
                for (int j = 0; j < order; j++)
                {
                    sum += coefficients[j] * s[i - 1 - j];
                }

                s[i] += sum >> shift;
            }
        }
    }

    // RFC 9639, section 9.1.3: left/side, side/right and mid/side stereo back to left and right.
    private void Decorrelate(int channelCode, int blockSize)
    {
        Span<long> a = channelSamples[0].AsSpan(0, blockSize);
        Span<long> b = channelSamples.Length > 1 ? channelSamples[1].AsSpan(0, blockSize) : default;
        switch (channelCode)
        {
            case 8:
                for (int i = 0; i < blockSize; i++)
                {
                    b[i] = a[i] - b[i];
                }

                break;
            case 9:
                for (int i = 0; i < blockSize; i++)
                {
                    a[i] += b[i];
                }

                break;
            case 10:
                for (int i = 0; i < blockSize; i++)
                {
                    long mid = (a[i] << 1) | (b[i] & 1);
                    long side = b[i];
                    a[i] = (mid + side) >> 1;
                    b[i] = (mid - side) >> 1;
                }

                break;
            default:
                break;
        }
    }

    /// <summary>Interleaves the block into floats and feeds its little-endian signed bytes to the MD5 (RFC 9639, section 8.2).</summary>
    private void Emit(int blockSize, int channels, int bits)
    {
        int bytesPerSample = (bits + 7) / 8;
        long low = -(1L << (bits - 1));
        long high = (1L << (bits - 1)) - 1;
        int o = 0;
        int m = 0;
        for (int i = 0; i < blockSize; i++)
        {
            for (int c = 0; c < channels; c++)
            {
                long v = channelSamples[c][i];
                if (v < low || v > high)
                {
                    throw Damaged(bufferFileOffset, string.Create(CultureInfo.InvariantCulture, $"decodes to a sample outside the {bits}-bit range"), null);
                }

                decoded[o++] = v * scale;
                for (int k = 0; k < bytesPerSample; k++)
                {
                    md5Bytes[m++] = unchecked((byte)(v >> (8 * k)));
                }
            }
        }

        md5.AppendData(md5Bytes, 0, m);
        decodedStart = 0;
        decodedCount = o;
    }

    private void Finish()
    {
        if (ended)
        {
            return;
        }

        ended = true;
        string actual = Convert.ToHexStringLower(md5.GetHashAndReset());
        md5.Dispose();
        if (info.Md5.Length > 0 && actual != info.Md5)
        {
            FixityFinding = $"The FLAC file's decoded audio has MD5 {actual}, not the {info.Md5} its STREAMINFO recorded when it was encoded, so the audio changed after encoding.";
        }
    }

    private void ReadCodedNumber(long frameOffset)
    {
        // RFC 9639, section 9.1.5: a UTF-8-like code of 1 to 7 bytes.
        uint first = ReadBits(8);
        int extra = first < 0x80 ? 0 : first >= 0xC0 && first <= 0xFE ? BitOperations.LeadingZeroCount(~(first << 24)) - 1 : -1;
        if (extra < 0)
        {
            throw Damaged(frameOffset, "has a malformed frame or sample number", null);
        }

        for (int i = 0; i < extra; i++)
        {
            if ((ReadBits(8) & 0xC0) != 0x80)
            {
                throw Damaged(frameOffset, "has a malformed frame or sample number", null);
            }
        }
    }

    private uint ReadBits(int n)
    {
        if (n == 0)
        {
            return 0;
        }

        while (cacheBits < n)
        {
            cache = (cache << 8) | NextByte();
            cacheBits += 8;
        }

        cacheBits -= n;
        return (uint)((cache >> cacheBits) & ((1UL << n) - 1));
    }

    private long ReadSigned(int n)
    {
        ulong value = n > 32 ? ((ulong)ReadBits(n - 32) << 32) | ReadBits(32) : ReadBits(n);
        int unused = 64 - n;
        return unchecked((long)(value << unused)) >> unused;
    }

    private int ReadUnary(long frameOffset)
    {
        int count = 0;
        while (true)
        {
            if (cacheBits == 0)
            {
                cache = NextByte();
                cacheBits = 8;
            }

            ulong valid = cache & ((1UL << cacheBits) - 1);
            if (valid == 0)
            {
                count += cacheBits;
                cacheBits = 0;
                if (count > (1 << 24))
                {
                    throw Damaged(frameOffset, "has a residual code that never ends", null);
                }

                continue;
            }

            int zeros = BitOperations.LeadingZeroCount(valid) - (64 - cacheBits);
            cacheBits -= zeros + 1;
            return count + zeros;
        }
    }

    private ulong NextByte()
    {
        if (bytePosition == bufferLength && !Fill())
        {
            throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                $"The FLAC file ends inside frame {frameIndex} (after {samplesDecoded} samples); the file was probably cut off while copying."));
        }

        return buffer[bytePosition++];
    }

    private bool HasByte() => bytePosition < bufferLength || Fill();

    /// <summary>Reads more of the file after what the buffer holds, growing it when a frame fills it. False at the end of the file.</summary>
    private bool Fill()
    {
        if (bufferLength == buffer.Length)
        {
            if (buffer.Length >= MaxFrameBytes)
            {
                throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                    $"The FLAC file's frame {frameIndex} is longer than any valid frame can be, so the audio data is damaged."));
            }

            Array.Resize(ref buffer, Math.Min(buffer.Length * 2, MaxFrameBytes));
        }

        int n = source.Read(buffer, bufferLength, buffer.Length - bufferLength);
        bufferLength += n;
        return n > 0;
    }

    private void Compact()
    {
        cacheBits = 0;
        if (bytePosition > 0)
        {
            buffer.AsSpan(bytePosition, bufferLength - bytePosition).CopyTo(buffer);
            bufferFileOffset += bytePosition;
            bufferLength -= bytePosition;
            bytePosition = 0;
        }
    }

    private CaptureFormatException Damaged(long frameOffset, string what, Exception? inner)
    {
        string message = string.Create(CultureInfo.InvariantCulture,
            $"The FLAC file's frame {frameIndex} (at byte {frameOffset}) {what}, so the audio data is damaged.");
        return inner is null ? new CaptureFormatException(message) : new CaptureFormatException(message, inner);
    }

    private static CaptureFormatException Lying(string what) =>
        new($"The FLAC file's STREAMINFO does not describe its audio: {what}.");
}
