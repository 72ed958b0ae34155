using System.Buffers.Binary;
using System.Text;
using TapeVault.Core.Audio;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Audio;

/// <summary>
/// Damaged FLAC files, made by changing bytes of a file Debian's flac wrote: each is refused with one sentence that
/// names what is wrong, whether the damage is in a frame (RFC 9639, section 9) or in STREAMINFO (section 8.2).
/// </summary>
public sealed class FlacBadInputTests : IClassFixture<AudioTempFolder>
{
    private readonly AudioTempFolder temp;
    private readonly byte[] good;
    private readonly int firstFrame;
    private readonly int secondFrame;

    public FlacBadInputTests(AudioTempFolder temp)
    {
        this.temp = temp;
        string wav = temp.File("source.wav");
        string flac = temp.File("source.flac");
        if (!File.Exists(flac))
        {
            OutsideTool.Sox("-n", "-r", "44100", "-b", "16", "-c", "1", wav, "synth", "0.5", "sine", "1200", "vol", "0.5");
            OutsideTool.Run(OutsideTool.FlacPath, ["--silent", "--force", "-5", "--blocksize=4096", "-o", flac, wav]);
        }

        good = File.ReadAllBytes(flac);
        firstFrame = FirstFrameOffset(good);
        secondFrame = NextFrameOffset(good, firstFrame + 6);
    }

    [Fact]
    public void FrameCrcs_GiveTheCatalogueCheckValues()
    {
        // The CRC catalogue's check values for "123456789": CRC-8/SMBUS (poly 0x07, init 0) is 0xF4 and
        // CRC-16/UMTS (poly 0x8005, init 0) is 0xFEE8; RFC 9639 sections 9.1.8 and 9.3 name these polynomials.
        byte[] check = Encoding.ASCII.GetBytes("123456789");
        Assert.Equal(0xF4, FlacCrc.Crc8(check));
        Assert.Equal(0xFEE8, FlacCrc.Crc16(check));
    }

    [Fact]
    public void TheUndamagedFile_Decodes()
    {
        string path = temp.Write("good.flac", good);
        using CaptureReader reader = CaptureReader.Open(path);
        Assert.Equal(22_050, reader.FrameCount);
        Assert.Null(reader.Complete().FixityFinding);
    }

    [Fact]
    public void A_TruncatedFrame_IsRefused() =>
        AssertRefused("truncated.flac", good[..(secondFrame + 100)], "ends inside frame 1", "cut off");

    [Fact]
    public void A_WrongHeaderCrc8_IsRefused()
    {
        byte[] bad = (byte[])good.Clone();
        bad[firstFrame + 5] ^= 0x5A;
        AssertRefused("crc8.flac", bad, "CRC-8", "frame 0");
    }

    [Fact]
    public void A_WrongFrameCrc16_IsRefused()
    {
        byte[] bad = (byte[])good.Clone();
        bad[secondFrame - 1] ^= 0x01;
        AssertRefused("crc16.flac", bad, "CRC-16", "frame 0");
    }

    [Fact]
    public void StreamInfo_ClaimingFewerSamples_IsRefused()
    {
        byte[] bad = WithTotalSamples(1000);
        AssertRefused("fewer.flac", bad, "STREAMINFO", "more than the 1000 samples");
    }

    [Fact]
    public void StreamInfo_ClaimingMoreSamples_IsRefused()
    {
        byte[] bad = WithTotalSamples(50_000);
        AssertRefused("more.flac", bad, "22050 of the 50000 samples", "STREAMINFO");
    }

    [Fact]
    public void StreamInfo_WithAnotherSampleRate_IsRefused()
    {
        byte[] bad = (byte[])good.Clone();

        // STREAMINFO bytes 10 to 12 hold the 20-bit sample rate (RFC 9639, section 8.2); write 48000 over 44100.
        int rate = 48_000;
        bad[8 + 10] = unchecked((byte)(rate >> 12));
        bad[8 + 11] = unchecked((byte)(rate >> 4));
        bad[8 + 12] = unchecked((byte)(((rate & 0xF) << 4) | (bad[8 + 12] & 0x0F)));
        AssertRefused("rate.flac", bad, "STREAMINFO does not describe", "48000 Hz");
    }

    [Fact]
    public void StreamInfo_WithATooSmallMaximumBlock_IsRefused()
    {
        byte[] bad = (byte[])good.Clone();
        BinaryPrimitives.WriteUInt16BigEndian(bad.AsSpan(8 + 0), 1024);
        BinaryPrimitives.WriteUInt16BigEndian(bad.AsSpan(8 + 2), 1024);
        AssertRefused("block.flac", bad, "STREAMINFO does not describe", "4096 samples");
    }

    [Fact]
    public void A_FileCutInsideItsMetadata_IsRefused() =>
        AssertRefused("meta.flac", good[..20], "metadata");

    private byte[] WithTotalSamples(long total)
    {
        byte[] bad = (byte[])good.Clone();

        // STREAMINFO: 36-bit total samples in the low nibble of byte 13 and bytes 14 to 17 (RFC 9639, section 8.2).
        bad[8 + 13] = (byte)((bad[8 + 13] & 0xF0) | (int)(total >> 32));
        BinaryPrimitives.WriteUInt32BigEndian(bad.AsSpan(8 + 14), unchecked((uint)total));
        return bad;
    }

    private void AssertRefused(string name, byte[] bytes, params string[] expected)
    {
        string path = temp.Write(name, bytes);
        var error = Assert.Throws<CaptureFormatException>(() =>
        {
            using CaptureReader reader = CaptureReader.Open(path);
            reader.Complete();
        });
        foreach (string text in expected)
        {
            Assert.Contains(text, error.Message, StringComparison.Ordinal);
        }

        Assert.EndsWith(".", error.Message, StringComparison.Ordinal);
        Assert.Single(error.Message.Split(". ", StringSplitOptions.RemoveEmptyEntries));
    }

    /// <summary>The offset after the last metadata block: each is a 4-byte header (last-block flag, type, 24-bit length) and its body.</summary>
    private static int FirstFrameOffset(byte[] flac)
    {
        int at = 4;
        while (true)
        {
            bool last = (flac[at] & 0x80) != 0;
            at += 4 + ((flac[at + 1] << 16) | (flac[at + 2] << 8) | flac[at + 3]);
            if (last)
            {
                return at;
            }
        }
    }

    /// <summary>The next frame sync (0xFFF8) from <paramref name="from"/> whose header CRC-8 holds and whose frame number is 1.</summary>
    private static int NextFrameOffset(byte[] flac, int from)
    {
        for (int i = from; i < flac.Length - 6; i++)
        {
            if (flac[i] == 0xFF && flac[i + 1] == 0xF8 && flac[i + 4] == 0x01 && FlacCrc.Crc8(flac.AsSpan(i, 5)) == flac[i + 5])
            {
                return i;
            }
        }

        throw new InvalidOperationException("The encoded file has no second frame.");
    }
}
