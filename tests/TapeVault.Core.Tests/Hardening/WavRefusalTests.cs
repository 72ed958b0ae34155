using TapeVault.Core.Audio;
using TapeVault.Core.Tests.Audio;
using Xunit;

namespace TapeVault.Core.Tests.Hardening;

/// <summary>
/// Every WAV file the reader must refuse, written by hand (layout facts in <see cref="HostileWav"/>): each is refused
/// at Open with a <see cref="CaptureFormatException"/> whose one sentence names the problem. docs/reliability.md
/// lists the cases by name.
/// </summary>
public sealed class WavRefusalTests(AudioTempFolder temp) : IClassFixture<AudioTempFolder>
{
    /// <summary>Case name → the file and the words its refusal must contain.</summary>
    internal static readonly Dictionary<string, (byte[] File, string[] Expected)> Cases = new()
    {
        ["not RIFF (an MP3 tag)"] = ("ID3\u0004\0\0\0\0\0\0 and then MPEG frames, not a WAV file"u8.ToArray(), ["not a WAV file", "no RIFF header"]),
        ["big-endian RIFX"] = ([.. "RIFX"u8, .. WavBytes.Wave(HostileWav.Fmt16(), HostileWav.Data16())[4..]], ["no RIFF header"]),
        ["RIFF but not WAVE"] = (WavBytes.Riff("AVI ", null, WavBytes.Chunk("LIST", new byte[16])), ["RIFF file but not a WAV file", "'AVI '"]),
        ["no fmt chunk"] = (WavBytes.Wave(HostileWav.Data16()), ["no format (fmt) chunk"]),
        ["no data chunk"] = (WavBytes.Wave(HostileWav.Fmt16(), WavBytes.Chunk("LIST", WavBytes.ListInfoBody("no audio"))), ["no data chunk"]),
        ["fmt chunk of 14 bytes"] = (WavBytes.Wave(WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Pcm, 1, 8000, 16)[..14]), HostileWav.Data16()), ["format chunk is too short", "14 bytes"]),
        ["fmt chunk of 0 bytes"] = (WavBytes.Wave(WavBytes.Chunk("fmt ", []), HostileWav.Data16()), ["format chunk is too short", "0 bytes"]),
        ["fmt chunk claiming 4 GB"] = (WavBytes.Wave(HostileWav.FmtWithExtraBytes(0, declaredSize: 0xFFFF_FFF0), HostileWav.Data16()), ["ends inside its format chunk", "4294967280 bytes"]),
        ["fmt chunk claiming more than the file"] = (WavBytes.Wave(HostileWav.FmtWithExtraBytes(0, declaredSize: 5000), HostileWav.Data16()), ["ends inside its format chunk", "claims 5000 bytes"]),
        ["fmt chunk of odd size 17 with its pad byte"] = (WavBytes.Wave(HostileWav.FmtWithExtraBytes(1), HostileWav.Data16()), ["odd size (17 bytes)", "damaged"]),
        ["fmt chunk of odd size 17 without a pad byte"] = (WavBytes.Wave(WavBytes.Chunk("fmt ", [.. WavBytes.FmtBody(WavBytes.Pcm, 1, 8000, 16), 0], pad: false), HostileWav.Data16()), ["odd size (17 bytes)"]),
        ["fmt chunk of 65016 bytes inside the file"] = (WavBytes.Wave(HostileWav.FmtWithExtraBytes(65_000), HostileWav.Data16()), ["format chunk is 65016 bytes", "damaged"]),
        ["two fmt chunks"] = (WavBytes.Wave(HostileWav.Fmt16(), HostileWav.Fmt16(16_000), HostileWav.Data16()), ["two format (fmt) chunks", "ambiguous"]),
        ["two data chunks"] = (WavBytes.Wave(HostileWav.Fmt16(), HostileWav.Data16(10), HostileWav.Data16(20)), ["two data chunks", "ambiguous"]),
        ["0 channels"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.Pcm, 0, 8000, 0, 0, 16), HostileWav.Data16()), ["0 audio channels"]),
        ["9 channels"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.Pcm, 9, 8000, 144_000, 18, 16), HostileWav.Data16(180)), ["9 audio channels", "at most 8"]),
        ["65535 channels"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.Pcm, 65535, 8000, 0, 65534, 16), HostileWav.Data16()), ["65535 audio channels"]),
        ["sample rate 0 Hz"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.Pcm, 1, 0, 0, 2, 16), HostileWav.Data16()), ["sample rate of 0 Hz"]),
        ["sample rate 4 GHz"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.Pcm, 1, 4_000_000_000, 0, 2, 16), HostileWav.Data16()), ["4000000000 Hz"]),
        ["sample rate 2 GHz"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.Pcm, 1, 2_000_000_000, 0, 2, 16), HostileWav.Data16()), ["2000000000 Hz", "at most 768000 Hz"]),
        ["sample rate 1 MHz"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.Pcm, 1, 1_000_000, 2_000_000, 2, 16), HostileWav.Data16()), ["1000000 Hz", "at most 768000 Hz"]),
        ["block align 3 for stereo 16-bit"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.Pcm, 2, 8000, 24_000, 3, 16), HostileWav.Data16()), ["block alignment (3 bytes)", "(4 bytes)"]),
        ["block align 0"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.Pcm, 1, 8000, 0, 0, 16), HostileWav.Data16()), ["block alignment (0 bytes)", "(2 bytes)"]),
        ["block align 4 for mono 16-bit"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.Pcm, 1, 8000, 32_000, 4, 16), HostileWav.Data16()), ["block alignment (4 bytes)", "(2 bytes)"]),
        ["0-bit PCM"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.Pcm, 1, 8000, 0, 0, 0), HostileWav.Data16()), ["0-bit PCM", "not supported"]),
        ["12-bit PCM"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.Pcm, 1, 8000, 16_000, 2, 12), HostileWav.Data16()), ["12-bit PCM", "not supported"]),
        ["16-bit IEEE float"] = (WavBytes.Wave(HostileWav.RawFmt(WavBytes.IeeeFloat, 1, 8000, 16_000, 2, 16), HostileWav.Data16()), ["16-bit IEEE float", "not supported"]),
        ["format code 0x0000"] = (WavBytes.Wave(HostileWav.RawFmt(0x0000, 1, 8000, 16_000, 2, 16), HostileWav.Data16()), ["unsupported encoding", "format code 0x0000"]),
        ["format code 0x0002 Microsoft ADPCM"] = (Coded(0x0002, 4), ["unsupported encoding", "0x0002, Microsoft ADPCM"]),
        ["format code 0x0006 A-law"] = (Coded(0x0006, 8), ["unsupported encoding", "0x0006, A-law"]),
        ["format code 0x0007 µ-law"] = (Coded(0x0007, 8), ["unsupported encoding", "0x0007, µ-law"]),
        ["format code 0x0011 IMA ADPCM"] = (Coded(0x0011, 4), ["unsupported encoding", "0x0011, IMA ADPCM"]),
        ["format code 0x0055 MPEG Layer-3"] = (Coded(0x0055, 0), ["unsupported encoding", "0x0055, MPEG Layer-3"]),
        ["format code 0x1234"] = (Coded(0x1234, 16), ["unsupported encoding", "format code 0x1234"]),
        ["extensible with ADPCM sub-format"] = (Extensible(WavBytes.SubFormat(0x0002)), ["unsupported encoding", "WAVE_FORMAT_EXTENSIBLE with sub-format 0x0002"]),
        ["extensible with A-law sub-format"] = (Extensible(WavBytes.SubFormat(0x0006)), ["unsupported encoding", "sub-format 0x0006, A-law"]),
        ["extensible with a foreign GUID"] = (Extensible(Guid.Parse("6dba3190-67bd-11cf-a0f7-0020afd156e4").ToByteArray()), ["unsupported encoding", "{6dba3190-67bd-11cf-a0f7-0020afd156e4}"]),
        ["extensible whose fmt is 18 bytes"] = (WavBytes.Wave(WavBytes.Chunk("fmt ", WavBytes.FmtBody(WavBytes.Extensible, 1, 8000, 16, withCbSize: true)), HostileWav.Data16()), ["WAVE_FORMAT_EXTENSIBLE", "too short to name the sub-format"]),
        ["empty file"] = ([], ["empty", "0 bytes"]),
        ["file ends inside the RIFF header"] = ("RIFF\u0024\0\0\0WA"u8.ToArray(), ["too short"]),
        ["data chunk of 0 bytes"] = (WavBytes.Wave(HostileWav.Fmt16(), WavBytes.Chunk("data", [])), ["holds no audio samples"]),
        ["data chunk cut off inside the first frame"] = (WavBytes.Wave(HostileWav.Fmt16(8000, 2), WavBytes.Chunk("data", [1, 2, 3], declaredSize: 4000, pad: false)), ["holds no audio samples", "cut off"]),
        ["RIFF size too small to reach the data"] = (WavBytes.Riff("WAVE", 4 + 24, HostileWav.Fmt16(), HostileWav.Data16()), ["no data chunk", "RIFF header"]),
        ["RIFF size 0"] = (WavBytes.Riff("WAVE", 0, HostileWav.Fmt16(), HostileWav.Data16()), ["no format (fmt) chunk", "RIFF header"]),
    };

    public static TheoryData<string> Names() => [.. Cases.Keys];

    [Theory]
    [MemberData(nameof(Names))]
    public void Open_RefusesWithOneSentenceNamingTheProblem(string name)
    {
        var (file, expected) = Cases[name];
        string path = temp.Write(Safe(name) + ".wav", file);

        var error = Assert.Throws<CaptureFormatException>(() => CaptureReader.Open(path));

        Refusal.AssertOneSentence(error, expected);
    }

    /// <summary>A plain (non-extensible) fmt of the given code with a cbSize of 0, and a little data.</summary>
    private static byte[] Coded(ushort tag, ushort bits) =>
        WavBytes.Wave(WavBytes.Chunk("fmt ", WavBytes.FmtBody(tag, 1, 8000, bits, blockAlign: 1, withCbSize: true)), WavBytes.Chunk("data", new byte[400]));

    private static byte[] Extensible(byte[] subFormat) =>
        WavBytes.Wave(WavBytes.Chunk("fmt ", WavBytes.ExtensibleFmtBody(1, 8000, 16, subFormat)), HostileWav.Data16());

    internal static string Safe(string name) => string.Concat(name.Select(c => char.IsAsciiLetterOrDigit(c) ? c : '-'));
}
