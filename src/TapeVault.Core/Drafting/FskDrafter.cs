using System.Text.Json.Nodes;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;
using static TapeVault.Core.Drafting.CommonSections;

namespace TapeVault.Core.Drafting;

/// <summary>
/// FSK: a bit is a fixed time of one of two tones, so each tone's half cycles come in runs of a fixed step (its
/// cycles per bit, twice over), and both steps give the same bit time. The tone of the long runs (the lead-in and the
/// idle line) is the mark. Framing is told by decoding with the read path's own FSK decoder under each usual
/// framing: the one with the most bits per character whose start, stop and parity bits hold.
/// </summary>
public sealed class FskDrafter : IFamilyDrafter
{
    /// <summary>Trial decodes read at most this much of the stretch.</summary>
    public const double TrialSeconds = 60;

    /// <summary>The framings tried (data bits, parity, stop bits), after one start bit 0, as serial lines use them (common practice).</summary>
    public static IReadOnlyList<(int Data, Parity Parity, string Stop)> Framings { get; } =
    [
        (8, Parity.None, "1"), (8, Parity.None, "11"), (8, Parity.Even, "1"), (8, Parity.Odd, "1"),
        (7, Parity.Even, "1"), (7, Parity.Odd, "1"), (8, Parity.Even, "11"), (8, Parity.Odd, "11"), (7, Parity.None, "1"),
    ];

    public string Family => "fsk";

    /// <summary>
    /// The score of tones the spectrum shows but whose runs make no one bit time: under a pulse-width reading whose
    /// runs do not fit either (0.3 of the grouped share), so that where no draft's check holds, the proposal stays
    /// the one it was before tones were drafted from the spectrum (a pulse format's harmonics show as two tones).
    /// </summary>
    public const double UnprovenToneShare = 0.25;

