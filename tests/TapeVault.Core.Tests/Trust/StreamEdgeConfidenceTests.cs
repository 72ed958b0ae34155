using System.Globalization;
using TapeVault.Core.Blocks;
using TapeVault.Core.Bytes;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// The confidence of a Kansas City stream (BYTE, February 1976: no blocks, no checksum) where its signal breaks off.
/// minimodem, a general-purpose software FSK modem, writes known text; SoX puts silence in place of the tape for a
/// while (a full dropout). What a capture read up to the break and after it is right or not by the text minimodem was
/// given, which its own receiver reads back from the same file. A character at the edge of what was read is doubted
/// by the evidence the decoder has there (its decisions, the baud), not as if it stood inside a run of characters.
/// </summary>
public sealed class StreamEdgeConfidenceTests(OutsideTempFolder temp, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    [Theory]
    [InlineData(1200, 1.8)]
    [InlineData(300, 2.2)]
    public void The_characters_where_a_minimodem_stream_breaks_off_carry_the_doubt_of_an_edge(int baud, double cut)
    {
        var profile = ProfileCatalog.BuiltIn.Get($"kcs-{baud}");
        string source = KcsCaptures.Write(temp.Root, $"edge-{baud}", baud, 48_000, stopBits: 2, amplitude: 0.5);
        string damaged = WithSilence(source, $"edge-{baud}-{cut.ToString("0.0", CultureInfo.InvariantCulture)}", cut, 0.030);
        string text = KcsCaptures.Hex(KcsCaptures.Text);

        var result = CaptureDecoder.Decode(damaged, profile);
        var best = result.Best.OrderBy(c => c.StartSeconds).ToList();
        output.WriteLine(string.Join("; ", best.Select(c => $"{c.SettingName} {c.StartSeconds:0.000}-{c.EndSeconds:0.000} s {c.Payload.Length} B c={c.Confidence:0.0000}")));

        // The silence split the stream: a reading up to the break and one after it, each a stretch of the text
        // minimodem was given (the outside reference), at its start and at its end.
        Assert.Equal(2, best.Count);
        Assert.StartsWith(best[0].PayloadHex, text, StringComparison.Ordinal);
        Assert.EndsWith(best[1].PayloadHex, text, StringComparison.Ordinal);

        // The last character before the break and the first after it have no neighbour on that side to hold their
        // frame: their error odds are at least what an edge character with their decisions has at this baud (before,
        // only their decisions' own odds, as if they stood inside a run of characters).
        // The decoder says which kind of edge each is (the signal was lost; it came back), and each kind is priced as
        // such edges were measured wrong.
        foreach (var (reading, index, kind) in new[] { (best[0], best[0].Payload.Length - 1, CharacterEdgeKind.LastBeforeBreak), (best[1], 0, CharacterEdgeKind.FirstAfterBreak) })
        {
            double edge = CharacterEdge.Error(reading.ByteMargins[index], baud, kind);
            output.WriteLine($"{reading.StartSeconds:0.000} s, character {index}: margin {reading.ByteMargins[index]:0.000}, odds {reading.ByteErrorOdds[index]:0.00000}, edge {edge:0.00000}");
            Assert.True(reading.ByteErrorOdds[index] >= edge * 0.999, $"character {index}: odds {reading.ByteErrorOdds[index]} below an edge's {edge}");
        }
    }

    [Fact]
    public void A_character_framed_off_the_grid_where_a_minimodem_stream_ends_carries_the_doubt_of_a_false_frame()
    {
        // minimodem writes the text after a lead-in of mark tone (KcsCaptures); SoX joins a trailer of mark tone to the
        // end of what minimodem wrote, half a cycle out of phase, as a tape's trailer recorded on its own would be. The
        // join is a transient a bit or two after the text's last stop bit, and the mark tone after it frames as a
        // character (a start bit, then ones): one character more than minimodem was given, which its own receiver
        // does not read (the outside reference for the text). At 1200 baud the transient fills enough of a bit to do so.
        const int baud = 1200;
        var profile = ProfileCatalog.BuiltIn.Get($"kcs-{baud}");
        string source = KcsCaptures.Write(temp.Root, $"trailer-{baud}", baud, 48_000, stopBits: 2, amplitude: 0.5);
        string trailer = temp.File($"trailer-{baud}.tone.wav");
        OutsideTool.Sox("-n", "-r", "48000", "-b", "16", "-c", "1", trailer, "synth", "0.5", "sine", "2400", "0", "50", "vol", "0.5");
        string capture = temp.File($"trailer-{baud}.joined.wav");
        OutsideTool.Sox(source, trailer, capture);
        string text = KcsCaptures.Hex(KcsCaptures.Text);

        var result = CaptureDecoder.Decode(capture, profile);
        var readings = result.Candidates.Where(c => c.Payload.Length > KcsCaptures.Text.Length / 2).ToList();
        output.WriteLine(string.Join("; ", readings.Select(c => $"{c.SettingName} {c.Payload.Length} B c={c.Confidence:0.0000} last {c.Payload[^1]:x2} odds {c.ByteErrorOdds[^1]:0.0000}")));
        Assert.NotEmpty(readings);
        Assert.All(readings, c => Assert.StartsWith(text, c.PayloadHex, StringComparison.Ordinal));

        // A reading with a character after the text has framed it on the transient, off the grid of the text's
        // characters: that character is more likely false than not, and the reading, which holds it, is far from sure
        // (before, only its decisions counted: odds 0.17–0.36, the readings at 0.72–0.84).
        var longer = readings.Where(c => c.Payload.Length > KcsCaptures.Text.Length).ToList();
        Assert.NotEmpty(longer);
        Assert.All(longer, c =>
        {
            Assert.True(c.ByteErrorOdds[^1] >= 0.5, $"{c.SettingName}: the character after the text at odds {c.ByteErrorOdds[^1]}");
            Assert.True(c.Confidence < 0.5, $"{c.SettingName}: a reading with a false last character at {c.Confidence}");
        });

        // The readings of the text alone keep their confidence: their last character stands on its neighbours' grid.
        Assert.All(readings.Where(c => c.Payload.Length == KcsCaptures.Text.Length), c => Assert.True(c.ByteErrorOdds[^1] < 0.05, $"{c.SettingName}: {c.ByteErrorOdds[^1]}"));
    }

    [Fact]
    public void A_weakly_framed_last_character_of_an_unchecked_stream_is_doubted_by_its_baud()
    {
        // Sixty characters of ten decisions each (start bit, eight data bits, stop bit, as the Kansas City Standard
        // frames them, BYTE, February 1976), all decided cleanly but for the last character's start bit at 0.3:
        // inside a run of characters one such bit is noise, at the end of what was read it is as likely the transient
        // where the signal broke off. The same decisions at 1200 baud make the character less sure than at 300 (before,
        // the baud made no difference: only the decisions counted).
        static double LastOdds(int baud)
        {
            var profile = ProfileCatalog.BuiltIn.Get($"kcs-{baud}");
            var scorer = new BlockScorer(profile.Layout, profile.Family, profileId: profile.Id, characterBaud: baud);
            var decisions = new DecisionLog();
            var first = new int[60];
            var random = new Random(3);
            for (int c = 0; c < 60; c++)
            {
                first[c] = decisions.Count;
                for (int b = 0; b < 10; b++)
                {
                    float distance = c == 59 && b == 0 ? 0.3f : 0.9f + (0.1f * (float)random.NextDouble());
                    decisions.Add(distance, 1 - distance, 1);
                }
            }

            var score = scorer.Score(new byte[60], first, new float[60], decisions, 0, 0, BlockStartEvidence.LeadIn, truncated: false);
            return score.PayloadErrorOdds[59];
        }

        double at1200 = LastOdds(1200);
        double at300 = LastOdds(300);
        // Ended by no loss of signal: the last character before an idle line.
        Assert.True(at1200 >= CharacterEdge.Error(0.3, 1200, CharacterEdgeKind.LastBeforeIdle) * 0.999, $"1200 baud: {at1200}");
        Assert.True(at300 >= CharacterEdge.Error(0.3, 300, CharacterEdgeKind.LastBeforeIdle) * 0.999, $"300 baud: {at300}");
        Assert.True(at1200 > at300, $"1200 baud {at1200}, 300 baud {at300}");
    }

    [Fact]
    public void A_300_baud_reading_whose_first_character_after_the_lead_in_is_weak_is_no_surer_than_that_character()
    {
        // Forty-one characters of eleven decisions each (start bit, eight data bits, two stop bits: the Kansas City
        // Standard's frame, BYTE, February 1976), all decided cleanly but the first character's first data bit at 0.34:
        // the first character after the lead-in, framed on the tone's onset. On the trust benchmark's kcs-300 readings
        // of tuning seeds 16200–16248, such first characters (least decision distance 0.2–0.6) were wrong 6 times in
        // 49 (measured; docs/performance.md), and the price of their kind puts this one at 3 %. Before, the map's one
        // curve, which rightly lifts long readings whose edge doubts were priced too high, lifted this one from the
        // model's 0.96 to 0.997: a held-out reading of this kind (seed 162007) was wrong at 0.996.
        const int baud = 300;
        const int characters = 41;
        var profile = ProfileCatalog.BuiltIn.Get($"kcs-{baud}");
        int bits = profile.Framing.BitsPerByte;
        var scorer = new BlockScorer(profile.Layout, profile.Family, profileId: profile.Id, characterBaud: baud, characterBits: bits);
        var decisions = new DecisionLog();
        var first = new int[characters];
        var random = new Random(5);
        for (int c = 0; c < characters; c++)
        {
            first[c] = decisions.Count;
            for (int b = 0; b < bits; b++)
            {
                float distance = c == 0 && b == 1 ? 0.34f : 0.9f + (0.1f * (float)random.NextDouble());
                decisions.Add(distance, 1 - distance, 1);
            }
        }

        var score = scorer.Score(new byte[characters], first, new float[characters], decisions, 0, 0, BlockStartEvidence.LeadIn, truncated: false);
        double edge = CharacterEdge.Error(0.34, baud, CharacterEdgeKind.FirstAfterLeadIn);
        output.WriteLine($"model {score.ModelConfidence:0.0000}, confidence {score.Confidence:0.0000}, edge {edge:0.0000}");
        Assert.InRange(edge, 0.02, 0.2);
        Assert.True(score.Confidence <= 1 - edge + 1e-9, $"confidence {score.Confidence} above the first character's {1 - edge}");
    }

    [Fact]
    public void The_doubt_of_an_edge_character_follows_the_baud_and_its_decisions()
    {
        // A transient of fixed length on tape fills four times as much of a bit at 1200 baud as at 300: at equal
        // decisions the odds of an invented edge character are four times as high.
        foreach (var kind in Enum.GetValues<CharacterEdgeKind>())
        {
            double odds300 = CharacterEdge.Error(0.3, 300, kind) / (1 - CharacterEdge.Error(0.3, 300, kind));
            double odds1200 = CharacterEdge.Error(0.3, 1200, kind) / (1 - CharacterEdge.Error(0.3, 1200, kind));
            Assert.Equal(4.0, odds1200 / odds300, 6);

            // A cleanly decided edge character is near certain.
            Assert.True(CharacterEdge.Error(1.0, 1200, kind) < 0.002, $"{kind}");
        }

        // One with no decision to vouch for it, after a lead-in, is more likely false than not.
        Assert.True(CharacterEdge.Error(0.0, 1200, CharacterEdgeKind.FirstAfterLeadIn) > 0.5);
    }

    /// <summary>SoX cuts the capture at <paramref name="cut"/> seconds and puts <paramref name="seconds"/> of silence in place of what followed.</summary>
    private string WithSilence(string source, string name, double cut, double seconds)
    {
        string output = temp.File($"{name}.wav");
        OutsideTool.SoxSilence(source, output, cut, seconds);
        return output;
    }
}
