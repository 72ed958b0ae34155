using System.Globalization;
using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Bytes;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// The confidence of a Kansas City stream (BYTE, February 1976: one start bit, eight data bits least significant
/// first, two stop bits; no checksum) whose bits frame validly at another offset too. minimodem, a general-purpose
/// software FSK modem, writes a run of 0x00 and some text; its own receiver, told to take the frame one bit late (two
/// start bits, one stop bit), reads the run as 0x80 with every stop bit mark: the run's bits do not pin its framing,
/// while the text's break under the late frame.
/// </summary>
public sealed class StreamFramingConfidenceTests(OutsideTempFolder temp, ITestOutputHelper output) : IClassFixture<OutsideTempFolder>
{
    private static readonly byte[] Words = Encoding.ASCII.GetBytes("Brackenfield Home Computer Club, Orrin 80 demo tape");

    [Fact]
    public void A_run_minimodem_reads_one_bit_late_as_0x80_is_unpinned_and_the_text_is_not()
    {
        const int baud = 1200;
        var profile = ProfileCatalog.BuiltIn.Get($"kcs-{baud}");
        byte[] written = [.. new byte[40], .. Words];
        string path = temp.File("late.wav");
        KcsCaptures.WriteRun(path, baud, 48_000, written);
        var late = OutsideTool.Run(
            OutsideTool.MinimodemPath,
            ["--rx", baud.ToString(CultureInfo.InvariantCulture), "--mark", "2400", "--space", "1200", "--startbits", "2", "--stopbits", "1", "--quiet", "-f", path]);
        byte[] lateBytes = Encoding.Latin1.GetBytes(late.StandardOutput);
        output.WriteLine(KcsCaptures.Hex(lateBytes));

        // Outside reference: minimodem's receiver, framing a bit late, reads the written run of 0x00 as 0x80.
        byte[] lateRun = lateBytes[..40];
        Assert.All(lateRun, b => Assert.Equal(0x80, b));

        // Another offset (one bit earlier) frames that reading validly on every character: nothing in it pins its
        // framing. The run as written, and the text, are pinned: no other offset holds over them.
        Assert.True(FramingAmbiguity.Unpinned(lateRun, default, profile.Framing));
        Assert.False(FramingAmbiguity.Unpinned(written.AsSpan(0, 40), default, profile.Framing));
        Assert.False(FramingAmbiguity.Unpinned(Words, default, profile.Framing));
        // A word of lowercase letters alone (bits 5 and 6 set, bit 7 clear) frames validly three bits early, but the
        // spaces and capitals between the words break that framing: the text's longest such stretch is a word or two.
        Assert.InRange(FramingAmbiguity.LongestOtherFraming(Words, default, profile.Framing), 2, Words.Length / 2);

        // A gap of idle line between two characters breaks the stretch: the run after it is judged on its own.
        double frame = 11.0 / baud;
        double[] starts = [.. Enumerable.Range(0, 40).Select(i => (i * frame) + (i >= 20 ? 5 * frame : 0))];
        Assert.Equal(20, FramingAmbiguity.LongestOtherFraming(lateRun, starts, profile.Framing));
    }

    [Theory]
    [InlineData(1200)]
    [InlineData(300)]
    public void The_price_of_an_unpinned_framing_is_the_rate_such_readings_were_measured_wrong(int baud)
    {
        // Trust benchmark, kcs-1200 and kcs-300 stream readings of tuning seeds 16200–16259 and 16300–16399 priced at
        // 0.9 or more before the price, whose framing another offset held over every character, decided below
        // FramingAmbiguity.ClearMeanDistance: (baud, readings, wrong).
        (double Baud, int Readings, int Wrong)[] told = [(1200, 125, 13), (300, 213, 7)];

        // Maximum likelihood of odds k · baud/1200 over those readings (a binomial likelihood, common practice): the
        // log-likelihood is concave in log k, so its derivative, Σ wrong − readings · e, is found zero by bisection.
        double Slope(double logOdds) => told.Sum(t =>
        {
            double odds = Math.Exp(logOdds) * t.Baud / 1200;
            return t.Wrong - (t.Readings * odds / (1 + odds));
        });
        double lo = -10, hi = 5;
        for (int i = 0; i < 100; i++)
        {
            double mid = (lo + hi) / 2;
            (lo, hi) = Slope(mid) > 0 ? (mid, hi) : (lo, mid);
        }

        double fitted = Math.Exp(lo);
        double fittedOdds = fitted * baud / 1200;
        output.WriteLine($"odds at 1200 baud fitted {fitted:0.0000}, used {FramingAmbiguity.UnpinnedOddsAt1200}");

        // The price used is that fit, to the three places it is written with.
        Assert.Equal(fittedOdds / (1 + fittedOdds), FramingAmbiguity.UnpinnedError(baud), 0.0005 * baud / 1200);
    }

    [Fact]
    public void An_unchecked_reading_whose_framing_another_offset_holds_is_no_surer_than_such_readings_were_right()
    {
        // Thirty-three characters of eleven decisions each, every decision at distance 0.90–0.92: so a held-out
        // kcs-1200 reading of 33 × 0x80 was decided where the tape held a run of 0x00 (seed 176036), and was put at
        // 0.993. Such a reading is framed wrong as often as readings whose framing another offset holds were measured
        // to be (FramingAmbiguity.UnpinnedError); the same decisions over text, whose bits pin the frame, keep the
        // confidence a scorer blind to the framing gives them.
        const int baud = 1200;
        var profile = ProfileCatalog.BuiltIn.Get($"kcs-{baud}");
        int bits = profile.Framing.BitsPerByte;
        var scorer = new BlockScorer(profile.Layout, profile.Family, profileId: profile.Id, characterBaud: baud, characterBits: bits, characterFraming: profile.Framing);
        var blind = new BlockScorer(profile.Layout, profile.Family, profileId: profile.Id, characterBaud: baud, characterBits: bits);

        BlockScore Score(BlockScorer s, byte[] bytes)
        {
            var decisions = new DecisionLog();
            var first = new int[bytes.Length];
            var starts = new double[bytes.Length];
            var random = new Random(7);
            for (int c = 0; c < bytes.Length; c++)
            {
                first[c] = decisions.Count;
                starts[c] = c * 40.0 * bits;
                for (int b = 0; b < bits; b++)
                {
                    float distance = 0.90f + (0.02f * (float)random.NextDouble());
                    decisions.Add(distance, 1 - distance, 1);
                }
            }

            return s.Score(bytes, first, new float[bytes.Length], decisions, 0, 0, BlockStartEvidence.LeadIn, truncated: false, byteSamples: starts);
        }

        byte[] run = [.. Enumerable.Repeat((byte)0x80, 33)];
        var unpinned = Score(scorer, run);
        var unpinnedBlind = Score(blind, run);
        output.WriteLine($"0x80 run: {unpinned.Confidence:0.0000} (blind to the framing {unpinnedBlind.Confidence:0.0000})");
        Assert.True(unpinned.Confidence <= 1 - FramingAmbiguity.UnpinnedError(baud) + 1e-12, $"{unpinned.Confidence}");

        byte[] text = Words[..33];
        var pinned = Score(scorer, text);
        var pinnedBlind = Score(blind, text);
        output.WriteLine($"text: {pinned.Confidence:0.0000} (blind {pinnedBlind.Confidence:0.0000})");
        Assert.Equal(pinnedBlind.Confidence, pinned.Confidence);
    }
}