    /// <summary>
    /// The two tones (the groups of their half cycles) and the bauds they may run at, likeliest first. Where both
    /// tones' runs step by whole cycles that make one bit time, that bit time first (measured from runs). Else, where
    /// the spectrum shows two of the main groups as tones, every bit time the runs leave possible: a filtered or noisy
    /// tone's half cycles fall in and out of their group (a low-passed lower tone of one cycle a bit reads in runs of
    /// 1), so each tone whose runs step by two or more gives the even counts next to its step, and one cycle of the
    /// lower tone a bit is always a candidate. Either way the lower tone's whole cycles a bit (<see cref="LowerToneCycles"/>)
    /// follow, since half cycles between the tones (a change of tone read through a filter) break the runs and
    /// mislead their step; trial decodes choose among them. The likeliest pair comes first, then the other pairs of
    /// main groups the spectrum shows as tones (at most <see cref="MostTonePairs"/> in all), which the draft tries where
    /// the likeliest frames no character cleanly: a group of half cycles that is no tone (those at a change of tone,
    /// which a one-cycle bit's neighbours pull between the tones) can hold more intervals than the lower tone, and the
    /// pair it makes with the higher tone is then the likeliest.
    /// </summary>
    private static List<ToneCandidate> Tones(StretchSurvey survey)
    {
        var candidates = new List<ToneCandidate>();
        var top = survey.Dominant.Take(2).ToList();
        if (top.Count < 2 || survey.Clusters[top[1]].Share < 0.05)
        {
            return candidates;
        }

        int a = Math.Min(top[0], top[1]);
        int b = Math.Max(top[0], top[1]);
        var ra = survey.Runs[a];
        var rb = survey.Runs[b];

        // A tone holds whole cycles a bit, so its runs step by an even count of half cycles: of the even counts next to
        // each measured step, the pair that makes the two bit times agree best.
        static IEnumerable<int> Even(int g) => new[] { g - 1, g, g + 1 }.Where(x => x >= 2 && x % 2 == 0);
        if (ra.Granularity >= 2 && rb.Granularity >= 2)
        {
            var (bitA, bitB) = Even(ra.Granularity)
                .SelectMany(ga => Even(rb.Granularity).Select(gb => (A: ga * survey.Clusters[a].Seconds, B: gb * survey.Clusters[b].Seconds)))
                .MinBy(p => Math.Abs(Math.Log(p.A / p.B)));
            if (bitA > 0 && Math.Abs(Math.Log(bitA / bitB)) <= 0.12)
            {
                candidates.Add(new(b, a, 0.5 / survey.Clusters[b].Seconds, 0.5 / survey.Clusters[a].Seconds, Bauds(0.5 / survey.Clusters[a].Seconds, 0.5 / survey.Clusters[b].Seconds, [], 1 / Math.Sqrt(bitA * bitB)), true));
            }
        }

        // Two tones FSK uses lie between 1.15 : 1 and 3.5 : 1 apart (common practice), and both show in the spectrum.
        // The two largest groups first; but a head amplifier's capture or a filter may put a group of half cycles that
        // is no tone (between the tones, or above them) before the lower tone's, so the pairs of the main groups are
        // tried, the pair holding most intervals first.
        var spectrum = survey.Stretch.Spectrum();
        var main = survey.Dominant.Take(MostToneGroups).Where(g => survey.Clusters[g].Share >= 0.05).ToList();
        var pairs = main.SelectMany(x => main.Where(y => y > x).Select(y => (High: x, Low: y)))
            .OrderByDescending(p => survey.Clusters[p.High].Share + survey.Clusters[p.Low].Share);
        foreach (var (high, low) in pairs)
        {
            if (candidates.Count >= MostTonePairs)
            {
                break;
            }

            double ratio = survey.Clusters[low].Seconds / survey.Clusters[high].Seconds;
            if (ratio is >= 1.15 and <= 3.5 && SpectrumShows(spectrum, 0.5 / survey.Clusters[low].Seconds) && SpectrumShows(spectrum, 0.5 / survey.Clusters[high].Seconds)
                && !candidates.Exists(c => c.Low == low && c.High == high))
            {
                // Tones taken from the spectrum are measured there too: where a tone's half cycles are smeared (a lone
                // cycle of the lower tone between the higher's, through a head amplifier or a filter, splits into a
                // short and a long half of no one length), its group's centre lies off the tone, often by a fifth or
                // more, while the tone's power still peaks at its frequency.
                double lowHz = SpectrumPeak(spectrum, 0.5 / survey.Clusters[low].Seconds, 0.5 / survey.Clusters[high].Seconds);
                double highHz = SpectrumPeak(spectrum, 0.5 / survey.Clusters[high].Seconds, 0.5 / survey.Clusters[low].Seconds);
                var fromSteps = new List<double> { lowHz };
                foreach (int g in new[] { high, low })
                {
                    fromSteps.AddRange(Even(survey.Runs[g].Granularity).Select(cycles => 1 / (cycles * survey.Clusters[g].Seconds)));
                }

                candidates.Add(new(low, high, lowHz, highHz, Bauds(highHz, lowHz, fromSteps), false));
            }
        }

        return candidates;
    }

    /// <summary>The most pairs of groups tried as the tones, the likeliest first.</summary>
    public const int MostTonePairs = 3;

    /// <summary>The most groups of half cycles (the largest) whose pairs are tried as the two tones.</summary>
    public const int MostToneGroups = 4;

    /// <summary>
    /// The whole cycles of the lower tone a bit that are tried after the bauds the runs give: serial tape formats of
    /// the period put 1 to 4 cycles of the lower tone in a bit (common practice; the Kansas City Standard 4 at 300 baud
    /// and 1 at its 1200-baud variant, BYTE, February 1976).
    /// </summary>
    public static IReadOnlyList<int> LowerToneCycles { get; } = [1, 2, 3, 4];

    /// <summary>
    /// The bauds <paramref name="first"/> gives, then those of <see cref="LowerToneCycles"/>, each kept within what the
    /// tones allow and once (within 5 %). A baud the tones' runs measure (<paramref name="measured"/>) comes first as
    /// it is: it is timed over whole bits of both tones, where the tones' groups of half cycles are pulled toward each
    /// other by the half cycles at every change of tone, so that tones a baud apart may measure nearer than that; the
    /// trial decodes and the draft then take the tones at it (<see cref="TonesAt"/>).
    /// </summary>
    private static List<double> Bauds(double highHz, double lowHz, IEnumerable<double> first, double? measured = null)
    {
        // One cycle a bit is the least a tone can hold: measured just above the lower tone, the baud is that tone.
        // Nor may it pass the tones' distance (a profile needs them a baud apart): tones of one and two cycles a bit
        // measure a little under 2 : 1 now and then, and a baud a hair too high would make every trial profile void.
        double Fit(double baud) => Math.Min(baud, Math.Min(lowHz, highHz - lowHz));
        var bauds = measured is { } m ? new List<double> { m } : [];
        foreach (double baud in first.Concat(LowerToneCycles.Select(c => lowHz / c)).Select(Fit))
        {
            if (bauds.All(x => Math.Abs(Math.Log(x / baud)) > 0.05))
            {
                bauds.Add(baud);
            }
        }

        return bauds;
    }

