using System.Buffers.Binary;
using System.Globalization;
using System.Text;
using TapeVault.Core.Audio;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Audio;

/// <summary>
/// RF64 (EBU Tech 3306) and BW64 (ITU-R BS.2088): the RIFF and data sizes are -1 and the real, 64-bit sizes are in a
/// ds64 chunk right after the header (riffSize, dataSize, sampleCount, 64 bits each, then a table length).
/// </summary>
public sealed class Rf64Tests : IClassFixture<AudioTempFolder>
{
    private readonly AudioTempFolder temp;

    public Rf64Tests(AudioTempFolder temp)
    {
        this.temp = temp;
    }

    [Theory]
    [InlineData("RF64")]
    [InlineData("BW64")]
    public void Rf64_ReadsTheSameAudioAsTheRiffFileItWasMadeFrom(string form)
    {
        string plain = temp.File($"{form}-plain.wav");
        OutsideTool.Sox("-n", "-r", "48000", "-b", "24", "-c", "2", plain, "synth", "0.4", "sine", "1200", "sine", "2400", "vol", "0.5");
        string path = temp.Write($"{form}.wav", ToRf64(File.ReadAllBytes(plain), form));

        // The capture page's excerpts seek into the data chunk the same way.
        Assert.Equal(CaptureExcerpt.Read(plain, 5000, 3000, ChannelChoice.Left), CaptureExcerpt.Read(path, 5000, 3000, ChannelChoice.Left));

        using CaptureReader reader = CaptureReader.Open(path);
        Assert.Equal(form.ToLowerInvariant(), reader.Container);
        Assert.Equal(AudioSamples.ReadFile(plain), AudioSamples.ReadAll(reader));
        Assert.Equal(OutsideTool.Sha256Sum(path), reader.Complete().Sha256);
        if (form == "RF64")
        {
            // SoX reads RF64 too (it does not know BW64): rate and length agree.
            Assert.Equal(OutsideTool.SoxSampleRate(path), reader.SampleRate);
            Assert.Equal(long.Parse(OutsideTool.SoxInfo("-s", path), CultureInfo.InvariantCulture), reader.FrameCount);
        }
    }

    [Theory]
    [InlineData("riff-size", "the file is")]
    [InlineData("data-size", "follow the data chunk")]
    [InlineData("sample-count", "counts")]
    [InlineData("data-header", "ambiguous")]
    public void A_Ds64ThatDisagreesWithTheFile_IsRefusedInOneSentence(string lie, string expected)
    {
        string plain = temp.File($"lie-{lie}.plain.wav");
        OutsideTool.Sox("-n", "-r", "8000", "-b", "16", "-c", "1", plain, "synth", "0.1", "sine", "1000");
        byte[] file = ToRf64(File.ReadAllBytes(plain), "RF64");
        switch (lie)
        {
            case "riff-size":
                BinaryPrimitives.WriteInt64LittleEndian(file.AsSpan(20), file.Length + 1000);
                break;
            case "data-size":
                BinaryPrimitives.WriteInt64LittleEndian(file.AsSpan(28), 1L << 33);
                break;
            case "sample-count":
                BinaryPrimitives.WriteInt64LittleEndian(file.AsSpan(36), 12345);
                break;
            default:
                int data = IndexOf(file, "data");
                BinaryPrimitives.WriteUInt32LittleEndian(file.AsSpan(data + 4), 10);
                break;
        }

        string path = temp.Write($"lie-{lie}.wav", file);
        var error = Assert.Throws<CaptureFormatException>(() => CaptureReader.Open(path));
        Assert.Contains(expected, error.Message, StringComparison.Ordinal);
        Assert.Contains("ds64", error.Message, StringComparison.Ordinal);
        Assert.Single(error.Message.Split(". ", StringSplitOptions.RemoveEmptyEntries));
    }

