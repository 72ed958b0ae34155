using System.Globalization;
using System.Text.RegularExpressions;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Synthesis;

namespace TapeVault.Bench;

/// <summary>
/// Where the truth profile loses written blocks on the draft figure's captures (<see cref="DraftFigure"/>: the same
/// seeds make the same captures, SoX chain on the even ones): each written block the truth does not read back is put
/// down to one cause, judged from the damage that was drawn and from every setting's readings that overlap it in time.
/// read-loss [--count N] [--first-seed S] [--family F] [--show lost]: N captures per family (default 20) from seed S
/// (default 9001), every family of <see cref="RandomFormats.Families"/> or F alone; --show lost prints a line for each
/// lost block. The causes, first that applies:
/// <list type="bullet">
/// <item>speed: the capture plays more than 12 % off nominal (channel speed times SoX's), past the lead-in search;</item>
/// <item>dead channel: SoX's remix kept the channel the damage left dead, so the file holds no signal;</item>
/// <item>filtered out: a SoX sinc band-pass removes the fundamental of one of the format's patterns (a pulse class,
/// a run of equal or alternating biphase bits, a tone);</item>
/// <item>weak pattern: azimuth loss (Mee and Daniel's 20·log10|sin x / x|, <see cref="ChannelModel.AzimuthLossDb"/>)
/// and the deck's second-order low-pass at that fundamental leave it less than 6 dB over the noise the SNR draw sets;</item>
/// <item>dropout, no reading / dropout, cut short / dropout, wrong bytes: a dropout overlaps the block, and the signal
/// under it stands less than 6 dB over the noise (the drawn SNR less the dropout's depth): no decoder reads that;</item>
/// <item>readable dropout, ...: the same with 6 dB or more left under the dropout;</item>
/// <item>no reading: no setting began a block there (lead-in or sync missed);</item>
/// <item>cut short: the best reading ended early; wrong tail: its bytes go wrong from some byte to the end (a slip);
/// wrong burst: a few wrong bytes with right ones after them; exact, not clean: every byte right yet failed.</item>
/// </list>
/// </summary>
public static class ReadLoss
{
    /// <summary>Below this many dB of signal over noise under a dropout, nothing can be read there.</summary>
    private const double ReadableResidualSnrDb = 6;

    public static int Run(string work, string[] args)
    {
        int count = 20;
        int first = 9001;
        string? only = null;
        bool show = false;
        for (int i = 0; i + 1 < args.Length; i += 2)
        {
            switch (args[i])
            {
                case "--count": count = int.Parse(args[i + 1], CultureInfo.InvariantCulture); break;
                case "--first-seed": first = int.Parse(args[i + 1], CultureInfo.InvariantCulture); break;
                case "--family": only = args[i + 1]; break;
                case "--show": show = args[i + 1] == "lost"; break;
                default: throw new ArgumentException($"Unknown option {args[i]}.");
            }
        }

        string folder = Directory.CreateDirectory(Path.Combine(work, $"read-loss-{Environment.ProcessId}")).FullName;
        Console.WriteLine($"Read losses of the truth profile: {count} captures per family, seeds {first}–{first + count - 1}, SoX chain on the even ones.");
        foreach (string family in RandomFormats.Families.Where(f => only is null || f == only))
        {
            var causes = new SortedDictionary<string, int>(StringComparer.Ordinal);
            int written = 0, read = 0;
            for (int k = 0; k < count; k++)
            {
                int seed = first + k;
                var trial = DraftTrials.Capture(family, seed, folder, seed % 2 == 0 ? DraftFigure.Sox : null);
                var result = CaptureDecoder.Decode(trial.Path, trial.Truth);
                var recovered = RandomFormats.RecoveredBlocks(result, trial.Truth, trial.Written.Blocks);
                written += recovered.Length;
                read += recovered.Count(r => r);
                foreach (var (block, cause, detail) in Losses(trial, result, recovered))
                {
                    causes[cause] = causes.GetValueOrDefault(cause) + 1;
                    if (show)
                    {
                        Console.WriteLine($"  {family} seed {seed} block {block}: {cause}; {detail}");
                    }
                }

                if (show)
                {
                    // Each pattern's loss to azimuth and the deck band: patterns far apart in level meet one relative threshold.
                    string losses = string.Join(", ", Patterns(trial.Truth).Select(p => $"{p.Name} {PatternLossDb(trial.Damage, p.Hz):0.0} dB"));
                    Console.WriteLine($"  {family} seed {seed}: {recovered.Count(r => r)}/{recovered.Length} read; {losses}; {trial.Described}");
                }

                foreach (string file in Directory.EnumerateFiles(folder))
                {
                    File.Delete(file);
                }
            }

            Console.WriteLine($"{family}: {read} of {written} written blocks read ({(written == 0 ? 0 : 100.0 * read / written):0.0} %); lost:");
            foreach (var (cause, n) in causes.OrderByDescending(c => c.Value))
            {
                Console.WriteLine($"  {n,5}  {cause}");
            }
        }

        return 0;
    }