    /// <summary>
    /// The tones a profile at <paramref name="baud"/> takes: as measured where they are a baud apart and the lower holds
    /// a whole cycle a bit (what a profile needs); else each tone the whole cycles a bit nearest to it at that baud (an
    /// FSK tape format's tones hold whole cycles a bit: common practice; the Kansas City Standard's 4 and 8 at 300 baud,
    /// BYTE, February 1976), the higher at least a cycle above the lower.
    /// </summary>
    internal static (double Low, double High) TonesAt(double lowHz, double highHz, double baud)
    {
        if (highHz - lowHz >= baud && lowHz >= baud)
        {
            return (lowHz, highHz);
        }

        int lowCycles = Math.Max(1, (int)Math.Round(lowHz / baud));
        int highCycles = Math.Max(lowCycles + 1, (int)Math.Round(highHz / baud));
        return (lowCycles * baud, highCycles * baud);
    }

    /// <summary>Two groups of half cycles taken as the tones, the tones' frequencies and the bauds to try, likeliest first.</summary>
    private sealed record ToneCandidate(int Low, int High, double LowHz, double HighHz, IReadOnlyList<double> Bauds, bool FromRuns);

    /// <summary>How far (in ratio) from a group's tone the spectrum's peak of that tone is looked for.</summary>
    public const double SpectrumPeakReach = 0.25;

    /// <summary>
    /// The frequency of the spectrum's strongest peak (at least a tenth of the strongest, −10 dB) within
    /// <see cref="SpectrumPeakReach"/> of <paramref name="hz"/> and nearer to it than to <paramref name="otherHz"/> (the
    /// other tone), placed between its points by a parabola through the peak and its neighbours in log frequency (the
    /// usual interpolation of a spectral peak, common practice); <paramref name="hz"/> itself where there is none.
    /// </summary>
    internal static double SpectrumPeak(IReadOnlyList<(double Hz, double Power)> spectrum, double hz, double otherHz)
    {
        ArgumentNullException.ThrowIfNull(spectrum);
        int best = -1;
        for (int i = 1; i < spectrum.Count - 1; i++)
        {
            var p = spectrum[i];
            bool peak = p.Power >= spectrum[i - 1].Power && p.Power > spectrum[i + 1].Power && p.Power >= 0.1;
            bool near = Math.Abs(Math.Log(p.Hz / hz)) <= Math.Log(1 + SpectrumPeakReach) && Math.Abs(Math.Log(p.Hz / hz)) < Math.Abs(Math.Log(p.Hz / otherHz));
            if (peak && near && (best < 0 || p.Power > spectrum[best].Power))
            {
                best = i;
            }
        }

        if (best < 0)
        {
            return hz;
        }

        double left = spectrum[best - 1].Power, centre = spectrum[best].Power, right = spectrum[best + 1].Power;
        double curve = left - (2 * centre) + right;
        double offset = curve < 0 ? Math.Clamp(0.5 * (left - right) / curve, -0.5, 0.5) : 0;
        double step = offset >= 0 ? Math.Log(spectrum[best + 1].Hz / spectrum[best].Hz) : Math.Log(spectrum[best].Hz / spectrum[best - 1].Hz);
        return spectrum[best].Hz * Math.Exp(offset * step);
    }

    /// <summary>Whether the spectrum has a peak of at least a tenth of the strongest (−10 dB) within 8 % of a frequency.</summary>
    private static bool SpectrumShows(IReadOnlyList<(double Hz, double Power)> spectrum, double hz) =>
        spectrum.Any(p => Math.Abs(Math.Log(p.Hz / hz)) < 0.08 && p.Power >= 0.1);

