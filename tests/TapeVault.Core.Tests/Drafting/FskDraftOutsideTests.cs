using System.Globalization;
using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Drafting;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.OutsideChecks;
using TapeVault.Tests.Shared;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// A draft of FSK blocks whose tones minimodem wrote (a general-purpose software FSK modem that shares no code with
/// TapeVault), played through a SoX low-pass (sox(1), a general-purpose audio tool) as a dull deck would: the draft
/// must propose FSK with the tones, baud and framing minimodem was told to use, and read back every block written.
/// The characters are framed here (a start bit 0, eight data bits least significant first, odd parity, a stop bit 1)
/// and each block ends in a CRC-16/XMODEM worked out here and held against the CRC catalogue's check value; nothing
/// of TapeVault's writes them.
/// </summary>
public sealed class FskDraftOutsideTests(OutsideTempFolder folder, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    private const int Baud = 300;

    /// <summary>
    /// Before: the biphase drafter read the low-passed tones as hundreds of short blocks, a one-byte XOR holding on a
    /// third of them in both bit orders, and that reading outweighed the FSK draft whose CRC held on every block.
    /// </summary>
    [Fact]
    public void Low_passed_minimodem_blocks_are_drafted_as_fsk_and_read_back()
    {
        // CRC catalogue (reveng), CRC-16/XMODEM: check value 0x31C3 over the ASCII string "123456789".
        Assert.Equal(0x31C3, CrcXmodem(Encoding.ASCII.GetBytes("123456789")));

        var random = new Random(7);
        var blocks = new List<byte[]>();
        for (int n = 0; n < 12; n++)
        {
            var block = new byte[2 + 100];
            block[0] = (byte)n;
            block[1] = 100;
            random.NextBytes(block.AsSpan(2));
            blocks.Add(block);
        }

        var (capture, profile) = DraftOfLowPassedTones(blocks, "fsk-300-odd", withCrc: true);

        AssertMinimodemTones(profile);
        Assert.Equal(8, profile.Framing.DataBits);
        Assert.Equal(Parity.Odd, profile.Framing.Parity);

        using var result = CaptureDecoder.Decode(capture, profile);
        var read = result.Candidates.Where(c => c.Status == BlockStatus.Clean).Select(c => Convert.ToHexString([.. c.Header, .. c.Payload])).ToHashSet(StringComparer.Ordinal);
        int found = blocks.Count(b => read.Contains(Convert.ToHexString(b)));
        Assert.True(found == blocks.Count, $"{found} of {blocks.Count} blocks read back clean");
    }

    /// <summary>
    /// The same tones as a stream: blocks of bytes with no check value, as a stream format writes them. Before: the biphase
    /// reading of the tones (each FSK bit two equal biphase bits) found hundreds of short blocks, a one-byte check held on
    /// enough of them to count as proof, and the draft was biphase with the family measured; the FSK draft, whose 8O1
    /// framing held on every character, had no check value to answer with.
    /// </summary>
    [Fact]
    public void Low_passed_minimodem_stream_is_drafted_as_fsk()
    {
        var blocks = RandomBlocks(7, 12, 100);

        var (_, profile) = DraftOfLowPassedTones(blocks, "fsk-300-stream", withCrc: false);

        AssertMinimodemTones(profile);
        Assert.Equal(Parity.Odd, profile.Framing.Parity);
    }

    /// <summary>
    /// A stream whose tones are 1.5 and 2.5 cycles a bit, one baud apart (minimodem --tx 800 --mark 2000 --space 1200),
    /// with no check value, played 3 % slow (SoX's speed effect, sox(1)). The tones' runs step by odd counts of half
    /// cycles and make no one bit time; the baud is the one whose trial decode frames cleanly. Before: that baud was a
    /// guess and the tones measured as the tape plays were not, so confirming the guesses set minimodem's 800 baud
    /// beside tones 776 Hz apart, and the confirmed draft did not load ("fsk.spaceHz must be at least one baud away").
    /// </summary>
    [Fact]
    public void A_slow_stream_of_tones_one_baud_apart_is_still_loadable_once_its_guesses_are_confirmed()
    {
        var blocks = RandomBlocks(11, 8, 120);

        string tones = folder.File("fsk-800-slow.minimodem.wav");
        MinimodemWrite(blocks, tones, withCrc: false, 800, 2000, 1200);
        string capture = folder.File("fsk-800-slow.sox.wav");
        OutsideTool.Sox(tones, capture, "speed", "0.97");
        var draft = ProfileDrafter.Draft(capture);
        output.WriteLine(draft.Json);
        output.WriteLine(draft.SideListJson());

        // The reference: minimodem's arguments (--tx 800 --mark 2000 --space 1200) and the framing written here (8O1,
        // least significant bit first), a stream with no check value.
        const string reference = """
            {"id": "minimodem-800", "name": "minimodem at 800 baud", "family": "fsk",
             "fsk": {"markHz": 2000, "spaceHz": 1200, "baud": 800, "leadInMinimumSeconds": 0.1},
             "framing": {"dataBits": 8, "bitOrder": "lsb-first", "startBits": "0", "stopBits": "1", "parity": "odd"},
             "layout": {}}
            """;
        var confirmed = ProfileLoader.Parse(GuessConfirmation.Confirm(draft.Json, reference, draft.GuessedPaths), "confirmed");

        using var result = CaptureDecoder.Decode(capture, confirmed);
        string read = string.Concat(result.Candidates.Select(c => Convert.ToHexString([.. c.Header, .. c.Payload])));
        int found = blocks.Count(b => read.Contains(Convert.ToHexString(b), StringComparison.Ordinal));
        Assert.True(found >= blocks.Count - 1, $"{found} of {blocks.Count} blocks read back by the confirmed draft");
    }

    /// <summary><paramref name="count"/> blocks of <paramref name="length"/> random bytes, drawn from <paramref name="seed"/>.</summary>
    private static List<byte[]> RandomBlocks(int seed, int count, int length)
    {
        var random = new Random(seed);
        var blocks = new List<byte[]>();
        for (int n = 0; n < count; n++)
        {
            var block = new byte[length];
            random.NextBytes(block);
            blocks.Add(block);
        }

        return blocks;
    }

    /// <summary>The draft is FSK at minimodem's tones and rate (outside reference: its arguments --tx 300 --mark 2400 --space 1200).</summary>
    private static void AssertMinimodemTones(FormatProfile profile)
    {
        Assert.Equal(FormatFamily.Fsk, profile.Family);
        Assert.InRange(profile.Fsk!.MarkHz, 2400 * 0.98, 2400 * 1.02);
        Assert.InRange(profile.Fsk.SpaceHz, 1200 * 0.98, 1200 * 1.02);
        Assert.InRange(profile.Fsk.Baud, Baud * 0.98, Baud * 1.02);
    }

    /// <summary>
    /// minimodem's tones of <paramref name="blocks"/> (<see cref="MinimodemWrite"/>) through SoX's low-pass at 1.7 kHz,
    /// drafted; the draft and its side list are written to the test's output. Returns the capture and the draft loaded.
    /// </summary>
    private (string Capture, FormatProfile Profile) DraftOfLowPassedTones(List<byte[]> blocks, string name, bool withCrc)
    {
        string tones = folder.File($"{name}.minimodem.wav");
        MinimodemWrite(blocks, tones, withCrc);
        string capture = folder.File($"{name}.lowpass.wav");
        OutsideTool.Sox(tones, capture, "lowpass", "1700");

        var draft = ProfileDrafter.Draft(capture);
        output.WriteLine(draft.Json);
        output.WriteLine(draft.SideListJson());
        return (capture, draft.Load());
    }

    /// <summary>
    /// minimodem writes the recording as tones from raw bits (no start or stop bits of its own, eight bits a byte least
    /// significant first): half a second of mark before each block and after the last, each character framed 8O1, each
    /// block followed by its CRC-16/XMODEM when <paramref name="withCrc"/>.
    /// </summary>
    private static void MinimodemWrite(List<byte[]> blocks, string path, bool withCrc) => MinimodemWrite(blocks, path, withCrc, Baud, 2400, 1200);

    private static void MinimodemWrite(List<byte[]> blocks, string path, bool withCrc, int baud, int markHz, int spaceHz)
    {
        var bits = new StringBuilder();
        foreach (var block in blocks)
        {
            bits.Append('1', baud / 2);
            ushort crc = CrcXmodem(block);
            foreach (byte c in withCrc ? block.Append((byte)(crc >> 8)).Append(unchecked((byte)crc)) : block)
            {
                bits.Append('0');
                int ones = 0;
                for (int i = 0; i < 8; i++)
                {
                    int bit = (c >> i) & 1;
                    ones += bit;
                    bits.Append(bit == 1 ? '1' : '0');
                }

                // Odd parity: the parity bit makes the count of ones odd.
                bits.Append(ones % 2 == 0 ? '1' : '0');
                bits.Append('1');
            }
        }

        bits.Append('1', baud / 2);
        var packed = MinimodemRawBits.Pack(bits);

        OutsideTool.Run(
            OutsideTool.MinimodemPath,
            ["--tx", baud.ToString(CultureInfo.InvariantCulture), "--mark", markHz.ToString(CultureInfo.InvariantCulture), "--space", spaceHz.ToString(CultureInfo.InvariantCulture), "--startbits", "0", "--stopbits", "0",
             "--volume", "0.5", "-R", "44100", "-f", path],
            packed);
        Assert.Equal(44_100, OutsideTool.SoxSampleRate(path));
    }

    /// <summary>CRC-16/XMODEM bit by bit (polynomial 0x1021, initial value 0, no reflection, no final XOR: the CRC catalogue's parameters).</summary>
    private static ushort CrcXmodem(IEnumerable<byte> bytes)
    {
        int crc = 0;
        foreach (byte b in bytes)
        {
            crc ^= b << 8;
            for (int i = 0; i < 8; i++)
            {
                crc = (crc & 0x8000) != 0 ? (crc << 1) ^ 0x1021 : crc << 1;
                crc &= 0xFFFF;
            }
        }

        return (ushort)crc;
    }
}
