using System.Buffers.Binary;
using System.Globalization;
using System.Text;
using TapeVault.Core.Audio;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Audio;

/// <summary>
/// Broadcast WAV files (EBU Tech 3285) built in the test from the standard's field table, read back field by field;
/// SoX, which skips the bext chunk, is the reference for the audio around it.
/// </summary>
public sealed class BroadcastWavTests : IClassFixture<AudioTempFolder>
{
    private readonly AudioTempFolder temp;

    public BroadcastWavTests(AudioTempFolder temp)
    {
        this.temp = temp;
    }

    [Fact]
    public void Bext_IsReadFieldByField_AsTech3285LaysItOut_AndSoxAgreesOnTheAudio()
    {
        string history = "A=ANALOGUE,M=mono,T=Deck two with new pinch roller;\r\nA=PCM,F=96000,W=24,M=mono,T=Capture interface;\r\n";
        byte[] umid = [.. Enumerable.Range(1, 64).Select(i => (byte)i)];
        byte[] bext = BextBody("Side A, second pass after head cleaning", "J. Okafor", "REF-0042", "2026-11-30", "14:05:09",
            timeReference: 0x1_2345_6789UL, version: 2, umid, loudness: [-2300, 700, -100, -1800, -2000], history);
        string plain = SoxTone("bext-plain.wav", 96_000, 24);
        string path = temp.Write("bext.wav", InsertBefore(File.ReadAllBytes(plain), "data", WavBytes.Chunk("bext", bext)));

        using CaptureReader reader = CaptureReader.Open(path);
        BroadcastExtension read = Assert.IsType<BroadcastExtension>(reader.Metadata.Bext);

        // EBU Tech 3285, the bext field table: each field where the standard puts it.
        Assert.Equal("Side A, second pass after head cleaning", read.Description);
        Assert.Equal("J. Okafor", read.Originator);
        Assert.Equal("REF-0042", read.OriginatorReference);
        Assert.Equal("2026-11-30", read.OriginationDate);
        Assert.Equal("14:05:09", read.OriginationTime);
        Assert.Equal(0x1_2345_6789UL, read.TimeReference);
        Assert.Equal(2, read.Version);
        Assert.Equal(Convert.ToHexStringLower(umid), read.Umid);
        Assert.Equal(new BroadcastLoudness(-2300, 700, -100, -1800, -2000), read.Loudness);
        Assert.Equal(history.Replace("\r", string.Empty, StringComparison.Ordinal).Trim(), read.CodingHistory);

        // What the file suggests for the capture's record: deck from the analogue line of the coding history
        // (EBU R 98's T= text), operator from the originator, the origination date, the description as notes.
        Assert.Equal(new CaptureDetailsSuggestion("Deck two with new pinch roller", "J. Okafor", new DateOnly(2026, 11, 30), "Side A, second pass after head cleaning"),
            reader.Metadata.Suggestion());

        // SoX reads the same audio around the chunk: rate, length, and every sample equal to the file without bext.
        Assert.Equal(OutsideTool.SoxSampleRate(path), reader.SampleRate);
        Assert.Equal(long.Parse(OutsideTool.SoxInfo("-s", path), CultureInfo.InvariantCulture), reader.FrameCount);
        float[] withBext = AudioSamples.ReadAll(reader);
        Assert.Equal(AudioSamples.ReadFile(plain), withBext);
        CaptureInfo info = reader.Complete();
        Assert.Equal(OutsideTool.Sha256Sum(path), info.Sha256);
        Assert.Same(reader.Metadata, info.Metadata);
    }