    public FamilyScore Score(StretchSurvey survey)
    {
        ArgumentNullException.ThrowIfNull(survey);
        var candidates = Tones(survey);
        if (candidates.Count == 0)
        {
            var top = survey.Dominant.Take(2).ToList();
            return new FamilyScore(Family, 0, "the two main groups do not come in runs that make one bit time, nor does the spectrum show two tones"
                + (top.Count < 2 ? string.Empty : $" ({string.Join(", ", top.Select(g => $"{F(0.5 / survey.Clusters[g].Seconds, "0")} Hz, {F(100 * survey.Clusters[g].Share, "0")} % of intervals, runs of {survey.Runs[g].Granularity}"))})"));
        }

        var (low, high, lowHz, highHz, bauds, fromRuns) = candidates[0];
        string tones = $"half cycles of {F(0.5 / survey.Clusters[high].Seconds, "0")} Hz come in runs of {survey.Runs[high].Granularity} and of {F(0.5 / survey.Clusters[low].Seconds, "0")} Hz in runs of {survey.Runs[low].Granularity}"
            + (fromRuns ? string.Empty : $" (the spectrum's peaks: {F(highHz, "0")} Hz and {F(lowHz, "0")} Hz)");
        return fromRuns
            ? new FamilyScore(Family, 0.9 * survey.GroupedShare, $"{tones}: one bit time of {Us(1 / bauds[0])} µs either way")
            : new FamilyScore(Family, UnprovenToneShare * survey.GroupedShare, $"{tones}, which make no one bit time, but the spectrum shows both tones: bauds {string.Join(", ", bauds.Select(x => F(x, "0")))} tried");
    }