    [Fact]
    public void A_CaptureLongerThanFourGigabytes_StreamsWithFlatMemory()
    {
        // 4.5 GiB of 16-bit mono audio in a sparse file: a 1 kHz burst at the start and another past the 4 GiB mark,
        // silence (zeros the file system does not store) between. A 32-bit RIFF size could not describe it.
        const int rate = 48_000;
        long dataBytes = (9L << 29) & ~1L;
        string path = temp.File("long.rf64.wav");
        byte[] burst = WavBytes.Pcm16Body([.. Enumerable.Range(0, rate / 10).Select(i => (short)(8000 * Math.Sin(2 * Math.PI * 1000 * i / rate)))]);
        byte[] header = Rf64Header("RF64", WavBytes.FmtBody(WavBytes.Pcm, 1, rate, 16), dataBytes, dataBytes / 2);
        long lateFrame = (4L << 30) / 2 + 12_345;
        using (var stream = new FileStream(path, FileMode.CreateNew, FileAccess.Write))
        {
            stream.Write(header);
            stream.Write(burst);
            stream.Position = header.Length + (lateFrame * 2);
            stream.Write(burst);
            stream.SetLength(header.Length + dataBytes);
        }

        try
        {
            using CaptureReader reader = CaptureReader.Open(path);
            Assert.False(reader.Truncated);

            // The file system's size of the file, less the header, is the audio: two bytes a frame.
            Assert.Equal((new FileInfo(path).Length - header.Length) / 2, reader.FrameCount);

            var chunk = new float[1 << 16];
            long at = 0;
            long earlyEnergy = 0;
            long lateEnergy = 0;
            long before = GC.GetAllocatedBytesForCurrentThread();
            int n;
            while ((n = reader.Read(chunk)) > 0)
            {
                for (int i = 0; i < n; i++)
                {
                    if (chunk[i] != 0f)
                    {
                        long frame = at + i;
                        if (frame < rate / 10)
                        {
                            earlyEnergy++;
                        }
                        else if (frame >= lateFrame && frame < lateFrame + (rate / 10))
                        {
                            lateEnergy++;
                        }
                        else
                        {
                            Assert.Fail($"Sample frame {frame} should be silent.");
                        }
                    }
                }

                at += n;
            }

            long allocated = GC.GetAllocatedBytesForCurrentThread() - before;
            Assert.Equal(reader.FrameCount, at);
            Assert.True(earlyEnergy > rate / 20 && lateEnergy == earlyEnergy, $"bursts: {earlyEnergy} and {lateEnergy} non-zero samples");

            // Streaming: reading 4.5 GiB allocated less than a megabyte (hashing buffers, not the audio).
            Assert.True(allocated < 1 << 20, $"Reading the capture allocated {allocated} bytes.");
            Assert.Equal(new FileInfo(path).Length, reader.Complete().FileBytes);
        }
        finally
        {
            File.Delete(path);
        }
    }

    /// <summary>An RF64 (or BW64) file with the fmt and data of <paramref name="riffWav"/>, laid out as EBU Tech 3306 says.</summary>
    internal static byte[] ToRf64(byte[] riffWav, string form)
    {
        int fmt = IndexOf(riffWav, "fmt ");
        int fmtSize = BinaryPrimitives.ReadInt32LittleEndian(riffWav.AsSpan(fmt + 4));
        int data = IndexOf(riffWav, "data");
        int dataSize = BinaryPrimitives.ReadInt32LittleEndian(riffWav.AsSpan(data + 4));
        byte[] fmtBody = riffWav[(fmt + 8)..(fmt + 8 + fmtSize)];
        int blockAlign = BinaryPrimitives.ReadUInt16LittleEndian(fmtBody.AsSpan(12));
        byte[] header = Rf64Header(form, fmtBody, dataSize, dataSize / blockAlign);
        return [.. header, .. riffWav[(data + 8)..(data + 8 + dataSize)]];
    }

    /// <summary>
    /// "RF64", -1, "WAVE"; ds64 of 28 bytes (riffSize, dataSize, sampleCount as 64-bit little-endian, table length 0);
    /// fmt; the data chunk's header with size -1. EBU Tech 3306, section 3.
    /// </summary>
    private static byte[] Rf64Header(string form, byte[] fmtBody, long dataBytes, long sampleCount)
    {
        var ds64 = new byte[28];
        long headerBytes = 12 + 8 + 28 + 8 + fmtBody.Length + 8;
        BinaryPrimitives.WriteInt64LittleEndian(ds64.AsSpan(0), headerBytes + dataBytes - 8);
        BinaryPrimitives.WriteInt64LittleEndian(ds64.AsSpan(8), dataBytes);
        BinaryPrimitives.WriteInt64LittleEndian(ds64.AsSpan(16), sampleCount);
        byte[] head = [.. Encoding.ASCII.GetBytes(form), 0xFF, 0xFF, 0xFF, 0xFF, .. "WAVE"u8];
        return [.. head, .. WavBytes.Chunk("ds64", ds64), .. WavBytes.Chunk("fmt ", fmtBody), .. "data"u8, 0xFF, 0xFF, 0xFF, 0xFF];
    }

    private static int IndexOf(byte[] file, string id)
    {
        int at = file.AsSpan().IndexOf(Encoding.ASCII.GetBytes(id));
        Assert.True(at >= 0, $"no {id} chunk");
        return at;
    }
}