    [Fact]
    public void Bext_Version0_HasNoUmidOrLoudness_AndAnOddSeparatorDateStillReads()
    {
        byte[] bext = BextBody("", "", "", "2025:03:07", "", 0, version: 0, new byte[64], loudness: null, "A=PCM,F=48000,W=16,M=mono,T=Recorder\r\n");
        string path = temp.Write("bext-v0.wav", WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 1, 48_000, 16)), WavBytes.Chunk("bext", bext), WavBytes.Chunk("data", new byte[96])));

        using CaptureReader reader = CaptureReader.Open(path);
        BroadcastExtension read = Assert.IsType<BroadcastExtension>(reader.Metadata.Bext);
        Assert.Equal(0, read.Version);
        Assert.Equal(string.Empty, read.Umid);
        Assert.Null(read.Loudness);

        // Tech 3285 allows '-', '_', ':', ' ' or '.' between year, month and day. No analogue line: the first T= is the deck.
        Assert.Equal(new CaptureDetailsSuggestion("Recorder", string.Empty, new DateOnly(2025, 3, 7), string.Empty), reader.Metadata.Suggestion());
    }

    [Fact]
    public void Ixml_IsKeptAsText_AndItsNoteAndUserAreSuggested()
    {
        string xml = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<BWFXML><IXML_VERSION>1.5</IXML_VERSION><PROJECT>Club tapes</PROJECT>"
            + "<NOTE>Label says &quot;side 2&quot;</NOTE><USER>R. Lind</USER><TAPE>C60-17</TAPE></BWFXML>";
        string plain = SoxTone("ixml-plain.wav", 44_100, 16);
        byte[] body = [.. Encoding.UTF8.GetBytes(xml), 0, 0, 0];
        string path = temp.Write("ixml.wav", InsertBefore(File.ReadAllBytes(plain), "data", WavBytes.Chunk("iXML", body)));

        using CaptureReader reader = CaptureReader.Open(path);
        Assert.Null(reader.Metadata.Bext);
        Assert.Equal(xml, reader.Metadata.Ixml);
        Assert.Equal(new CaptureDetailsSuggestion(string.Empty, "R. Lind", null, "Label says \"side 2\""), reader.Metadata.Suggestion());
        Assert.Equal(OutsideTool.SoxSampleRate(path), reader.SampleRate);
        Assert.Equal(long.Parse(OutsideTool.SoxInfo("-s", path), CultureInfo.InvariantCulture), reader.FrameCount);
    }

    [Fact]
    public void A_HugeCodingHistory_IsRefusedInOneSentence()
    {
        string history = new('x', CaptureMetadata.MaxCodingHistoryBytes + 1);
        byte[] bext = BextBody("d", "o", "r", "2026-01-01", "00:00:00", 0, 1, new byte[64], null, history);
        string path = temp.Write("huge-history.wav", WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 1, 48_000, 16)), WavBytes.Chunk("bext", bext), WavBytes.Chunk("data", new byte[96])));

        var error = Assert.Throws<CaptureFormatException>(() => CaptureReader.Open(path));
        Assert.Contains("coding history", error.Message, StringComparison.Ordinal);
        Assert.Single(error.Message.Split(". ", StringSplitOptions.RemoveEmptyEntries));
    }

    [Fact]
    public void A_BextShorterThanItsFixedFields_IsRefused()
    {
        string path = temp.Write("short-bext.wav", WavBytes.Wave(
            WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 1, 48_000, 16)), WavBytes.Chunk("bext", new byte[300]), WavBytes.Chunk("data", new byte[96])));

        var error = Assert.Throws<CaptureFormatException>(() => CaptureReader.Open(path));
        Assert.Contains("602", error.Message, StringComparison.Ordinal);
    }

    /// <summary>
    /// A bext body laid out by EBU Tech 3285's field table, offsets written out here and not taken from the reader:
    /// Description 256 bytes at 0, Originator 32 at 256, OriginatorReference 32 at 288, OriginationDate 10 at 320,
    /// OriginationTime 8 at 330, TimeReferenceLow and High (32 bits each) at 338 and 342, Version (16 bits) at 346,
    /// UMID 64 bytes at 348, LoudnessValue, LoudnessRange, MaxTruePeakLevel, MaxMomentaryLoudness and
    /// MaxShortTermLoudness (16 bits each) at 412 to 420, 180 reserved bytes at 422, CodingHistory at 602.
    /// </summary>
    internal static byte[] BextBody(string description, string originator, string reference, string date, string time,
        ulong timeReference, ushort version, byte[] umid, short[]? loudness, string codingHistory)
    {
        byte[] history = Encoding.ASCII.GetBytes(codingHistory);
        var body = new byte[602 + history.Length];
        Encoding.ASCII.GetBytes(description).CopyTo(body, 0);
        Encoding.ASCII.GetBytes(originator).CopyTo(body, 256);
        Encoding.ASCII.GetBytes(reference).CopyTo(body, 288);
        Encoding.ASCII.GetBytes(date).CopyTo(body, 320);
        Encoding.ASCII.GetBytes(time).CopyTo(body, 330);
        BinaryPrimitives.WriteUInt32LittleEndian(body.AsSpan(338), (uint)(timeReference & 0xFFFF_FFFF));
        BinaryPrimitives.WriteUInt32LittleEndian(body.AsSpan(342), (uint)(timeReference >> 32));
        BinaryPrimitives.WriteUInt16LittleEndian(body.AsSpan(346), version);
        umid.CopyTo(body, 348);
        for (int i = 0; loudness is not null && i < 5; i++)
        {
            BinaryPrimitives.WriteInt16LittleEndian(body.AsSpan(412 + (2 * i)), loudness[i]);
        }

        history.CopyTo(body, 602);
        return body;
    }

    /// <summary>The file with <paramref name="chunk"/> inserted before the first chunk called <paramref name="beforeId"/>, RIFF size fixed.</summary>
    internal static byte[] InsertBefore(byte[] wav, string beforeId, byte[] chunk)
    {
        int at = 12;
        while (Encoding.ASCII.GetString(wav, at, 4) != beforeId)
        {
            uint size = BinaryPrimitives.ReadUInt32LittleEndian(wav.AsSpan(at + 4));
            at += 8 + (int)size + (int)(size % 2);
        }

        byte[] result = [.. wav[..at], .. chunk, .. wav[at..]];
        BinaryPrimitives.WriteUInt32LittleEndian(result.AsSpan(4), (uint)(result.Length - 8));
        return result;
    }

    /// <summary>Half a second of a 1200 Hz tone written by SoX at the given rate and depth.</summary>
    private string SoxTone(string name, int rate, int bits)
    {
        string path = temp.File(name);
        OutsideTool.Sox("-n", "-r", rate.ToString(CultureInfo.InvariantCulture), "-b", bits.ToString(CultureInfo.InvariantCulture), "-c", "1", path,
            "synth", "0.5", "sine", "1200", "vol", "0.4");
        return path;
    }
}