    /// <summary>Each lost block with its cause and the evidence for it.</summary>
    private static IEnumerable<(int Block, string Cause, string Detail)> Losses(DraftTrialCapture trial, DecodeResult result, bool[] recovered)
    {
        var damage = trial.Damage;
        var blocks = trial.Written.Blocks;
        var spans = new List<WrittenSpan>();
        foreach (double _ in FluxWriter.Reversals(trial.Truth, blocks, spans))
        {
        }

        var dropouts = new ChannelModel(FluxWriter.Reversals(trial.Truth, blocks), damage, trial.Written.TapeSeconds).Dropouts;
        double outsideSpeed = trial.OutsideDamage is { } chain && Regex.Match(chain, @"\bspeed ([0-9.]+)") is { Success: true } m
            ? double.Parse(m.Groups[1].Value, CultureInfo.InvariantCulture)
            : 1;
        double speed = damage.Speed * outsideSpeed;
        double snr = damage.SnrDb ?? 60;
        double Capture(double tape) => (damage.MarginSeconds + (tape / damage.Speed)) / outsideSpeed;
        int check = BlockLayoutCodec.For(trial.Truth.Layout).CheckBytes;
        var signal = SignalGone(trial, snr);

        for (int b = 0; b < blocks.Count; b++)
        {
            if (recovered[b])
            {
                continue;
            }

            byte[] bytes = blocks[b][..^check];
            var copies = spans.Where(s => s.Block == b).ToList();
            if (Math.Abs(speed - 1) > 0.12)
            {
                yield return (b, "speed beyond ±12 %", $"speed {speed:0.000}");
                continue;
            }

            if (signal is not null)
            {
                yield return (b, signal.Value.Cause, signal.Value.Detail);
                continue;
            }

            // The worst dropout over the block's copies: the one that leaves the least signal over the noise.
            double worstResidual = double.PositiveInfinity;
            bool overLeadIn = false;
            string dropoutText = "none";
            foreach (var copy in copies)
            {
                double start = Capture(copy.StartSeconds), data = Capture(copy.DataSeconds), end = Capture(copy.EndSeconds);
                foreach (var d in dropouts)
                {
                    if (d.StartSeconds > end || d.StartSeconds + d.DurationSeconds < start)
                    {
                        continue;
                    }

                    double residual = snr + (20 * Math.Log10(Math.Max(1e-6, 1 - d.Depth)));
                    if (residual < worstResidual)
                    {
                        worstResidual = residual;
                        overLeadIn = d.StartSeconds < data;
                        dropoutText = $"{(d.DurationSeconds * 1000):0} ms at {(d.StartSeconds - data):0.000} s into the copy of {(end - data):0.00} s, {residual:0.0} dB left";
                    }
                }
            }

            string dropout = double.IsPositiveInfinity(worstResidual) ? string.Empty
                : worstResidual < ReadableResidualSnrDb ? "dropout, " : "readable dropout, ";

            // The readings any setting made over the block's copies, and the one nearest the bytes written.
            var overlapping = result.Candidates.Where(c => copies.Exists(s => c.EndSeconds > Capture(s.DataSeconds) - 0.05 && c.StartSeconds < Capture(s.EndSeconds) + 0.05)).ToList();
            if (overlapping.Count == 0)
            {
                string where = dropout.Length > 0 && overLeadIn ? " (over lead-in or sync)" : string.Empty;
                yield return (b, dropout + "no reading" + where, $"dropout {dropoutText}; speed {speed:0.000}");
                continue;
            }

            var best = overlapping.MaxBy(c => Matching(c, bytes))!;
            byte[] got = [.. best.Header, .. best.Payload];
            int same = Matching(best, bytes);
            int wrong = 0, firstWrong = -1, lastWrong = -1;
            for (int i = 0; i < Math.Min(got.Length, bytes.Length); i++)
            {
                if (got[i] != bytes[i])
                {
                    wrong++;
                    firstWrong = firstWrong < 0 ? i : firstWrong;
                    lastWrong = i;
                }
            }

            string kind;
            if (got.Length < bytes.Length || best.Truncated)
            {
                kind = "cut short";
            }
            else if (wrong == 0)
            {
                kind = $"exact, not clean ({best.Doubts})";
            }
            else
            {
                // A slip leaves most bytes after the first wrong one wrong; a burst leaves them right.
                int after = got.Length - firstWrong;
                kind = wrong > after / 2 && after > 4 ? "wrong tail" : "wrong burst";
            }

            yield return (b, dropout + kind,
                $"best of {overlapping.Count} readings {best.SettingName} {best.Status} {best.Doubts}: {same}/{bytes.Length} bytes right, {got.Length} read, {wrong} wrong from {firstWrong} to {lastWrong}, " +
                $"{best.Decisions} decisions {best.AmbiguousDecisions} ambiguous, decision SNR {best.SnrDb:0.0} dB, speed read {best.Speed:0.000} of {speed:0.000}, {best.StartSeconds:0.000}–{best.EndSeconds:0.000} s; dropout {dropoutText}");
        }
    }