    public FamilyProposal? Draft(StretchSurvey survey, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(survey);
        var candidates = Tones(survey);
        if (candidates.Count == 0)
        {
            return null;
        }

        // The mark is the tone of the idle line: told by decoding both ways, with eight data bits and one stop bit
        // (and, where those do not hold, with a parity bit of either kind, whose place the stop bit would take); each
        // baud is tried so in turn, likeliest first, until one frames cleanly, and the one that reads most is kept.
        // Where no baud of the likeliest tones frames cleanly, the next pair of tones is tried so too.
        var tried = new List<(double Baud, TrialResult High, TrialResult Low)>();
        (ToneCandidate Tones, double Baud, TrialResult AsHigh, TrialResult AsLow)? best = null;
        foreach (var pair in candidates)
        {
            var pairTried = new List<(double Baud, TrialResult High, TrialResult Low)>();
            foreach (double candidate in pair.Bauds)
            {
                var (lowerHz, higherHz) = TonesAt(pair.LowHz, pair.HighHz, candidate);
                var t = (Baud: candidate, High: Selection(survey.Stretch, higherHz, lowerHz, candidate, cancellation), Low: Selection(survey.Stretch, lowerHz, higherHz, candidate, cancellation));
                pairTried.Add(t);
                if (t.High.Clean || t.Low.Clean)
                {
                    break;
                }
            }

            var top = pairTried.MaxBy(t => Math.Max(t.High.Score, t.Low.Score));
            if (best is null || Math.Max(top.High.Score, top.Low.Score) > Math.Max(best.Value.AsHigh.Score, best.Value.AsLow.Score))
            {
                best = (pair, top.Baud, top.High, top.Low);
                tried = pairTried;
            }

            if (top.High.Clean || top.Low.Clean)
            {
                break;
            }
        }

        var (tones, baud, asHigh, asLow) = best!.Value;
        var (low, high, measuredLowHz, measuredHighHz, bauds, fromRuns) = tones;
        var (lowHz, highHz) = TonesAt(measuredLowHz, measuredHighHz, baud);
        bool highIsMark = asHigh.Score >= asLow.Score;
        int markGroup = highIsMark ? high : low;
        double markHz = highIsMark ? highHz : lowHz;
        double spaceHz = highIsMark ? lowHz : highHz;
        var runs = survey.AllRuns().Where(r => r.Class == markGroup).ToList();
        double RunSeconds((int Class, int Start, int Length) r) => r.Length * survey.Clusters[r.Class].Seconds;
        var leadIns = runs.Where(r => RunSeconds(r) >= 30 / baud).Select(RunSeconds).ToList();
        double leadIn = leadIns.Count > 0 ? Math.Clamp(0.25 * leadIns.Min(), 0.02, 60) : 0.1;

        // The tone spectrum, as a second witness of the tones.
        var spectrum = survey.Stretch.Spectrum();
        string Peak(double hz) => spectrum.Where(p => Math.Abs(Math.Log(p.Hz / hz)) < 0.08).Select(p => p.Power).DefaultIfEmpty(0).Max() is var power && power >= 0.1
            ? $"the spectrum peaks near {F(hz, "0")} Hz ({F(10 * Math.Log10(power), "0")} dB)"
            : $"the spectrum shows little near {F(hz, "0")} Hz";
        bool spectrumAgrees = spectrum.Any(p => Math.Abs(Math.Log(p.Hz / markHz)) < 0.08 && p.Power >= 0.1)
            && spectrum.Any(p => Math.Abs(Math.Log(p.Hz / spaceHz)) < 0.08 && p.Power >= 0.1);

        // Framing: decode with each framing and keep the most constrained one whose bits hold.
        var trials = new List<(int Data, Parity Parity, string Stop, double ErrorShare, List<BlockCandidate> Blocks)>();
        foreach (var (data, parity, stop) in Framings)
        {
            cancellation.ThrowIfCancellationRequested();
            var trial = Trial(survey.Stretch, markHz, spaceHz, baud, leadIn, data, parity, stop, cancellation);
            trials.Add((data, parity, stop, trial.ErrorShare, trial.Blocks));
        }

        var holding = trials.Where(t => t.ErrorShare <= 0.02 && t.Blocks.Sum(b => b.Payload.Length) > 0).ToList();

        // A leader of repeated characters read as a stream is often misframed for its first characters, so a
        // framing may fail a few in a hundred there: then the framings within two points of the fewest errors (at
        // most 15 %) are weighed, and only a check value found later proves the one chosen.
        bool relaxed = false;
        if (holding.Count == 0 && trials.Where(t => t.Blocks.Sum(b => b.Payload.Length) > 0).Select(t => t.ErrorShare).DefaultIfEmpty(1).Min() is var fewest && fewest <= 0.15)
        {
            holding = [.. trials.Where(t => t.ErrorShare <= fewest + 0.02 && t.Blocks.Sum(b => b.Payload.Length) > 0)];
            relaxed = true;
        }
        if (holding.Count == 0)
        {
            throw new ProfileDraftException(
                $"FSK tones at {F(markHz, "0")} Hz (mark) and {F(spaceHz, "0")} Hz at {F(baud, "0.#")} baud, but no framing holds: " +
                string.Join(", ", trials.Select(t => $"{t.Data}{t.Parity.ToString()[0]}{t.Stop.Length} {t.Blocks.Sum(b => b.Payload.Length)} characters, {F(100 * t.ErrorShare, "0.#")} % framing errors")) + ".");
        }

        // A receiver decides only the first stop bit (common practice for serial lines), so a trial with two stop
        // bits frames as well as one with one: the framings are weighed by their data and parity bits, the one-stop
        // trial kept, and the stop bits told from the characters' spacing.
        var chosen = holding
            .OrderByDescending(t => t.Data + (t.Parity == Parity.None ? 0 : 1))
            .ThenByDescending(t => t.Parity == Parity.None ? 0 : 1)
            .ThenBy(t => t.Stop.Length)
            .First();
        var spacing = CharacterSpacing.Measure(chosen.Blocks.Select(b => (IReadOnlyList<double>)b.ByteSeconds), baud, 1 + chosen.Data + (chosen.Parity == Parity.None ? 0 : 1));
        chosen = chosen with { Stop = spacing.StopBits };
        var blockBytes = chosen.Blocks.OrderBy(b => b.StartSeconds).Select(b => b.Payload.ToArray()).Where(b => b.Length > 0).ToList();

        // Bit order: the check value tells it where there is one; else the share of printable text.
        var reversed = blockBytes.Select(b => b.Select(x => Reverse(x, chosen.Data)).ToArray()).ToList();
        var asRead = LayoutSearch.Search([.. blockBytes.Select(b => new DraftBlock([b]))]);
        var asReversed = LayoutSearch.Search([.. reversed.Select(b => new DraftBlock([b]))]);
        bool msb = !asRead.HasChecksum && asReversed.HasChecksum;
        var layout = msb ? asReversed : asRead;
        bool orderMeasured = layout.HasChecksum;
        string orderEvidence = layout.HasChecksum ? "the check value holds with this bit order" : "no check value tells the bit order";
        if (!layout.HasChecksum)
        {
            double lsbText = PrintableShare(blockBytes);
            double msbText = PrintableShare(reversed);
            if (Math.Max(lsbText, msbText) >= 0.9 && Math.Min(lsbText, msbText) <= 0.6)
            {
                msb = msbText > lsbText;
                orderMeasured = true;
                orderEvidence = $"{F(100 * Math.Max(lsbText, msbText), "0")} % of bytes read this way are printable text, {F(100 * Math.Min(lsbText, msbText), "0")} % the other way";
            }
            else
            {
                orderEvidence = "serial lines send the least significant bit first (common practice); nothing in the bytes tells";
            }
        }

        // A leader of repeated characters before each block (rather than mark tone): the blocks read as a stream
        // begin with a long run of one character, and what follows it holds a check value after sync characters.
        // Searched too where a check holds but the bytes before its coverage are one value repeated (no sync may
        // expect them): the end of such a leader read into each block.
        CharacterLeaderFinding? leader = null;
        if (!layout.HasChecksum || (AlikeBeforeCoverage(layout) is { } before && ProfileLoader.SyncProblem(before) is not null))
        {
            foreach (bool reverse in new[] { msb, !msb })
            {
                var order = reverse ? BitOrder.MsbFirst : BitOrder.LsbFirst;
                leader = CharacterLeaderSearch.Find(reverse ? reversed : blockBytes, new ByteFraming(chosen.Data, order, "0", chosen.Stop, chosen.Parity));
                if (leader is not null)
                {
                    msb = reverse;
                    layout = leader.Layout;
                    orderMeasured = true;
                    orderEvidence = "the check value holds with this bit order after the leader";
                    break;
                }
            }
        }

        var framing = new ByteFraming(chosen.Data, msb ? BitOrder.MsbFirst : BitOrder.LsbFirst, "0", chosen.Stop, chosen.Parity);
        var proposal = new FamilyProposal { FramingHolds = !relaxed && chosen.Blocks.Sum(b => b.Payload.Length) >= 50 && chosen.ErrorShare <= 0.02 };
        var fskSection = new JsonObject
        {
            ["markHz"] = Math.Round(markHz, 1),
            ["spaceHz"] = Math.Round(spaceHz, 1),

            // Rounded, the baud must still not pass the lower tone (one cycle a bit is the least).
            ["baud"] = Math.Min(Math.Min(Math.Round(baud, 2), Math.Abs(Math.Round(markHz, 1) - Math.Round(spaceHz, 1))), Math.Min(Math.Round(markHz, 1), Math.Round(spaceHz, 1))),
        };
        int leaderMinimum = leader is null ? 0 : Math.Clamp(leader.ShortestRun / 4, 4, CharacterLeaderSearch.LeastRun);
        if (leader is null)
        {
            fskSection["leadInMinimumSeconds"] = Math.Round(leadIn, 3);
        }
        else
        {
            fskSection["leadIn"] = new JsonObject { ["character"] = $"0x{leader.Character:X2}", ["minimumCount"] = leaderMinimum };
        }

        proposal.Sections["fsk"] = fskSection;
        // The baud: from the tones' runs; else the one of the bauds tried that read most, measured where a check value
        // holds on the blocks read at it or where its characters frame cleanly (a baud a few percent off misplaces
        // the last bits of a character and breaks its stop bits: common practice for serial lines).
        double baudConfidence = fromRuns && baud == bauds[0] ? 0.9 : layout.HasChecksum ? 0.85 : proposal.FramingHolds ? DraftFinding.MeasuredThreshold : 0.6;
        string baudEvidence = fromRuns && baud == bauds[0]
            ? $"a bit is {survey.Runs[high].Granularity / 2.0} cycles of the higher tone and {survey.Runs[low].Granularity / 2.0} of the lower"
            : $"the tones' runs make no one bit time that frames (runs of {survey.Runs[high].Granularity} and {survey.Runs[low].Granularity} half cycles); of the bauds {string.Join(", ", tried.Select(t => F(t.Baud, "0")))} the trial decodes read most characters at this one"
                + (layout.HasChecksum ? ", and a check value holds on the blocks read at it" : proposal.FramingHolds ? $", framing {F(100 * (1 - chosen.ErrorShare), "0.#")} % of {chosen.Blocks.Sum(b => b.Payload.Length)} characters cleanly" : string.Empty);

        // The tones and the baud are one measurement at the tape's speed: where the baud is a guess, so are the tones,
        // so that confirming the baud alone never sets a nominal baud beside tones measured off speed.
        double toneConfidence = Math.Min(spectrumAgrees ? 0.9 : 0.8, baudConfidence);
        bool tonesAtBaud = (lowHz, highHz) != (measuredLowHz, measuredHighHz);
        string toneEvidence = $"half cycles through setting {survey.Setting.Name}; {Peak(markHz)}, {Peak(spaceHz)}; as the tape plays"
            + (tonesAtBaud ? $"; their groups of half cycles ({F(measuredHighHz, "0")} Hz and {F(measuredLowHz, "0")} Hz) lie nearer than the baud, so each is taken as the whole cycles a bit nearest to it" : string.Empty)
            + (baudConfidence < DraftFinding.MeasuredThreshold ? "; a guess with the baud, since both are as the tape plays" : string.Empty);
        proposal.Measured("fsk.markHz", F(markHz, "0.0"), toneConfidence, $"{toneEvidence}; the mark (the idle line's tone) read {asHigh.Characters} characters as the higher tone and {asLow.Characters} as the lower, with {F(100 * asHigh.ErrorShare, "0.#")} % and {F(100 * asLow.ErrorShare, "0.#")} % framing errors");
        proposal.Measured("fsk.spaceHz", F(spaceHz, "0.0"), toneConfidence, toneEvidence);
        proposal.Measured("fsk.baud", F(baud, "0.00"), baudConfidence, baudEvidence);

        if (leader is null)
        {
            proposal.Measured("fsk.leadInMinimumSeconds", F(leadIn), 0.85, leadIns.Count > 0 ? $"a quarter of the shortest run of mark tone before a block ({F(leadIns.Min())} s)" : "no long run of mark tone seen; the usual 0.1 s");
        }
        else
        {
            proposal.Measured("fsk.leadIn", $"character 0x{leader.Character:X2}, at least {leaderMinimum}", 0.9,
                $"{leader.BlocksWithLeader} of {leader.BlocksRead} blocks read as a stream begin with a run of 0x{leader.Character:X2} (the shortest {leader.ShortestRun} characters), and the bytes after it hold a check value after {leader.Layout.CoverageStart} sync character(s) alike in most blocks; a quarter of the shortest run, at most {CharacterLeaderSearch.LeastRun}, so that a leader cut short still counts");
        }

        var others = string.Join(", ", trials.Select(t => $"{t.Data}{t.Parity.ToString()[0]}{t.Stop.Length}: {F(100 * t.ErrorShare, "0.#")} %"));
        double framingConfidence = relaxed && !layout.HasChecksum ? 0.6 : holding.Count == 1 ? 0.9 : 0.8;
        Framing(proposal, framing, layout.HasChecksum, 1 - chosen.ErrorShare, orderMeasured, orderEvidence);
        proposal.FramingAboveChance &= chosen.Blocks.Sum(b => b.Payload.Length) >= 50;
        proposal.Findings.RemoveAll(f => f.Path is "framing.startBits" or "framing.stopBits" or "framing.parity" or "framing.dataBits");
        proposal.Measured("framing.startBits", "'0'", 0.9, "a fall from the idle mark tone starts each character");
        if (spacing.Told)
        {
            proposal.Measured("framing.stopBits", $"'{chosen.Stop}'", 0.9, spacing.Evidence);
        }
        else
        {
            proposal.Guessed("framing.stopBits", $"'{chosen.Stop}'", 0.5, spacing.Evidence);
        }

        proposal.Measured("framing.parity", chosen.Parity.ToString().ToLowerInvariant(), framingConfidence, $"framing errors per framing tried (data bits, parity, stop bits): {others}; the most data and parity bits that hold are drafted");
        proposal.Measured("framing.dataBits", F(chosen.Data), layout.HasChecksum ? 0.9 : framingConfidence - 0.1, $"framing errors per framing tried: {others}");
        Layout(proposal, layout);
        if (candidates[0].Low != low || candidates[0].High != high)
        {
            proposal.Notes.Add($"The likeliest pair of tones, {F(candidates[0].HighHz, "0")} Hz and {F(candidates[0].LowHz, "0")} Hz, framed no character cleanly at any baud tried; "
                + $"{F(highHz, "0")} Hz and {F(lowHz, "0")} Hz, among the next {candidates.Count - 1} pair(s) of main groups the spectrum shows, read most.");
        }

        proposal.Notes.Add($"Framing told by {trials.Count} trial decodes of the first {F(Math.Min(TrialSeconds, survey.Stretch.Seconds), "0")} s with the read path's FSK decoder; {blockBytes.Count} blocks read with the framing chosen.");
        return proposal;
    }

    /// <summary>What one trial decode read: the blocks of the setting that framed best, its characters and its share of framing errors.</summary>
    private sealed record TrialResult(List<BlockCandidate> Blocks, int Characters, double ErrorShare)
    {
        public double Score => Characters * (1 - (4 * ErrorShare));

        /// <summary>Framed cleanly: no more than 2 % framing errors over 50 characters or more.</summary>
        public bool Clean => Characters >= 50 && ErrorShare <= 0.02;
    }

    /// <summary>
    /// The trial that reads most at one baud and mark: eight data bits and a stop bit, then, unless that frames
    /// cleanly, eight data bits with even and with odd parity (a parity bit sits where the stop bit of the first would).
    /// </summary>
    private static TrialResult Selection(CaptureStretch stretch, double markHz, double spaceHz, double baud, CancellationToken cancellation)
    {
        var best = Trial(stretch, markHz, spaceHz, baud, 0.05, 8, Parity.None, "1", cancellation);
        if (best.Clean)
        {
            return best;
        }

        foreach (var parity in new[] { Parity.Even, Parity.Odd })
        {
            var trial = Trial(stretch, markHz, spaceHz, baud, 0.05, 8, parity, "1", cancellation);
            if (trial.Score > best.Score)
            {
                best = trial;
            }
        }

        return best;
    }

    private static TrialResult Trial(CaptureStretch stretch, double markHz, double spaceHz, double baud, double leadIn, int data, Parity parity, string stop, CancellationToken cancellation)
    {
        var json = new JsonObject
        {
            ["id"] = "trial",
            ["name"] = "trial",
            ["family"] = "fsk",
            ["fsk"] = new JsonObject { ["markHz"] = markHz, ["spaceHz"] = spaceHz, ["baud"] = baud, ["leadInMinimumSeconds"] = leadIn },
            ["framing"] = new JsonObject { ["dataBits"] = data, ["bitOrder"] = "lsb-first", ["startBits"] = "0", ["stopBits"] = stop, ["parity"] = parity.ToString().ToLowerInvariant() },
            ["layout"] = new JsonObject(),
        };
        FormatProfile profile;
        try
        {
            profile = ProfileLoader.Parse(json.ToJsonString(), "trial");
        }
        catch (ProfileException)
        {
            return new TrialResult([], 0, 1);
        }

        // The FSK settings of the default bank (one per kind of conditioning), as a decode would run them.
        var settings = CaptureDecoder.BankFor(profile, DetectorBanks.Default);
        var session = new CaptureDecoder.DecodeSession(profile, settings, stretch.SampleRate);
        int end = (int)Math.Min(stretch.Samples.Length, (long)(TrialSeconds * stretch.SampleRate));
        const int chunk = 16_384;
        for (int offset = 0; offset < end; offset += chunk)
        {
            cancellation.ThrowIfCancellationRequested();
            session.Process(stretch.Samples.AsSpan(offset, Math.Min(chunk, end - offset)));
        }

        TrialResult best = new([], 0, 1);
        foreach (var group in session.Finish().GroupBy(b => b.SettingIndex))
        {
            var blocks = group.OrderBy(b => b.StartSeconds).ToList();
            int characters = blocks.Sum(b => b.Payload.Length);
            double errors = characters == 0 ? 1 : (double)blocks.Sum(b => b.FramingErrors) / characters;
            var result = new TrialResult(blocks, characters, errors);
            if (result.Score > best.Score)
            {
                best = result;
            }
        }

        return best;
    }
}
