using System.Buffers.Binary;
using System.Globalization;
using System.Text;

namespace TapeVault.Core.Audio;

/// <summary>
/// The STREAMINFO block of a FLAC file (RFC 9639, section 8.2): what every frame must agree with.
/// </summary>
/// <param name="MinBlockSize">Smallest block size in samples (the last block may be smaller).</param>
/// <param name="MaxBlockSize">Largest block size in samples.</param>
/// <param name="SampleRate">Samples per second.</param>
/// <param name="Channels">Channels (1 to 8).</param>
/// <param name="BitsPerSample">Bits per sample (4 to 32).</param>
/// <param name="TotalSamples">Samples per channel in the whole stream.</param>
/// <param name="Md5">MD5 of the decoded audio (lower-case hex), or empty when the encoder left it all zero.</param>
public sealed record FlacStreamInfo(int MinBlockSize, int MaxBlockSize, int SampleRate, int Channels, int BitsPerSample, long TotalSamples, string Md5)
{
    /// <summary>Largest Vorbis comment block read; a bigger one is skipped (its bytes stay in the original).</summary>
    private const int MaxCommentBytes = 1024 * 1024;

    /// <summary>
    /// Reads the metadata blocks after the <c>fLaC</c> marker (RFC 9639, section 8) and returns the layout of the audio
    /// that follows them. The stream is left at the first frame.
    /// </summary>
    /// <exception cref="CaptureFormatException">The metadata is damaged or describes audio TapeVault cannot read.</exception>
    internal static WavLayout Probe(Stream stream)
    {
        long fileLength = stream.Length;
        stream.Position = 4;
        Span<byte> header = stackalloc byte[4];
        Span<byte> streamInfo = stackalloc byte[34];
        FlacStreamInfo? info = null;
        var comments = new List<string>();
        bool last = false;
        int blocks = 0;
        while (!last)
        {
            long at = stream.Position;
            if (WavHeaderProbe.ReadFully(stream, header) < 4)
            {
                throw new CaptureFormatException("The FLAC file ends inside its metadata blocks, before any audio frame.");
            }

            last = (header[0] & 0x80) != 0;
            int type = header[0] & 0x7F;
            int length = (header[1] << 16) | (header[2] << 8) | header[3];
            if (length > fileLength - at - 4)
            {
                throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                    $"The FLAC file ends inside metadata block {blocks} (the block claims {length} bytes; {fileLength - at - 4} are left)."));
            }

            if (blocks == 0 && type != 0)
            {
                throw new CaptureFormatException("The FLAC file's first metadata block is not STREAMINFO (RFC 9639, section 8), so its audio cannot be described.");
            }

            if (type == 127)
            {
                throw new CaptureFormatException("The FLAC file has a metadata block of the forbidden type 127 (RFC 9639, section 8.1), so it is damaged.");
            }

            if (type == 0)
            {
                if (blocks != 0)
                {
                    throw new CaptureFormatException("The FLAC file has a second STREAMINFO block, so its audio description is ambiguous.");
                }

                if (length != 34)
                {
                    throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                        $"The FLAC file's STREAMINFO block is {length} bytes instead of 34 (RFC 9639, section 8.2), so it is damaged."));
                }

                WavHeaderProbe.ReadFully(stream, streamInfo);
                info = Parse(streamInfo);
            }
            else if (type == 4 && length <= MaxCommentBytes)
            {
                var body = new byte[length];
                WavHeaderProbe.ReadFully(stream, body);
                ReadComments(body, comments);
            }

            stream.Position = at + 4 + length;
            blocks++;
        }

        FlacStreamInfo s = info!;
        int bytesPerSample = (s.BitsPerSample + 7) / 8;
        int blockAlign = s.Channels * bytesPerSample;
        long bytes = checked(s.TotalSamples * blockAlign);
        return new WavLayout("pcm", s.Channels, s.SampleRate, blockAlign, s.BitsPerSample, stream.Position, bytes, bytes)
        {
            Container = "flac",
            Flac = s,
            Metadata = comments.Count == 0 ? CaptureMetadata.None : new CaptureMetadata { Comments = comments },
        };
    }

    /// <summary>Reads the 34-byte STREAMINFO body (RFC 9639, section 8.2) and checks its fields.</summary>
    internal static FlacStreamInfo Parse(ReadOnlySpan<byte> b)
    {
        int minBlock = BinaryPrimitives.ReadUInt16BigEndian(b[0..2]);
        int maxBlock = BinaryPrimitives.ReadUInt16BigEndian(b[2..4]);
        int sampleRate = (b[10] << 12) | (b[11] << 4) | (b[12] >> 4);
        int channels = ((b[12] >> 1) & 0x7) + 1;
        int bits = (((b[12] & 0x1) << 4) | (b[13] >> 4)) + 1;
        long total = ((long)(b[13] & 0x0F) << 32) | BinaryPrimitives.ReadUInt32BigEndian(b[14..18]);
        ReadOnlySpan<byte> md5 = b[18..34];

        // RFC 9639, section 8.2: block sizes 16 to 65535 with min <= max; a sample rate of 0 is invalid for audio.
        if (minBlock < 16 || maxBlock < minBlock)
        {
            throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                $"The FLAC file's STREAMINFO gives impossible block sizes ({minBlock} to {maxBlock} samples; RFC 9639 needs 16 to 65535, smallest first), so it is damaged."));
        }

        if (sampleRate == 0 || sampleRate > WavHeaderProbe.MaxSampleRate)
        {
            throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                $"The FLAC file's STREAMINFO declares a sample rate of {sampleRate} Hz; TapeVault reads 1 to {WavHeaderProbe.MaxSampleRate} Hz."));
        }

        if (bits < 4)
        {
            throw new CaptureFormatException(string.Create(CultureInfo.InvariantCulture,
                $"The FLAC file's STREAMINFO declares {bits} bits per sample; RFC 9639 needs 4 to 32."));
        }

        if (total == 0)
        {
            throw new CaptureFormatException("The FLAC file's STREAMINFO does not say how many samples it holds (a stream written to a pipe); encode the capture again to a file with flac.");
        }

        return new FlacStreamInfo(minBlock, maxBlock, sampleRate, channels, bits, total,
            md5.ContainsAnyExcept((byte)0) ? Convert.ToHexStringLower(md5) : string.Empty);
    }

    // RFC 9639, section 8.6: vendor string and comments, each a 32-bit little-endian length and UTF-8 text.
    private static void ReadComments(ReadOnlySpan<byte> body, List<string> comments)
    {
        if (body.Length < 8)
        {
            return;
        }

        long vendor = BinaryPrimitives.ReadUInt32LittleEndian(body);
        long at = 4 + vendor;
        if (at + 4 > body.Length)
        {
            return;
        }

        long count = BinaryPrimitives.ReadUInt32LittleEndian(body[(int)at..]);
        at += 4;
        for (long i = 0; i < count && at + 4 <= body.Length; i++)
        {
            long length = BinaryPrimitives.ReadUInt32LittleEndian(body[(int)at..]);
            at += 4;
            if (length > body.Length - at)
            {
                return;
            }

            string text = Encoding.UTF8.GetString(body.Slice((int)at, (int)length));
            at += length;
            if (text.IndexOf('=', StringComparison.Ordinal) > 0)
            {
                comments.Add(text);
            }
        }
    }
}