    /// <summary>Why no decoder could read any block of the capture, where the damage drawn says so; else null.</summary>
    private static (string Cause, string Detail)? SignalGone(DraftTrialCapture trial, double snr)
    {
        var damage = trial.Damage;
        string chain = trial.OutsideDamage ?? string.Empty;
        if ((damage.Channels == CaptureChannels.LeftDead && chain.Contains("remix 1 ", StringComparison.Ordinal)) ||
            (damage.Channels == CaptureChannels.RightDead && chain.Contains("remix 2 ", StringComparison.Ordinal)))
        {
            return ("dead channel kept by SoX", $"{damage.Channels}, {chain}");
        }

        var sinc = Regex.Match(chain, @"\bsinc ([0-9.]+)-([0-9.]+)");
        (string Cause, string Detail)? worst = null;
        double worstLeft = double.PositiveInfinity;
        foreach (var (name, hz) in Patterns(trial.Truth))
        {
            if (sinc.Success && (hz < double.Parse(sinc.Groups[1].Value, CultureInfo.InvariantCulture) / 1.05 || hz > double.Parse(sinc.Groups[2].Value, CultureInfo.InvariantCulture) * 1.05))
            {
                return ("filtered out by SoX", $"{name} at {hz:0} Hz outside {sinc.Value}");
            }

            double azimuth = ChannelModel.AzimuthLossDb(damage, hz);
            double deck = PatternLossDb(damage, hz) - azimuth;
            double left = snr + azimuth + deck;
            if (left < ReadableResidualSnrDb && left < worstLeft)
            {
                worstLeft = left;
                worst = ("weak pattern (azimuth, deck band)", $"{name} at {hz:0} Hz: azimuth {azimuth:0.0} dB, deck {deck:0.0} dB, {left:0.0} dB over the noise");
            }
        }

        return worst;
    }

    /// <summary>A fundamental's loss to azimuth and to the deck's low-pass (the channel's own filter), in dB.</summary>
    private static double PatternLossDb(ChannelDamage damage, double hz) =>
        ChannelModel.AzimuthLossDb(damage, hz) + ChannelModel.DeckLowPassLossDb(damage, hz);

    /// <summary>The fundamentals a format's patterns write on the tape, by name.</summary>
    private static IEnumerable<(string Name, double Hz)> Patterns(Core.Formats.FormatProfile profile)
    {
        if (profile.PulseWidth is { } pulses)
        {
            foreach (var c in pulses.Classes)
            {
                yield return ($"class {c.Name}", 1 / (pulses.HalfCycles ? 2 * c.Seconds : c.Seconds));
            }
        }

        if (profile.Biphase is { } biphase)
        {
            yield return ("equal bits", 1 / biphase.CellSeconds);
            yield return ("alternating bits", 1 / (2 * biphase.CellSeconds));
        }

        if (profile.Fsk is { } fsk)
        {
            yield return ("mark", fsk.MarkHz);
            yield return ("space", fsk.SpaceHz);
        }
    }

    private static int Matching(BlockCandidate c, byte[] bytes)
    {
        int same = 0;
        int i = 0;
        foreach (byte x in c.Header)
        {
            same += i < bytes.Length && bytes[i] == x ? 1 : 0;
            i++;
        }

        foreach (byte x in c.Payload)
        {
            same += i < bytes.Length && bytes[i] == x ? 1 : 0;
            i++;
        }

        return same;
    }
}
